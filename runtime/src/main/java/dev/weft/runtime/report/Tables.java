package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.runtime.dryrun.DryRunTrace;
import dev.weft.safety.JerkLimiter;

/** The report's tables of figures: the run, each joint, the limits, the stops and the gates. */
final class Tables {

    /** Flag groups counted per joint: position, velocity, acceleration, jerk, any fault flag. */
    static final int[] FLAG_KINDS = {JerkLimiter.POSITION, JerkLimiter.VELOCITY, JerkLimiter.ACCELERATION,
            JerkLimiter.JERK, JerkLimiter.FAULT_FLAGS};

    private Tables() {
    }

    /** Ticks on which each of {@link #FLAG_KINDS} was raised. */
    static long[] flagTicks(int[] flags) {
        long[] counts = new long[FLAG_KINDS.length];
        for (int f : flags) {
            for (int k = 0; k < FLAG_KINDS.length; k++) {
                if ((f & FLAG_KINDS[k]) != 0) {
                    counts[k]++;
                }
            }
        }
        return counts;
    }

    static void write(Markup m, DryRunSummary s, DryRunTrace t) {
        m.openWith("table", "class", "figures run-figures");
        m.element("caption", "Run figures");
        m.open("tbody");
        row(m, "name", "run name", s.name());
        row(m, "recording", "recording read", s.recording());
        row(m, "joints", "joints, in action order", s.joints().size() + ": " + String.join(", ", s.joints()));
        row(m, "closedLoop", "loop", s.closedLoop() ? "closed (simulated plant)" : "open (observations replayed)");
        row(m, "realtime", "clock", s.realtime() ? "real time" : "virtual time");
        row(m, "controlPeriod", "control period (s)", Markup.figure(s.controlPeriod(), 6));
        row(m, "latencyTicks", "modelled inference latency (ticks)",
                s.latencyTicks() < 0 ? "not modelled (real time)" : Long.toString(s.latencyTicks()));
        row(m, "ticks", "ticks run", Long.toString(s.ticks()));
        row(m, "commands", "command frames written", Long.toString(s.commands()));
        row(m, "telemetryHanded", "telemetry rows handed to the recorder", Long.toString(s.telemetryHanded()));
        row(m, "telemetryRows", "telemetry rows written", Long.toString(s.telemetryRows()));
        row(m, "telemetryLost", "telemetry rows lost (must be 0)", Long.toString(s.telemetryLost()));
        row(m, "boundViolations", "ticks beyond a limit in the command file (must be 0)",
                Long.toString(s.boundViolations()));
        row(m, "staleDropped", "chunk steps dropped as already past", Long.toString(s.staleDropped()));
        row(m, "deferredQueries", "due queries deferred (the policy was busy)", Long.toString(s.deferredQueries()));
        row(m, "starvedTicks", "ticks with no plan", Long.toString(s.starvedTicks()));
        row(m, "watchdogEvents", "watchdog conditions appearing", Long.toString(s.watchdogEvents()));
        row(m, "stops", "stops", Integer.toString(s.stops().size()));
        row(m, "inferenceMs", "inference latency p50 / p99 / max (ms)", percentiles(s.inferenceMs()));
        row(m, "periodErrorMs", "loop period error p50 / p99 / max (ms)",
                s.periodErrorMs() == null ? "not measured (virtual time)" : percentiles(s.periodErrorMs()));
        m.open("tr").openWith("th", "scope", "row").text("verdict").close("th")
                .element("td", "passed").element("td", s.passed() ? "PASS" : "FAIL").close("tr");
        m.close("tbody").close("table").raw("\n");

        m.openWith("table", "class", "figures joint-figures");
        m.element("caption", "Per joint: errors of the command against the recorded action, and ticks shaped "
                + "by each limit");
        m.open("thead").open("tr");
        for (String h : new String[] {"joint", "lower bound", "upper bound", "RMS error", "largest error",
                "position", "velocity", "acceleration", "jerk", "fault flags"}) {
            m.element("th", h);
        }
        m.close("tr").close("thead").open("tbody");
        for (int j = 0; j < s.joints().size(); j++) {
            DryRunTrace.JointTrace jt = t.joints().get(j);
            long[] c = flagTicks(jt.limiterFlags());
            m.open("tr").element("td", (j + 1) + ". " + s.joints().get(j));
            num(m, Markup.figure(jt.lower(), 6));
            num(m, Markup.figure(jt.upper(), 6));
            num(m, Markup.figure(s.rmsError()[j], 4));
            num(m, Markup.figure(s.maxError()[j], 4));
            for (long v : c) {
                num(m, Long.toString(v));
            }
            m.close("tr");
        }
        m.close("tbody").close("table").raw("\n");

        DryRunSummary.LimitCounts lc = s.limitActive();
        m.openWith("table", "class", "figures limit-figures");
        m.element("caption", "Ticks on which a limit shaped the command of at least one joint (limitActive)");
        m.open("thead").open("tr").element("th", "position").element("th", "velocity").element("th", "acceleration")
                .element("th", "jerk").close("tr").close("thead").open("tbody").open("tr");
        if (lc == null) {
            m.openWith("td", "colspan", "4").text("not reported").close("td");
        } else {
            num(m, Long.toString(lc.position()));
            num(m, Long.toString(lc.velocity()));
            num(m, Long.toString(lc.acceleration()));
            num(m, Long.toString(lc.jerk()));
        }
        m.close("tr").close("tbody").close("table").raw("\n");

        m.openWith("table", "class", "figures stop-figures");
        m.element("caption", "Stops");
        m.open("thead").open("tr").element("th", "tick").element("th", "time (s)").element("th", "cause code")
                .element("th", "cause").close("tr").close("thead").open("tbody");
        if (s.stops().isEmpty()) {
            m.open("tr").openWith("td", "colspan", "4").text("no stop in this run").close("td").close("tr");
        }
        for (DryRunSummary.Stop stop : s.stops()) {
            m.open("tr");
            num(m, Long.toString(stop.tick()));
            num(m, Markup.figure(stop.timeSeconds(), 6));
            num(m, Integer.toString(stop.causeCode()));
            m.element("td", stop.cause());
            m.close("tr");
        }
        m.close("tbody").close("table").raw("\n");

        m.openWith("table", "class", "figures gate-figures");
        m.element("caption", "Gates: the checks that make the verdict");
        m.open("thead").open("tr").element("th", "gate").element("th", "threshold").element("th", "value")
                .element("th", "result").close("tr").close("thead").open("tbody");
        if (s.gates().isEmpty()) {
            m.open("tr").openWith("td", "colspan", "4").text("this run has no gates").close("td").close("tr");
        }
        for (DryRunSummary.Gate g : s.gates()) {
            m.open("tr").element("td", g.name());
            num(m, Markup.figure(g.threshold(), 6));
            num(m, Markup.figure(g.value(), 6));
            m.openWith("td", "class", g.passed() ? "result result-pass" : "result result-fail")
                    .text(g.passed() ? "PASS" : "FAIL").close("td");
            m.close("tr");
        }
        m.close("tbody").close("table").raw("\n");
    }

    private static void row(Markup m, String field, String meaning, String value) {
        m.open("tr").openWith("th", "scope", "row").text(meaning).close("th")
                .openWith("td", "class", "field").text(field).close("td").element("td", value).close("tr");
    }

    private static void num(Markup m, String text) {
        m.openWith("td", "class", "num").text(text).close("td");
    }

    private static String percentiles(DryRunSummary.Percentiles p) {
        if (p == null) {
            return "not measured";
        }
        return Markup.figure(p.p50(), 4) + " / " + Markup.figure(p.p99(), 4) + " / " + Markup.figure(p.max(), 4);
    }
}
