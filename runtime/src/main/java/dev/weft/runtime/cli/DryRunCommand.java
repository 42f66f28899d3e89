package dev.weft.runtime.cli;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.dryrun.DryRun;
import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.runtime.dryrun.GateThresholds;
import dev.weft.runtime.recording.RecordedFrames;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.RecordingSpec;
import dev.weft.runtime.recording.Recordings;
import dev.weft.runtime.report.HtmlReport;
import dev.weft.runtime.telemetry.TargetFile;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Optional;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Parameters;

/**
 * {@code weft dry-run CONFIG --recording FILE --report DIR}: replays a recorded trajectory through
 * the configured policy and loop with nothing sent to a motor, and writes the summary and report.
 */
@Command(name = "dry-run", mixinStandardHelpOptions = true,
        description = "Replay a recorded trajectory through the policy, blender, limiter and watchdog with"
                + " nothing sent to a motor; write commands.csv, telemetry.csv, summary.json and report.html"
                + " (exit 0 every gate passed, 1 a gate failed, 2 could not run).")
final class DryRunCommand implements Callable<Integer> {

    @Parameters(paramLabel = "CONFIG", description = "the configuration file (YAML)")
    Path config;

    @Option(names = "--recording", paramLabel = "FILE", required = true, description = "a CSV or HDF5 recording")
    Path recording;

    @Option(names = "--report", paramLabel = "DIR", required = true, description = "the folder to write into")
    Path report;

    @Option(names = "--closed-loop", description = "observe the simulated plant driven by weft's commands")
    boolean closedLoop;

    @Option(names = "--realtime", description = "pace the loop at the control period on the real clock")
    boolean realtime;

    @Option(names = "--latency-ticks", paramLabel = "N", defaultValue = "-1",
            description = "model inference latency as N ticks (default: the measured p99 rounded up)")
    long latencyTicks;

    @Option(names = "--gate", paramLabel = "NAME=VALUE", description = "set a gate, such as rms_error_max=0.05")
    List<String> gates = new ArrayList<>();

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public Integer call() {
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        Caution.print(out);
        try {
            WeftConfig c = WeftConfig.load(config);
            ConfiguredRun run = ConfiguredRun.of(c);
            Optional<RecordingSpec> rs = c.recordingSpec();
            if (rs.isEmpty()) {
                throw new BadInputException(config.toString(), "a dry run needs a recording section naming the"
                        + " recording's time, observation and action columns (docs/configuration.md)");
            }
            GateThresholds g = GateThresholds.of(c.gates());
            for (String a : gates) {
                try {
                    g = g.with(a);
                } catch (IllegalArgumentException e) {
                    throw new BadInputException("--gate", e.getMessage().replaceFirst("^--gate ", ""));
                }
            }
            Recording rec = Recordings.read(recording, rs.get());
            List<RecordedFrames> frames = Recordings.readCameras(recording, rs.get());
            List<String> cameras = cameraNotes(frames, c);
            try {
                java.nio.file.Files.createDirectories(report);
            } catch (IOException e) {
                throw new BadInputException("--report", report + ": the folder cannot be created ("
                        + (e instanceof java.nio.file.AccessDeniedException ? "permission denied" : e.getMessage()) + ")");
            }
            out.println(DryRun.portNote(run));
            cameras.forEach(out::println);
            out.flush();
            String name = recording.getFileName().toString();
            DryRun.Result r = DryRun.run(run, rec, frames, new DryRun.Options(report, name, closedLoop, realtime, latencyTicks,
                    g, System.console() != null ? out : null));
            Path html = report.resolve("report.html");
            HtmlReport.write(html, "weft dry run: " + name, List.of(new HtmlReport.Episode(r.summary(), r.trace())));
            printVerdict(out, r.summary());
            out.printf("report    %s%nsummary   %s%n", html, r.summaryFile());
            out.flush();
            return r.summary().passed() ? 0 : WeftCommand.VERDICT_FAILED;
        } catch (BadInputException e) {
            err.println("weft dry-run: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        } catch (TargetFile.Refused e) {
            err.println("weft dry-run: --report: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        } catch (IOException | RuntimeException e) {
            err.println("weft dry-run: could not run: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        }
    }

    /** The recording's cameras, one line each: replayed at their own times, or only read when not configured. */
    static List<String> cameraNotes(List<RecordedFrames> frames, dev.weft.runtime.config.WeftConfig c) {
        List<String> notes = new ArrayList<>();
        for (RecordedFrames f : frames) {
            boolean replayed = c.cameras().stream().anyMatch(cc -> cc.name().equals(f.camera()));
            notes.add(String.format(Locale.ROOT, "camera    %s: %d frames %d × %d %s, %.3f s to %.3f s; %s",
                    f.camera(), f.frameCount(), f.height(), f.width(), f.pixelFormat().label(), f.time(0),
                    f.time(f.frameCount() - 1), replayed ? "replayed at its own times" : "read and checked, not replayed"
                            + " (no cameras." + f.camera() + " in the configuration)"));
        }
        return notes;
    }

    /** One summary's verdict and headline figures. */
    static void printVerdict(PrintWriter out, DryRunSummary s) {
        double worst = Double.NaN;
        for (double v : s.rmsError()) {
            worst = Double.isNaN(worst) || v > worst ? v : worst;
        }
        out.printf(Locale.ROOT, "%-9s %s: %d ticks, %d stops, %d bound violations, worst RMS error %s,"
                        + " inference p50 %.3f ms, p99 %.3f ms (modelled as %d ticks), %d stale steps dropped,"
                        + " %d queries deferred%n", s.passed() ? "PASS" : "FAIL", s.name(),
                s.ticks(), s.stops().size(), s.boundViolations(),
                Double.isNaN(worst) ? "n/a (never armed)" : String.format(Locale.ROOT, "%.4f", worst),
                s.inferenceMs().p50(), s.inferenceMs().p99(), s.latencyTicks(), s.staleDropped(), s.deferredQueries());
        for (DryRunSummary.Gate g : s.gates()) {
            if (!g.passed()) {
                out.printf(Locale.ROOT, "          gate %s failed: %s against %s%n", g.name(), fmt(g.value()),
                        fmt(g.threshold()));
            }
        }
    }

    private static String fmt(double v) {
        return v == Math.rint(v) && Math.abs(v) < 1e15 ? Long.toString((long) v) : String.format(Locale.ROOT, "%.6g", v);
    }
}
