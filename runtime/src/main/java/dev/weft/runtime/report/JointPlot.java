package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.runtime.dryrun.DryRunTrace;
import dev.weft.safety.JerkLimiter;
import java.util.List;

/**
 * One joint's plot: recorded action, blended target and command over time, the operating bounds,
 * one lane per limit kind marking the ticks that limit shaped the command, and the stops.
 */
final class JointPlot {

    static final int WIDTH = 960;
    static final int LEFT = 76;
    static final int RIGHT = 16;
    static final int COLUMNS = WIDTH - LEFT - RIGHT;
    static final int TOP = 40;
    static final int PLOT_HEIGHT = 230;
    static final int LANE_HEIGHT = 13;
    static final int LANE_GAP = 3;

    /** A bound farther outside the data than this share of the data's span is noted, not drawn. */
    static final double BOUND_REACH = 0.5;

    /** Lanes of limiter activity: name, flag bits, fill. */
    static final List<Lane> LANES = List.of(
            new Lane("position", "position", JerkLimiter.POSITION, "solid"),
            new Lane("velocity", "velocity", JerkLimiter.VELOCITY, "hatch"),
            new Lane("acceleration", "accel.", JerkLimiter.ACCELERATION, "cross"),
            new Lane("jerk", "jerk", JerkLimiter.JERK, "dots"),
            new Lane("fault", "fault", JerkLimiter.FAULT_FLAGS, "vbars"));

    record Lane(String kind, String label, int bits, String fill) {
    }

    private JointPlot() {
    }

    static void write(Markup m, String id, int index, DryRunTrace.JointTrace joint, double[] time,
                      List<DryRunSummary.Stop> stops) {
        String label = "Joint " + index + " (" + joint.name() + "): recorded action, target and command over time";
        int n = time.length;
        if (n == 0) {
            SvgParts.nothingToShow(m, WIDTH, 80, label, "no ticks were run");
            return;
        }
        double lo = Double.POSITIVE_INFINITY;
        double hi = Double.NEGATIVE_INFINITY;
        for (double[] series : new double[][] {joint.recorded(), joint.target(), joint.command()}) {
            for (double v : series) {
                if (Double.isFinite(v)) {
                    lo = Math.min(lo, v);
                    hi = Math.max(hi, v);
                }
            }
        }
        boolean anyData = lo <= hi;
        if (!anyData) {
            lo = Double.isFinite(joint.lower()) ? joint.lower() : 0;
            hi = Double.isFinite(joint.upper()) ? joint.upper() : 1;
        }
        double span = Math.max(hi - lo, 1e-9);
        boolean drawLower = Double.isFinite(joint.lower()) && joint.lower() >= lo - BOUND_REACH * span;
        boolean drawUpper = Double.isFinite(joint.upper()) && joint.upper() <= hi + BOUND_REACH * span;
        if (drawLower) {
            lo = Math.min(lo, joint.lower());
        }
        if (drawUpper) {
            hi = Math.max(hi, joint.upper());
        }
        NiceScale ys = NiceScale.of(lo, hi, 7);
        double tEnd = n > 1 ? time[n - 1] : time[0] + 1;
        MinMaxDecimator.Frame f = new MinMaxDecimator.Frame(LEFT, COLUMNS, TOP, PLOT_HEIGHT, time[0], tEnd,
                ys.min(), ys.max());

        boolean anyFault = false;
        for (int flags : joint.limiterFlags()) {
            if ((flags & JerkLimiter.FAULT_FLAGS) != 0) {
                anyFault = true;
                break;
            }
        }
        int lanes = anyFault ? LANES.size() : LANES.size() - 1;
        double lanesTop = TOP + PLOT_HEIGHT + 40;
        double lanesBottom = lanesTop + lanes * (LANE_HEIGHT + LANE_GAP);
        int height = (int) Math.ceil(lanesBottom + 30);

        SvgParts.open(m, WIDTH, height, label, "figure joint-plot");
        SvgParts.patterns(m, id);
        m.empty("rect", "x", Integer.toString(LEFT), "y", Integer.toString(TOP), "width", Integer.toString(COLUMNS),
                "height", Integer.toString(PLOT_HEIGHT), "fill", "#ffffff", "stroke", "#bbbbbb", "stroke-width", "1");
        SvgParts.valueAxis(m, f, ys, "position (joint units)");
        SvgParts.timeAxis(m, f, TOP + PLOT_HEIGHT, true);

        m.openWith("g", "class", "bounds");
        if (drawLower) {
            bound(m, f, joint.lower(), "lower operating bound");
        }
        if (drawUpper) {
            bound(m, f, joint.upper(), "upper operating bound");
        }
        m.close("g");
        if (Double.isFinite(joint.upper()) && !drawUpper) {
            offScale(m, "upper bound " + Markup.figure(joint.upper(), 4) + " is above the plot", TOP + 12);
        }
        if (Double.isFinite(joint.lower()) && !drawLower) {
            offScale(m, "lower bound " + Markup.figure(joint.lower(), 4) + " is below the plot", TOP + PLOT_HEIGHT - 5);
        }

        // drawn widest first so the thinner lines stay visible on top
        series(m, "command", joint.command(), time, f, SvgParts.BLUE, "2.6", SvgParts.DASH_SOLID);
        series(m, "target", joint.target(), time, f, SvgParts.VERMILLION, "1.6", SvgParts.DASH_TARGET);
        series(m, "recorded", joint.recorded(), time, f, SvgParts.INK, "1", SvgParts.DASH_RECORDED);

        SvgParts.stopLines(m, stops, f, TOP, lanesBottom - LANE_GAP, true);

        m.openWith("g", "class", "limiter-lanes");
        for (int k = 0; k < lanes; k++) {
            lane(m, id, LANES.get(k), joint.limiterFlags(), time, f, lanesTop + k * (LANE_HEIGHT + LANE_GAP));
        }
        m.close("g");

        double y = lanesBottom + 20;
        double x = LEFT;
        x = SvgParts.legendLine(m, x, y, "recorded action", SvgParts.INK, "1", SvgParts.DASH_RECORDED);
        x = SvgParts.legendLine(m, x, y, "blended target", SvgParts.VERMILLION, "1.6", SvgParts.DASH_TARGET);
        x = SvgParts.legendLine(m, x, y, "command", SvgParts.BLUE, "2.6", SvgParts.DASH_SOLID);
        x = SvgParts.legendLine(m, x, y, "operating bound", SvgParts.GREY, "1.2", SvgParts.DASH_BOUND);
        SvgParts.legendStop(m, x, y, "stop (cause written at the top)");
        m.close("svg");
    }

    private static void bound(Markup m, MinMaxDecimator.Frame f, double value, String name) {
        String y = Markup.coord(f.y(value));
        m.openWith("line", "class", "bound", "x1", Markup.coord(f.left()), "y1", y,
                "x2", Markup.coord(f.left() + f.width()), "y2", y, "stroke", SvgParts.GREY, "stroke-width", "1.2",
                "stroke-dasharray", SvgParts.DASH_BOUND);
        m.element("title", name + " " + Markup.figure(value, 6));
        m.close("line");
    }

    private static void offScale(Markup m, String text, double y) {
        m.openWith("text", "class", "off-scale", "x", Integer.toString(LEFT + COLUMNS - 6), "y", Markup.coord(y),
                "text-anchor", "end");
        m.text(text).close("text");
    }

    private static void series(Markup m, String name, double[] values, double[] time, MinMaxDecimator.Frame f,
                               String colour, String width, String dash) {
        int[] kept = MinMaxDecimator.keep(time, values, f.tStart(), f.tEnd(), COLUMNS);
        m.empty("path", "class", "series series-" + name, "d", MinMaxDecimator.pathData(kept, time, values, f),
                "fill", "none", "stroke", colour, "stroke-width", width, "stroke-dasharray", dash,
                "stroke-linejoin", "round", "stroke-linecap", "round");
    }

    private static void lane(Markup m, String id, Lane lane, int[] flags, double[] time, MinMaxDecimator.Frame f,
                             double top) {
        long ticks = 0;
        for (int v : flags) {
            if ((v & lane.bits()) != 0) {
                ticks++;
            }
        }
        m.openWith("g", "class", "lane lane-" + lane.kind());
        m.empty("rect", "x", Integer.toString(LEFT), "y", Markup.coord(top), "width", Integer.toString(COLUMNS),
                "height", Integer.toString(LANE_HEIGHT), "fill", "#f7f7f7", "stroke", "#cccccc", "stroke-width", "0.6");
        m.openWith("text", "class", "lane-label", "x", Integer.toString(LEFT - 6), "y",
                Markup.coord(top + LANE_HEIGHT - 3), "text-anchor", "end");
        m.text(lane.label()).close("text");
        String fill = lane.fill().equals("solid") ? SvgParts.GREEN : "url(#" + id + "-" + lane.fill() + ")";
        // all bands of a lane in one path: one filled shape per lane keeps the file small, and keeps
        // printing fast (a PDF printer may render each pattern-filled shape on its own)
        List<int[]> runs = SvgParts.runs(SvgParts.columnsWith(time, flags, lane.bits(), f, COLUMNS));
        if (!runs.isEmpty()) {
            StringBuilder d = new StringBuilder(runs.size() * 24);
            for (int[] run : runs) {
                d.append('M').append(LEFT + run[0]).append(' ').append(Markup.coord(top + 1))
                        .append('h').append(run[1] - run[0]).append('v').append(LANE_HEIGHT - 2)
                        .append('h').append(run[0] - run[1]).append('z');
            }
            m.empty("path", "class", "limit limit-" + lane.kind(), "d", d.toString(), "fill", fill,
                    "stroke", SvgParts.INK, "stroke-width", "0.5");
        }
        if (ticks == 0) {
            m.openWith("text", "class", "lane-none", "x", Integer.toString(LEFT + 4), "y",
                    Markup.coord(top + LANE_HEIGHT - 3));
            m.text("not active").close("text");
        }
        m.close("g");
    }
}
