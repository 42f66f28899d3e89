package dev.weft.runtime.cli;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.TimingConfig;
import dev.weft.runtime.config.WatchdogConfig;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.telemetry.TargetFile;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import org.HdrHistogram.Histogram;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Parameters;

/**
 * {@code weft check CONFIG}: validates the configuration and the model together, warms the model
 * up, measures inference latency and says whether the timing budget holds: the next chunk must
 * arrive before the plan the current one gives runs out, with the configured reserve.
 */
@Command(name = "check", mixinStandardHelpOptions = true,
        description = "Validate a configuration and its model together, measure inference latency and say"
                + " whether the timing budget holds (exit 0 it holds, 1 it does not, 2 bad input).")
final class CheckCommand implements Callable<Integer> {

    @Parameters(paramLabel = "CONFIG", description = "the configuration file (YAML)")
    Path config;

    @Option(names = "--runs", paramLabel = "N", defaultValue = "500",
            description = "inference calls to measure (default ${DEFAULT-VALUE})")
    int runs;

    @Option(names = "--overwrite",
            description = "check as `weft run --overwrite` runs: an existing telemetry file may be replaced")
    boolean overwrite;

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    /** The timing budget, in seconds: what one chunk gives and what the next one needs. */
    record Budget(double planSeconds, double nextArrivalSeconds, double reserveSeconds, double latencyP99,
                  double latencyBound, boolean holds, boolean latencyHolds) {
        double margin() {
            return planSeconds - nextArrivalSeconds - reserveSeconds;
        }
    }

    /**
     * The budget for a chunk of K steps: the plan it gives reaches (K − 1)·Δp past its
     * observation; the next chunk's observation comes one query interval later (fixed schedule)
     * or one inference later (when idle), and it arrives one inference after that.
     */
    static Budget budget(WeftConfig c, int k, double p99Seconds) {
        TimingConfig t = c.timing();
        double plan = (k - 1) * t.policyStep();
        double interval = t.schedule() == TimingConfig.QuerySchedule.FIXED ? t.everyTicks() * t.controlPeriod()
                : Math.max(p99Seconds, t.controlPeriod());
        double next = interval + p99Seconds;
        double reserve = Math.max(c.watchdog().planRemainingMin(), t.controlPeriod());
        double bound = c.watchdog().inferenceLatencyMax();
        boolean latencyOk = !c.watchdog().enabled(WatchdogConfig.Condition.INFERENCE_LATENCY) || p99Seconds < bound;
        return new Budget(plan, next, reserve, p99Seconds, bound, plan - next >= reserve, latencyOk);
    }

    @Override
    public Integer call() {
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        WeftConfig c;
        ConfiguredRun run;
        OnnxPolicy policy;
        TargetFile telemetry;
        try {
            c = WeftConfig.load(config);
            if (overwrite) {
                c = c.withTelemetry(c.telemetry().overwriting());
            }
            run = ConfiguredRun.of(c);
            telemetry = run.checkTelemetry();
            policy = run.loadPolicy();
        } catch (BadInputException e) {
            err.println("weft check: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        }
        try (policy) {
            TimingConfig t = c.timing();
            out.printf(Locale.ROOT, "configuration  %s: %d joints, control period %s, policy step %s%n", config,
                    c.robot().jointCount(), Units.seconds(t.controlPeriod()), Units.seconds(t.policyStep()));
            if (policy.layout() == dev.weft.runtime.policy.ChunkLayout.SINGLE_ACTION) {
                out.printf(Locale.ROOT, "model          %s: one action of D = %d values, held for %d policy steps"
                                + " (K = %d; layout %s, output '%s')%n", c.policy().model(), policy.actionSize(),
                        policy.chunkLength() - 1, policy.chunkLength(), policy.layout().label(), policy.outputName());
            } else {
                out.printf(Locale.ROOT, "model          %s: K = %d actions of D = %d values (layout %s, output '%s')%n",
                        c.policy().model(), policy.chunkLength(), policy.actionSize(), policy.layout().label(),
                        policy.outputName());
            }
            for (dev.weft.runtime.config.CameraConfig cam : c.cameras()) {
                List<String> readers = new java.util.ArrayList<>();
                c.policy().inputs().forEach((name, b) -> {
                    if (b instanceof dev.weft.runtime.policy.InputBinding.Image i && i.camera().equals(cam.name())) {
                        readers.add("'" + name + "'");
                    }
                });
                out.printf(Locale.ROOT, "camera         %s: %d × %d %s, newest frame at most %s old; frames from %s; %s%n",
                        cam.name(), cam.height(), cam.width(), cam.pixelFormat().label(), Units.seconds(cam.ageMax()),
                        cam.frameFile().map(Object::toString).orElse(cam.embedded() ? "the embedding program"
                                : "the recording (dry runs only)"),
                        readers.isEmpty() ? "watched only" : "read by input " + String.join(", ", readers));
            }
            if (telemetry != null) {
                out.printf("telemetry      %s (%s when the run ends)%n", telemetry.file(),
                        Files.exists(telemetry.file()) ? "replaced" : "written");
            }
            for (WatchdogConfig.Disabled d : c.watchdog().disabled()) {
                out.printf("warning        watchdog condition %s is switched off: %s%n", d.condition().label(), d.reason());
            }
            Histogram h = dev.weft.runtime.policy.LatencyProbe.measure(policy, runs);
            double p50 = h.getValueAtPercentile(50) / 1e9;
            double p99 = h.getValueAtPercentile(99) / 1e9;
            double max = h.getMaxValue() / 1e9;
            out.printf(Locale.ROOT, "inference      %d calls after warm-up: p50 %s, p99 %s, max %s%n", runs,
                    Units.seconds(p50), Units.seconds(p99), Units.seconds(max));
            Budget b = budget(c, policy.chunkLength(), p99);
            out.printf(Locale.ROOT, "plan budget    one chunk plans %s ahead; the next arrives within %s"
                            + " (%s + p99 inference %s); reserve %s%n",
                    Units.seconds(b.planSeconds()), Units.seconds(b.nextArrivalSeconds()),
                    t.schedule() == TimingConfig.QuerySchedule.FIXED
                            ? "query every " + t.everyTicks() + " ticks" : "next query when idle",
                    Units.seconds(p99), Units.seconds(b.reserveSeconds()));
            if (!b.latencyHolds()) {
                out.printf(Locale.ROOT, "verdict        does not hold: p99 inference %s is above watchdog.inference_latency_max %s%n",
                        Units.seconds(p99), Units.seconds(b.latencyBound()));
                return WeftCommand.VERDICT_FAILED;
            }
            if (!b.holds()) {
                out.printf(Locale.ROOT, "verdict        does not hold: short by %s; query more often, plan longer"
                        + " chunks, or use a faster model%n", Units.seconds(-b.margin()));
                return WeftCommand.VERDICT_FAILED;
            }
            out.printf(Locale.ROOT, "verdict        holds, with %s to spare%n", Units.seconds(b.margin()));
            return 0;
        } finally {
            out.flush();
        }
    }
}
