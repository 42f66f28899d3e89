package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.WatchdogCondition;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * The supervisor's state over time in one lane, and one lane for each watchdog condition that was
 * present at least once, with the stops drawn across.
 */
final class StateTimeline {

    static final int WIDTH = 960;
    static final int LEFT = 140;
    static final int RIGHT = 16;
    static final int COLUMNS = WIDTH - LEFT - RIGHT;
    static final int TOP = 34;
    static final int STATE_HEIGHT = 26;
    static final int CONDITION_HEIGHT = 16;
    static final int GAP = 4;

    /** When states share a pixel column, the one shown is the highest in this ranking. */
    private static final int[] RANK = new int[SupervisorState.values().length];

    static {
        RANK[SupervisorState.ARMED.ordinal()] = 1;
        RANK[SupervisorState.DISARMED.ordinal()] = 2;
        RANK[SupervisorState.ARMING.ordinal()] = 3;
        RANK[SupervisorState.STOPPING.ordinal()] = 4;
        RANK[SupervisorState.FAULTED.ordinal()] = 5;
        RANK[SupervisorState.STALLED.ordinal()] = 6;
    }

    private StateTimeline() {
    }

    /** Lower-case words of a constant's name: {@code PLAN_STARVED} reads "plan starved". */
    static String words(Enum<?> constant) {
        return constant.name().toLowerCase(Locale.ROOT).replace('_', ' ');
    }

    static String fill(String id, SupervisorState s) {
        return switch (s) {
            case DISARMED -> "#ffffff";
            case ARMING -> "url(#" + id + "-hatch)";
            case ARMED -> "#a8dcc8";
            case STOPPING -> "url(#" + id + "-cross)";
            case FAULTED -> "#8c2d04";
            case STALLED -> "#000000";
        };
    }

    static void write(Markup m, String id, double[] time, byte[] states, int[] masks, List<DryRunSummary.Stop> stops) {
        String label = "Supervisor state and watchdog conditions over time";
        int n = time.length;
        if (n == 0) {
            SvgParts.nothingToShow(m, WIDTH, 70, label, "no ticks were run");
            return;
        }
        int ever = 0;
        for (int mask : masks) {
            ever |= mask;
        }
        List<WatchdogCondition> present = new ArrayList<>();
        for (WatchdogCondition c : WatchdogCondition.values()) {
            if ((ever & c.bit()) != 0) {
                present.add(c);
            }
        }
        double tEnd = n > 1 ? time[n - 1] : time[0] + 1;
        double conditionsTop = TOP + STATE_HEIGHT + GAP * 2;
        double bottom = conditionsTop + present.size() * (CONDITION_HEIGHT + GAP);
        MinMaxDecimator.Frame f = new MinMaxDecimator.Frame(LEFT, COLUMNS, TOP, bottom - TOP, time[0], tEnd, 0, 1);
        int height = (int) Math.ceil(bottom + 62);

        SvgParts.open(m, WIDTH, height, label, "figure timeline");
        SvgParts.patterns(m, id);

        // the state lane: per pixel column the highest-ranked state of its ticks
        int[] shown = new int[COLUMNS];
        java.util.Arrays.fill(shown, -1);
        double span = tEnd > time[0] ? tEnd - time[0] : 1;
        for (int i = 0; i < n; i++) {
            int c = MinMaxDecimator.column(time[i], time[0], span, COLUMNS);
            int s = states[i];
            if (shown[c] < 0 || RANK[s] > RANK[shown[c]]) {
                shown[c] = s;
            }
        }
        m.openWith("g", "class", "lane lane-state");
        m.openWith("text", "class", "lane-label", "x", Integer.toString(LEFT - 8), "y",
                Markup.coord(TOP + STATE_HEIGHT / 2.0 + 4), "text-anchor", "end");
        m.text("supervisor state").close("text");
        int c = 0;
        while (c < COLUMNS) {
            if (shown[c] < 0) {
                c++;
                continue;
            }
            int first = c;
            int s = shown[c];
            while (c < COLUMNS && (shown[c] == s || shown[c] < 0)) {
                c++;
            }
            SupervisorState state = SupervisorState.values()[s];
            int x = LEFT + first;
            int w = c - first;
            m.openWith("rect", "class", "state state-" + state.name(), "x", Integer.toString(x),
                    "y", Integer.toString(TOP), "width", Integer.toString(w), "height", Integer.toString(STATE_HEIGHT),
                    "fill", fill(id, state), "stroke", SvgParts.INK, "stroke-width", "0.7");
            m.element("title", words(state) + " from " + Markup.figure(columnTime(f, first), 4) + " s to "
                    + Markup.figure(columnTime(f, c), 4) + " s");
            m.close("rect");
            String name = words(state);
            if (w >= name.length() * SvgParts.CHAR_WIDTH + 10) {
                m.openWith("text", "class", state == SupervisorState.FAULTED ? "state-label on-dark" : "state-label",
                        "x", Markup.coord(x + w / 2.0), "y", Markup.coord(TOP + STATE_HEIGHT / 2.0 + 4),
                        "text-anchor", "middle");
                m.text(name).close("text");
            }
        }
        m.close("g");

        for (int k = 0; k < present.size(); k++) {
            WatchdogCondition cond = present.get(k);
            double top = conditionsTop + k * (CONDITION_HEIGHT + GAP);
            m.openWith("g", "class", "lane lane-watchdog");
            m.empty("rect", "x", Integer.toString(LEFT), "y", Markup.coord(top), "width", Integer.toString(COLUMNS),
                    "height", Integer.toString(CONDITION_HEIGHT), "fill", "#f7f7f7", "stroke", "#cccccc",
                    "stroke-width", "0.6");
            m.openWith("text", "class", "lane-label", "x", Integer.toString(LEFT - 8), "y",
                    Markup.coord(top + CONDITION_HEIGHT - 4), "text-anchor", "end");
            m.text(words(cond)).close("text");
            for (int[] run : SvgParts.runs(SvgParts.columnsWith(time, masks, cond.bit(), f, COLUMNS))) {
                m.openWith("rect", "class", "condition condition-" + cond.name(), "x", Integer.toString(LEFT + run[0]),
                        "y", Markup.coord(top + 2), "width", Integer.toString(run[1] - run[0]),
                        "height", Integer.toString(CONDITION_HEIGHT - 4), "fill", SvgParts.INK);
                m.element("title", words(cond) + " (" + cond.message() + ") from "
                        + Markup.figure(columnTime(f, run[0]), 4) + " s to " + Markup.figure(columnTime(f, run[1]), 4)
                        + " s");
                m.close("rect");
            }
            m.close("g");
        }
        if (present.isEmpty()) {
            m.openWith("text", "class", "lane-none", "x", Integer.toString(LEFT), "y",
                    Markup.coord(conditionsTop + 10));
            m.text("no watchdog condition was present in this run").close("text");
        }
        SvgParts.stopLines(m, stops, f, TOP, bottom, true);
        SvgParts.timeAxis(m, f, bottom + (present.isEmpty() ? 16 : 2), true);

        double y = bottom + 56;
        double x = LEFT;
        for (SupervisorState s : SupervisorState.values()) {
            if (s == SupervisorState.STALLED) {
                continue; // a loop state, never in a dry run's trace
            }
            x = SvgParts.legendSwatch(m, x, y, words(s), fill(id, s));
        }
        x = SvgParts.legendSwatch(m, x, y, "condition present", SvgParts.INK);
        SvgParts.legendStop(m, x, y, "stop (cause written at the top)");
        m.close("svg");
    }

    private static double columnTime(MinMaxDecimator.Frame f, int column) {
        return f.tStart() + (f.tEnd() - f.tStart()) * column / COLUMNS;
    }
}
