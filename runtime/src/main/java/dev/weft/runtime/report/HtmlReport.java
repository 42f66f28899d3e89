package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.runtime.dryrun.DryRunTrace;
import dev.weft.safety.SupervisorState;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;

/**
 * The dry-run report: one self-contained HTML file (inline SVG figures, inline CSS, no scripts, no
 * fonts or images from elsewhere) that opens with the verdict and the hazard caution, then shows per
 * joint the recorded action, blended target and command with the bounds and the limiter's activity,
 * the inference latency (and loop period error on real time), the supervisor state and watchdog
 * conditions over time, and every figure of the summary with the gates.
 *
 * <p>The document is also well-formed XML (XHTML syntax: every element closed, every text escaped),
 * so XML tools can read it. Series differ in dash pattern as well as colour, and a print style sheet
 * is included, so the report reads on paper in black and white.
 *
 * <p>One episode gives the plain dry-run report. Several give an overview table first, one row per
 * episode with a link to its section, and the overall verdict is PASS only when every episode passed.
 *
 * <p>Stateless and thread-safe; each call builds its own document. Rendering allocates freely: it is
 * meant for after a run, never for the control loop.
 */
public final class HtmlReport {

    /**
     * One dry run to report: its figures and its time series, which must describe the same run
     * (same joints, one trace entry per tick).
     */
    public record Episode(DryRunSummary summary, DryRunTrace trace) {
        public Episode {
            Objects.requireNonNull(summary, "summary");
            Objects.requireNonNull(trace, "trace");
        }
    }

    private HtmlReport() {
    }

    /**
     * Writes the report to {@code file}, through a temporary file beside it that is moved into place,
     * so a reader never sees half a report. The parent folder must exist.
     *
     * @param file where the report goes (usually {@code DIR/report.html})
     * @param title the report's heading
     * @param episodes one or more episodes, in the order shown; not modified
     * @throws IllegalArgumentException when an episode is inconsistent; the message names the episode, joint and field
     * @throws IOException when the file cannot be written
     */
    public static void write(Path file, String title, List<Episode> episodes) throws IOException {
        String html = render(title, episodes);
        Path target = file.toAbsolutePath();
        // a plain sibling (not createTempFile, whose owner-only permissions would stick to the report)
        Path tmp = target.resolveSibling(target.getFileName() + ".part");
        try {
            Files.writeString(tmp, html, StandardCharsets.UTF_8);
            try {
                Files.move(tmp, target, StandardCopyOption.REPLACE_EXISTING, StandardCopyOption.ATOMIC_MOVE);
            } catch (java.nio.file.AtomicMoveNotSupportedException e) {
                Files.move(tmp, target, StandardCopyOption.REPLACE_EXISTING);
            }
        } finally {
            Files.deleteIfExists(tmp);
        }
    }

    /**
     * The report as a string (what {@link #write} writes).
     *
     * @param title the report's heading
     * @param episodes one or more episodes, in the order shown; not modified
     * @throws IllegalArgumentException when an episode is inconsistent; the message names the episode, joint and field
     */
    public static String render(String title, List<Episode> episodes) {
        Objects.requireNonNull(title, "title");
        Objects.requireNonNull(episodes, "episodes");
        if (episodes.isEmpty()) {
            throw new IllegalArgumentException("a report needs at least one episode");
        }
        for (int i = 0; i < episodes.size(); i++) {
            validate(i + 1, episodes.get(i));
        }
        long ticks = 0;
        for (Episode e : episodes) {
            ticks += e.trace().timeSeconds().length;
        }
        Markup m = new Markup((int) Math.min(1 << 26, 64_000 + ticks * 20));
        boolean several = episodes.size() > 1;

        m.raw("<!DOCTYPE html>\n");
        m.openWith("html", "xmlns", "http://www.w3.org/1999/xhtml", "lang", "en");
        m.raw("\n<head>\n");
        m.empty("meta", "charset", "utf-8");
        m.empty("meta", "name", "viewport", "content", "width=device-width, initial-scale=1");
        m.empty("meta", "name", "generator", "content", "weft dry-run report");
        m.element("title", title);
        m.raw("\n<style>").raw(Style.CSS).raw("</style>\n</head>\n<body>\n");

        m.openWith("header", "class", "opening");
        m.element("h1", title);
        verdict(m, episodes);
        caution(m, episodes);
        if (!several) {
            facts(m, episodes.get(0).summary(), episodes.get(0).trace());
        }
        m.close("header").raw("\n");

        if (several) {
            overview(m, episodes);
        }
        for (int i = 0; i < episodes.size(); i++) {
            episode(m, i + 1, episodes.get(i), several);
        }
        m.openWith("footer", "class", "colophon");
        m.open("p").text("Written by weft. Every figure above comes from the run's summary and trace; "
                + "the plots thin long runs to the smallest and largest value per pixel column, so short "
                + "spikes stay visible.").close("p");
        m.close("footer").raw("\n</body>\n</html>\n");
        return m.toString();
    }

    // ------------------------------------------------------------------ opening

    private static void verdict(Markup m, List<Episode> episodes) {
        List<String> failed = new ArrayList<>();
        for (Episode e : episodes) {
            if (!e.summary().passed()) {
                failed.add(e.summary().name());
            }
        }
        boolean pass = failed.isEmpty();
        m.openWith("p", "class", pass ? "verdict verdict-pass" : "verdict verdict-fail", "id", "verdict");
        m.openWith("span", "class", "verdict-label").text("Verdict: ").close("span");
        m.openWith("strong", "class", "verdict-word").text(pass ? "PASS" : "FAIL").close("strong");
        m.openWith("span", "class", "verdict-reason");
        if (episodes.size() == 1) {
            m.text(" \u2014 ").text(gateSentence(episodes.get(0).summary()));
        } else if (pass) {
            m.text(" \u2014 all " + episodes.size() + " episodes passed every gate.");
        } else {
            m.text(" \u2014 " + failed.size() + " of " + episodes.size() + " episodes failed: "
                    + String.join(", ", failed) + ".");
        }
        m.close("span").close("p").raw("\n");
    }

    static String gateSentence(DryRunSummary s) {
        List<String> failed = new ArrayList<>();
        for (DryRunSummary.Gate g : s.gates()) {
            if (!g.passed()) {
                failed.add(g.name() + " (" + Markup.figure(g.value(), 4) + " against " + Markup.figure(g.threshold(), 4)
                        + ")");
            }
        }
        if (s.passed() && failed.isEmpty()) {
            return s.gates().isEmpty() ? "no gate failed (this run has no gates)." : "every gate passed ("
                    + s.gates().size() + ").";
        }
        if (failed.isEmpty()) {
            return "the run is marked failed although no listed gate failed; see the figures.";
        }
        return (failed.size() == 1 ? "failed gate: " : "failed gates: ") + String.join("; ", failed) + ".";
    }

    private static void caution(Markup m, List<Episode> episodes) {
        boolean anyClosed = false;
        for (Episode e : episodes) {
            anyClosed |= e.summary().closedLoop();
        }
        m.openWith("div", "class", "caution", "role", "note");
        m.openWith("p", "class", "caution-head").text("CAUTION \u2014 machines driven by weft can injure people.")
                .close("p");
        m.open("ul");
        m.element("li", "weft is not a safety-rated component. A hardware emergency stop and a safety-rated "
                + "controller stay in charge of the machine at all times.");
        m.element("li", "Do a risk assessment of the complete machine before any run on hardware.");
        m.element("li", "This dry run shows what weft would have sent to the drives, not what the robot would "
                + "have done: drives, mechanics, payload and surroundings are not part of it"
                + (anyClosed ? "; the simulated plant of a closed-loop run is a simple model, not the robot." : "."));
        m.element("li", "A PASS here is no permission to run. Defer to local codes and licensed practice.");
        m.close("ul");
        m.close("div").raw("\n");
    }

    private static void facts(Markup m, DryRunSummary s, DryRunTrace t) {
        m.openWith("table", "class", "facts");
        m.element("caption", "Run");
        m.open("tbody");
        row(m, "Name", s.name());
        row(m, "Recording", s.recording());
        row(m, "Loop", s.closedLoop() ? "closed loop: observations from the simulated plant"
                : "open loop: observations replayed from the recording");
        row(m, "Clock", s.realtime() ? "real time: paced at the control period" : "virtual time: run as fast as "
                + "possible, inference latency modelled in ticks");
        row(m, "Control period", Markup.figure(s.controlPeriod() * 1e3, 4) + " ms ("
                + Markup.figure(1 / s.controlPeriod(), 4) + " Hz)");
        row(m, "Modelled inference latency", s.latencyTicks() < 0 ? "not modelled: latency as measured on the real clock"
                : s.latencyTicks() + " ticks (" + Markup.figure(s.latencyTicks() * s.controlPeriod() * 1e3, 4) + " ms)");
        double[] time = t.timeSeconds();
        String span = time.length == 0 ? "" : ", " + Markup.figure(time[time.length - 1] - time[0]
                + s.controlPeriod(), 4) + " s";
        row(m, "Ticks run", s.ticks() + span);
        row(m, "Joints", s.joints().size() + ": " + String.join(", ", s.joints()));
        m.close("tbody").close("table").raw("\n");
    }

    private static void row(Markup m, String name, String value) {
        m.open("tr").element("th", name).element("td", value).close("tr");
    }

    // ------------------------------------------------------------------ overview

    private static void overview(Markup m, List<Episode> episodes) {
        m.openWith("section", "class", "overview", "id", "overview");
        m.element("h2", "Episodes");
        m.openWith("table", "class", "figures overview-table");
        m.open("thead").open("tr");
        for (String h : new String[] {"Episode", "Verdict", "Ticks", "Worst RMS error", "Stops", "Inference p99 (ms)"}) {
            m.element("th", h);
        }
        m.close("tr").close("thead").open("tbody");
        for (int i = 0; i < episodes.size(); i++) {
            DryRunSummary s = episodes.get(i).summary();
            m.open("tr");
            m.open("td").openWith("a", "href", "#" + anchor(i + 1)).text((i + 1) + ". " + s.name()).close("a")
                    .close("td");
            verdictCell(m, s.passed());
            m.openWith("td", "class", "num").text(Long.toString(s.ticks())).close("td");
            int worst = -1;
            for (int j = 0; j < s.rmsError().length; j++) {
                if (worst < 0 || !(s.rmsError()[j] <= s.rmsError()[worst])) {
                    worst = j;
                }
            }
            m.openWith("td", "class", "num").text(worst < 0 ? "\u2013"
                    : Markup.figure(s.rmsError()[worst], 4) + " (" + s.joints().get(worst) + ")").close("td");
            m.openWith("td", "class", "num").text(Integer.toString(s.stops().size())).close("td");
            m.openWith("td", "class", "num").text(s.inferenceMs() == null ? "\u2013"
                    : Markup.figure(s.inferenceMs().p99(), 4)).close("td");
            m.close("tr");
        }
        m.close("tbody").close("table");
        m.close("section").raw("\n");
    }

    private static void verdictCell(Markup m, boolean passed) {
        m.openWith("td", "class", passed ? "result result-pass" : "result result-fail")
                .text(passed ? "PASS" : "FAIL").close("td");
    }

    static String anchor(int episode) {
        return "episode-" + episode;
    }

    // ------------------------------------------------------------------ one episode

    private static void episode(Markup m, int index, Episode e, boolean several) {
        DryRunSummary s = e.summary();
        DryRunTrace t = e.trace();
        String id = anchor(index);
        m.openWith("section", "class", "episode", "id", id);
        m.element("h2", several ? "Episode " + index + ": " + s.name() : "Dry run: " + s.name());
        if (several) {
            m.openWith("p", "class", s.passed() ? "verdict verdict-pass small" : "verdict verdict-fail small");
            m.openWith("strong", "class", "verdict-word").text(s.passed() ? "PASS" : "FAIL").close("strong");
            m.openWith("span", "class", "verdict-reason").text(" \u2014 " + gateSentence(s)).close("span");
            m.close("p");
            facts(m, s, t);
        }
        m.openWith("nav", "class", "contents").text("In this section: ");
        link(m, id + "-joints", "joints");
        m.text(" \u00b7 ");
        link(m, id + "-latency", s.realtime() ? "latency and period error" : "latency");
        m.text(" \u00b7 ");
        link(m, id + "-timeline", "states and watchdog");
        m.text(" \u00b7 ");
        link(m, id + "-figures", "figures and gates");
        if (several) {
            m.text(" \u00b7 ");
            link(m, "overview", "all episodes");
        }
        m.close("nav").raw("\n");

        m.openWith("h3", "id", id + "-joints").text("Joints").close("h3");
        m.openWith("p", "class", "explain").text("Recorded action is what the recording holds for each tick; "
                + "blended target is what the policy's chunks, blended, asked for; command is what weft sent after "
                + "the limiter. The lanes under each plot mark the ticks on which a limit shaped this joint's "
                + "command.").close("p");
        List<DryRunTrace.JointTrace> joints = t.joints();
        for (int j = 0; j < joints.size(); j++) {
            DryRunTrace.JointTrace jt = joints.get(j);
            m.openWith("figure", "class", "joint", "id", id + "-joint-" + (j + 1));
            JointPlot.write(m, id + "-j" + (j + 1), j + 1, jt, t.timeSeconds(), s.stops());
            m.open("figcaption").text(jointCaption(j + 1, jt, s, j)).close("figcaption");
            m.close("figure").raw("\n");
        }

        m.openWith("h3", "id", id + "-latency").text("Inference latency").close("h3");
        m.openWith("figure", "class", "latency");
        HistogramPlot.write(m, "Histogram of inference latency", "inference latency (ms)", t.inferenceLatencyMs(),
                true, s.inferenceMs());
        m.open("figcaption").text(t.inferenceLatencyMs().length + " inference calls measured"
                + (s.realtime() ? "." : "; the loop saw them " + s.latencyTicks() + " ticks late by the model, "
                + "whatever they measured.")).close("figcaption");
        m.close("figure").raw("\n");
        if (t.periodErrorMs() != null) {
            m.openWith("h3", "id", id + "-period").text("Loop period error").close("h3");
            m.openWith("figure", "class", "period");
            HistogramPlot.write(m, "Histogram of loop period error", "period error (ms, late is positive)",
                    t.periodErrorMs(), false, s.periodErrorMs());
            m.open("figcaption").text(t.periodErrorMs().length + " ticks paced on the real clock.").close("figcaption");
            m.close("figure").raw("\n");
        }

        if (!t.frames().isEmpty()) {
            m.openWith("h3", "id", id + "-camera").text("Camera frames").close("h3");
            m.openWith("p", "class", "explain").text("The frame a query at each of these ticks read: the camera's "
                    + "newest frame stamped at or before the tick. Shown enlarged, pixel for pixel.").close("p");
            m.openWith("div", "class", "frames");
            for (DryRunTrace.FrameSnapshot f : t.frames()) {
                m.openWith("figure", "class", "frame");
                if (Double.isNaN(f.frameSeconds())) {
                    m.openWith("p", "class", "small").text("no frame yet").close("p");
                } else {
                    int scale = Math.max(1, 160 / Math.max(1, f.width()));
                    m.empty("img", "src", "data:image/png;base64," + FramePng.encode(f), "width",
                            Integer.toString(f.width() * scale), "height", Integer.toString(f.height() * scale),
                            "alt", "camera " + f.camera() + " at " + Markup.fixed(f.tickSeconds(), 3) + " s",
                            "style", "image-rendering: pixelated");
                }
                m.open("figcaption").text(f.camera() + ", tick at " + Markup.fixed(f.tickSeconds(), 3) + " s"
                        + (Double.isNaN(f.frameSeconds()) ? "" : "; frame from " + Markup.fixed(f.frameSeconds(), 3) + " s ("
                        + Markup.fixed((f.tickSeconds() - f.frameSeconds()) * 1e3, 1) + " ms old)")).close("figcaption");
                m.close("figure");
            }
            m.close("div").raw("\n");
        }

        m.openWith("h3", "id", id + "-timeline").text("Supervisor state and watchdog").close("h3");
        m.openWith("figure", "class", "timeline");
        StateTimeline.write(m, id + "-tl", t.timeSeconds(), t.states(), t.watchdogMasks(), s.stops());
        m.open("figcaption").text(s.watchdogEvents() + " watchdog events (a condition appearing), "
                + s.stops().size() + (s.stops().size() == 1 ? " stop." : " stops.")).close("figcaption");
        m.close("figure").raw("\n");

        m.openWith("h3", "id", id + "-figures").text("Figures and gates").close("h3");
        Tables.write(m, s, t);
        m.close("section").raw("\n");
    }

    private static void link(Markup m, String target, String text) {
        m.openWith("a", "href", "#" + target).text(text).close("a");
    }

    private static String jointCaption(int number, DryRunTrace.JointTrace jt, DryRunSummary s, int j) {
        long[] counts = Tables.flagTicks(jt.limiterFlags());
        return "Joint " + number + ", " + jt.name() + ": RMS error " + Markup.figure(s.rmsError()[j], 4)
                + ", largest error " + Markup.figure(s.maxError()[j], 4) + ", operating range ["
                + Markup.figure(jt.lower(), 5) + ", " + Markup.figure(jt.upper(), 5) + "]. Ticks shaped by the "
                + "position limit " + counts[0] + ", velocity " + counts[1] + ", acceleration " + counts[2]
                + ", jerk " + counts[3] + (counts[4] > 0 ? "; limiter fault flags on " + counts[4] + " ticks." : ".");
    }

    // ------------------------------------------------------------------ validation

    private static void validate(int index, Episode e) {
        DryRunSummary s = e.summary();
        DryRunTrace t = e.trace();
        String where = "episode " + index + " (\"" + s.name() + "\")";
        need(s.joints() != null, where, "summary.joints is missing");
        need(s.rmsError() != null && s.maxError() != null, where, "summary.rmsError or summary.maxError is missing");
        need(s.stops() != null, where, "summary.stops is missing");
        need(s.gates() != null, where, "summary.gates is missing");
        need(t.timeSeconds() != null && t.joints() != null && t.states() != null && t.watchdogMasks() != null
                && t.inferenceLatencyMs() != null, where, "a trace field other than periodErrorMs is missing");
        int joints = s.joints().size();
        need(t.joints().size() == joints, where, "trace has " + t.joints().size() + " joints, summary has " + joints);
        need(s.rmsError().length == joints, where, "summary.rmsError has " + s.rmsError().length
                + " values for " + joints + " joints");
        need(s.maxError().length == joints, where, "summary.maxError has " + s.maxError().length
                + " values for " + joints + " joints");
        int n = t.timeSeconds().length;
        sameLength(where, "trace.states", t.states().length, n);
        sameLength(where, "trace.watchdogMasks", t.watchdogMasks().length, n);
        if (t.periodErrorMs() != null) {
            sameLength(where, "trace.periodErrorMs", t.periodErrorMs().length, n);
        }
        for (int i = 0; i < n; i++) {
            double ti = t.timeSeconds()[i];
            need(Double.isFinite(ti), where, "trace.timeSeconds[" + i + "] is " + ti);
            if (i > 0 && ti < t.timeSeconds()[i - 1]) {
                need(false, where, "trace.timeSeconds[" + i + "] = " + ti + " is before trace.timeSeconds["
                        + (i - 1) + "] = " + t.timeSeconds()[i - 1]);
            }
            int st = t.states()[i];
            need(st >= 0 && st < SupervisorState.values().length, where, "trace.states[" + i + "] = " + st
                    + " is not a supervisor state (0 to " + (SupervisorState.values().length - 1) + ")");
        }
        for (int j = 0; j < joints; j++) {
            DryRunTrace.JointTrace jt = t.joints().get(j);
            String joint = where + ", joint " + (j + 1) + " (\"" + (jt == null ? "?" : jt.name()) + "\")";
            need(jt != null && jt.recorded() != null && jt.target() != null && jt.command() != null
                    && jt.limiterFlags() != null, joint, "a series is missing");
            sameLength(joint, "recorded", jt.recorded().length, n);
            sameLength(joint, "target", jt.target().length, n);
            sameLength(joint, "command", jt.command().length, n);
            sameLength(joint, "limiterFlags", jt.limiterFlags().length, n);
        }
    }

    private static void sameLength(String where, String field, int length, int ticks) {
        need(length == ticks, where, field + " has " + length + " entries, trace.timeSeconds has " + ticks);
    }

    private static void need(boolean ok, String where, String problem) {
        if (!ok) {
            throw new IllegalArgumentException("report: " + where + ": " + problem);
        }
    }
}
