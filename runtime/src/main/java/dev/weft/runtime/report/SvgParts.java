package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunSummary;
import java.util.ArrayList;
import java.util.List;

/** Pieces shared by the report's SVG figures: the frame, axes, stop lines, fill patterns, legends. */
final class SvgParts {

    /** Approximate advance of one character of the 11 px figure font, for laying out labels. */
    static final double CHAR_WIDTH = 6.3;

    /** Line styles of the report. Each differs from the others in dash pattern and in colour. */
    static final String DASH_SOLID = "none";
    static final String DASH_TARGET = "6 4";
    static final String DASH_RECORDED = "9 3 2 3";
    static final String DASH_BOUND = "2 3";
    static final String DASH_P50 = "6 4";
    static final String DASH_P99 = "9 3 2 3";
    static final String DASH_MAX = "2 3";

    /** Colours: the colour-blind-safe set of Okabe and Ito (2008), plus greys. */
    static final String BLUE = "#0072B2";
    static final String VERMILLION = "#D55E00";
    static final String GREEN = "#009E73";
    static final String SKY = "#56B4E9";
    static final String ORANGE = "#E69F00";
    static final String PURPLE = "#CC79A7";
    static final String INK = "#111111";
    static final String GREY = "#666666";
    static final String GRID = "#e2e2e2";

    private SvgParts() {
    }

    /** Opens an {@code <svg>} with its own namespace, a view box and an accessible label. */
    static void open(Markup m, int width, int height, String label, String cssClass) {
        m.openWith("svg", "xmlns", "http://www.w3.org/2000/svg", "class", cssClass,
                "width", Integer.toString(width), "height", Integer.toString(height),
                "viewBox", "0 0 " + width + " " + height, "role", "img", "aria-label", label);
        m.element("title", label);
    }

    /**
     * Fill patterns that still tell apart in black and white, each under an id prefixed by
     * {@code prefix} (ids are document-wide, so every figure gets its own prefix).
     */
    static void patterns(Markup m, String prefix) {
        m.open("defs");
        hatch(m, prefix + "-hatch", "M0 6L6 0", SKY, "#ffffff");
        hatch(m, prefix + "-cross", "M0 6L6 0M0 0L6 6", INK, ORANGE);
        m.openWith("pattern", "id", prefix + "-dots", "width", "4", "height", "4", "patternUnits", "userSpaceOnUse");
        m.empty("rect", "width", "4", "height", "4", "fill", "#ffffff");
        m.empty("circle", "cx", "2", "cy", "2", "r", "1.1", "fill", INK);
        m.close("pattern");
        m.openWith("pattern", "id", prefix + "-vbars", "width", "3", "height", "6", "patternUnits", "userSpaceOnUse");
        m.empty("rect", "width", "3", "height", "6", "fill", "#ffffff");
        m.empty("rect", "width", "1.5", "height", "6", "fill", VERMILLION);
        m.close("pattern");
        m.close("defs");
    }

    private static void hatch(Markup m, String id, String path, String ink, String paper) {
        m.openWith("pattern", "id", id, "width", "6", "height", "6", "patternUnits", "userSpaceOnUse");
        m.empty("rect", "width", "6", "height", "6", "fill", paper);
        m.empty("path", "d", path, "stroke", ink, "stroke-width", "1.3");
        m.close("pattern");
    }

    /** The time axis under the frame: ticks on round seconds inside the run, their labels and a title. */
    static void timeAxis(Markup m, MinMaxDecimator.Frame f, double base, boolean labels) {
        NiceScale s = NiceScale.of(f.tStart(), f.tEnd(), 10);
        m.empty("line", "class", "axis", "x1", Markup.coord(f.left()), "y1", Markup.coord(base),
                "x2", Markup.coord(f.left() + f.width()), "y2", Markup.coord(base), "stroke", INK, "stroke-width", "1");
        for (double t : s.tickValues()) {
            if (t < f.tStart() - s.step() * 1e-6 || t > f.tEnd() + s.step() * 1e-6) {
                continue;
            }
            String x = Markup.coord(f.x(t));
            m.empty("line", "x1", x, "y1", Markup.coord(base), "x2", x, "y2", Markup.coord(base + 4),
                    "stroke", INK, "stroke-width", "1");
            if (labels) {
                m.openWith("text", "class", "tick", "x", x, "y", Markup.coord(base + 15), "text-anchor", "middle");
                m.text(s.label(t)).close("text");
            }
        }
        if (labels) {
            m.openWith("text", "class", "axis-title", "x", Markup.coord(f.left() + f.width()), "y",
                    Markup.coord(base + 29), "text-anchor", "end");
            m.text("time (s)").close("text");
        }
    }

    /** The value axis left of the frame, with light grid lines across; the frame spans the scale. */
    static void valueAxis(Markup m, MinMaxDecimator.Frame f, NiceScale s, String title) {
        double right = f.left() + f.width();
        for (double v : s.tickValues()) {
            String y = Markup.coord(f.y(v));
            m.empty("line", "class", "grid", "x1", Markup.coord(f.left()), "y1", y, "x2", Markup.coord(right), "y2", y,
                    "stroke", GRID, "stroke-width", "1");
            m.empty("line", "x1", Markup.coord(f.left() - 4), "y1", y, "x2", Markup.coord(f.left()), "y2", y,
                    "stroke", INK, "stroke-width", "1");
            m.openWith("text", "class", "tick", "x", Markup.coord(f.left() - 6), "y", Markup.coord(f.y(v) + 4),
                    "text-anchor", "end");
            m.text(s.label(v)).close("text");
        }
        m.empty("line", "class", "axis", "x1", Markup.coord(f.left()), "y1", Markup.coord(f.top()),
                "x2", Markup.coord(f.left()), "y2", Markup.coord(f.top() + f.height()), "stroke", INK, "stroke-width", "1");
        double cy = f.top() + f.height() / 2;
        m.openWith("text", "class", "axis-title", "x", "13", "y", Markup.coord(cy), "text-anchor", "middle",
                "transform", "rotate(-90 13 " + Markup.coord(cy) + ")");
        m.text(title).close("text");
    }

    /**
     * A vertical line at each stop from {@code top} to {@code bottom}; with labels, the cause is
     * written above the top, labels that would collide are moved up a row (up to two rows).
     */
    static void stopLines(Markup m, List<DryRunSummary.Stop> stops, MinMaxDecimator.Frame f, double top,
                          double bottom, boolean labels) {
        double[] rowEnds = {Double.NEGATIVE_INFINITY, Double.NEGATIVE_INFINITY};
        for (DryRunSummary.Stop stop : stops) {
            if (!Double.isFinite(stop.timeSeconds())) {
                continue;
            }
            double x = Math.max(f.left(), Math.min(f.left() + f.width(), f.x(stop.timeSeconds())));
            String full = "stop at " + Markup.figure(stop.timeSeconds(), 4) + " s (tick " + stop.tick() + "): "
                    + stop.cause();
            m.openWith("g", "class", "stop");
            m.element("title", full);
            m.empty("line", "x1", Markup.coord(x), "y1", Markup.coord(top), "x2", Markup.coord(x),
                    "y2", Markup.coord(bottom), "stroke", VERMILLION, "stroke-width", "1.6");
            if (labels) {
                String label = "stop: " + shorten(stop.cause(), 34);
                double width = label.length() * CHAR_WIDTH;
                boolean rightOfLine = x + 3 + width <= f.left() + f.width();
                double start = rightOfLine ? x + 3 : x - 3 - width;
                int row = start > rowEnds[0] + 6 ? 0 : start > rowEnds[1] + 6 ? 1 : 0;
                rowEnds[row] = start + width;
                double y = top - 5 - row * 13;
                m.openWith("text", "class", "stop-label", "x", Markup.coord(rightOfLine ? x + 3 : x - 3),
                        "y", Markup.coord(y), "text-anchor", rightOfLine ? "start" : "end");
                m.text(label).close("text");
            }
            m.close("g");
        }
    }

    static String shorten(String text, int max) {
        if (text == null) {
            return "";
        }
        return text.length() <= max ? text : text.substring(0, max - 1) + "\u2026";
    }

    /**
     * For each pixel column, whether a tick with {@code (masks[i] & bits) != 0} covers it; tick
     * {@code i} covers the columns from its time up to the next tick's.
     */
    static boolean[] columnsWith(double[] time, int[] masks, int bits, MinMaxDecimator.Frame f, int columns) {
        boolean[] on = new boolean[columns];
        double span = f.tEnd() > f.tStart() ? f.tEnd() - f.tStart() : 1;
        for (int i = 0; i < masks.length; i++) {
            if ((masks[i] & bits) != 0) {
                // a tick stands for the time up to the next tick, so a run of ticks reads as one band
                int first = MinMaxDecimator.column(time[i], f.tStart(), span, columns);
                int last = i + 1 < time.length
                        ? MinMaxDecimator.column(time[i + 1], f.tStart(), span, columns) - 1 : first;
                for (int c = first; c <= Math.max(first, last); c++) {
                    on[c] = true;
                }
            }
        }
        return on;
    }

    /** Runs of set columns as {@code {first, endExclusive}} pairs. */
    static List<int[]> runs(boolean[] on) {
        List<int[]> runs = new ArrayList<>();
        int i = 0;
        while (i < on.length) {
            if (!on[i]) {
                i++;
                continue;
            }
            int first = i;
            while (i < on.length && on[i]) {
                i++;
            }
            runs.add(new int[] {first, i});
        }
        return runs;
    }

    /** A short sample of a line style with its name, for legends; returns the x after the entry. */
    static double legendLine(Markup m, double x, double y, String name, String colour, String width, String dash) {
        m.openWith("g", "class", "legend-entry");
        m.empty("line", "x1", Markup.coord(x), "y1", Markup.coord(y - 4), "x2", Markup.coord(x + 34),
                "y2", Markup.coord(y - 4), "stroke", colour, "stroke-width", width, "stroke-dasharray", dash);
        m.openWith("text", "class", "legend", "x", Markup.coord(x + 40), "y", Markup.coord(y));
        m.text(name).close("text");
        m.close("g");
        return x + 40 + name.length() * CHAR_WIDTH + 18;
    }

    /** A short vertical line with its name (the stop mark), for legends; returns the x after the entry. */
    static double legendStop(Markup m, double x, double y, String name) {
        m.openWith("g", "class", "legend-entry");
        m.empty("line", "x1", Markup.coord(x + 6), "y1", Markup.coord(y - 11), "x2", Markup.coord(x + 6),
                "y2", Markup.coord(y + 2), "stroke", VERMILLION, "stroke-width", "1.6");
        m.openWith("text", "class", "legend", "x", Markup.coord(x + 12), "y", Markup.coord(y));
        m.text(name).close("text");
        m.close("g");
        return x + 12 + name.length() * CHAR_WIDTH + 18;
    }

    /** A small filled swatch with its name, for legends; returns the x after the entry. */
    static double legendSwatch(Markup m, double x, double y, String name, String fill) {
        m.openWith("g", "class", "legend-entry");
        m.empty("rect", "x", Markup.coord(x), "y", Markup.coord(y - 10), "width", "22", "height", "11", "fill", fill,
                "stroke", INK, "stroke-width", "0.8");
        m.openWith("text", "class", "legend", "x", Markup.coord(x + 27), "y", Markup.coord(y));
        m.text(name).close("text");
        m.close("g");
        return x + 27 + name.length() * CHAR_WIDTH + 16;
    }

    /** A message in place of a figure that has nothing to show. */
    static void nothingToShow(Markup m, int width, int height, String label, String message) {
        open(m, width, height, label, "figure empty");
        m.empty("rect", "x", "0.5", "y", "0.5", "width", Integer.toString(width - 1), "height",
                Integer.toString(height - 1), "fill", "none", "stroke", GREY, "stroke-dasharray", DASH_BOUND);
        m.openWith("text", "class", "legend", "x", Integer.toString(width / 2), "y", Integer.toString(height / 2 + 4),
                "text-anchor", "middle");
        m.text(message).close("text");
        m.close("svg");
    }
}
