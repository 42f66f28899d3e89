package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunSummary;

/** A histogram of millisecond samples with the median, 99th percentile and maximum marked. */
final class HistogramPlot {

    static final int WIDTH = 960;
    static final int LEFT = 76;
    static final int RIGHT = 16;
    static final int TOP = 46;
    static final int PLOT_HEIGHT = 200;
    static final int BINS = 40;

    private HistogramPlot() {
    }

    /**
     * @param samples the samples, ms; not modified
     * @param fromZero start the axis at zero (latencies)
     * @param marks the percentiles to mark, or null
     */
    static void write(Markup m, String label, String axisTitle, double[] samples, boolean fromZero,
                      DryRunSummary.Percentiles marks) {
        Histogram h = Histogram.of(samples, fromZero, BINS);
        if (h.counts().length == 0) {
            SvgParts.nothingToShow(m, WIDTH, 70, label,
                    h.nonFinite() == 0 ? "no samples" : "no finite samples (" + h.nonFinite() + " non-finite)");
            return;
        }
        double lo = h.start();
        double hi = h.end();
        if (marks != null) {
            for (double v : new double[] {marks.p50(), marks.p99(), marks.max()}) {
                if (Double.isFinite(v)) {
                    lo = Math.min(lo, v);
                    hi = Math.max(hi, v);
                }
            }
        }
        NiceScale xs = NiceScale.of(lo, hi, 10);
        NiceScale ys = NiceScale.of(0, Math.max(1, h.peak()), 5);
        if (ys.step() < 1) {
            ys = new NiceScale(0, Math.max(1, Math.ceil(ys.max())), 1, 0);
        }
        int columns = WIDTH - LEFT - RIGHT;
        MinMaxDecimator.Frame f = new MinMaxDecimator.Frame(LEFT, columns, TOP, PLOT_HEIGHT, xs.min(), xs.max(),
                ys.min(), ys.max());
        int height = TOP + PLOT_HEIGHT + 58;
        SvgParts.open(m, WIDTH, height, label, "figure histogram");
        SvgParts.valueAxis(m, f, ys, "samples");

        m.openWith("g", "class", "bins");
        double base = f.y(0);
        for (int i = 0; i < h.counts().length; i++) {
            long c = h.counts()[i];
            if (c == 0) {
                continue;
            }
            double x0 = f.x(h.start() + i * h.width());
            double x1 = f.x(h.start() + (i + 1) * h.width());
            double top = Math.min(f.y(c), base - 1.5);
            m.openWith("rect", "class", "bin", "data-count", Long.toString(c),
                    "x", Markup.coord(x0), "y", Markup.coord(top), "width", Markup.coord(Math.max(1, x1 - x0 - 0.6)),
                    "height", Markup.coord(base - top), "fill", "#b9c9d6", "stroke", SvgParts.INK, "stroke-width", "0.6");
            m.element("title", c + " samples in [" + Markup.figure(h.start() + i * h.width(), 4) + ", "
                    + Markup.figure(h.start() + (i + 1) * h.width(), 4) + ") ms");
            m.close("rect");
        }
        m.close("g");

        // a value axis for ms, drawn like the time axis but with its own title
        m.empty("line", "class", "axis", "x1", Markup.coord(f.left()), "y1", Markup.coord(base),
                "x2", Markup.coord(f.left() + f.width()), "y2", Markup.coord(base), "stroke", SvgParts.INK,
                "stroke-width", "1");
        for (double v : xs.tickValues()) {
            String x = Markup.coord(f.x(v));
            m.empty("line", "x1", x, "y1", Markup.coord(base), "x2", x, "y2", Markup.coord(base + 4),
                    "stroke", SvgParts.INK, "stroke-width", "1");
            m.openWith("text", "class", "tick", "x", x, "y", Markup.coord(base + 15), "text-anchor", "middle");
            m.text(xs.label(v)).close("text");
        }
        m.openWith("text", "class", "axis-title", "x", Markup.coord(f.left() + f.width()), "y",
                Markup.coord(base + 29), "text-anchor", "end");
        m.text(axisTitle).close("text");

        if (marks != null) {
            mark(m, f, "p50", marks.p50(), SvgParts.BLUE, SvgParts.DASH_P50, 0);
            mark(m, f, "p99", marks.p99(), SvgParts.VERMILLION, SvgParts.DASH_P99, 1);
            mark(m, f, "max", marks.max(), SvgParts.INK, SvgParts.DASH_MAX, 2);
        }

        double y = base + 48;
        double x = LEFT;
        x = SvgParts.legendSwatch(m, x, y, "samples per bin (bin width " + Markup.figure(h.width(), 3) + " ms"
                + (h.nonFinite() > 0 ? "; " + h.nonFinite() + " non-finite left out" : "") + ")", "#b9c9d6");
        if (marks != null) {
            x = SvgParts.legendLine(m, x, y, "median (p50)", SvgParts.BLUE, "1.6", SvgParts.DASH_P50);
            x = SvgParts.legendLine(m, x, y, "99th percentile", SvgParts.VERMILLION, "1.6", SvgParts.DASH_P99);
            SvgParts.legendLine(m, x, y, "maximum", SvgParts.INK, "1.6", SvgParts.DASH_MAX);
        }
        m.close("svg");
    }

    private static void mark(Markup m, MinMaxDecimator.Frame f, String name, double value, String colour, String dash,
                             int row) {
        if (!Double.isFinite(value)) {
            return;
        }
        String x = Markup.coord(f.x(value));
        m.openWith("g", "class", "mark mark-" + name);
        m.empty("line", "x1", x, "y1", Markup.coord(f.top() - 4 - (2 - row) * 13), "x2", x,
                "y2", Markup.coord(f.top() + f.height()), "stroke", colour, "stroke-width", "1.6",
                "stroke-dasharray", dash);
        String text = name + " " + Markup.figure(value, 3) + " ms";
        boolean right = f.x(value) + 4 + text.length() * SvgParts.CHAR_WIDTH <= f.left() + f.width();
        m.openWith("text", "class", "mark-label", "x", Markup.coord(f.x(value) + (right ? 4 : -4)),
                "y", Markup.coord(f.top() - 7 - (2 - row) * 13), "text-anchor", right ? "start" : "end");
        m.text(text).close("text");
        m.close("g");
    }
}
