package dev.weft.runtime.cli;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.Weft;
import dev.weft.runtime.config.TelemetryConfig;
import dev.weft.runtime.config.WatchdogConfig;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.loop.ControlLoop;
import dev.weft.runtime.loop.LoopClock;
import dev.weft.runtime.loop.LoopStatus;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.telemetry.RowCounts;
import dev.weft.runtime.telemetry.TargetFile;
import dev.weft.safety.SupervisorState;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.Locale;
import java.util.concurrent.Callable;
import java.util.concurrent.TimeUnit;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Parameters;

/**
 * {@code weft run CONFIG}: a live run. Without {@code --arm} everything runs but only hold
 * commands go out; with {@code --arm} the robot is armed (soft start) once a plan is there. Ctrl-C
 * or the end of {@code --duration} brings a moving robot to a controlled stop, then flushes the
 * files and exits.
 */
@Command(name = "run", mixinStandardHelpOptions = true,
        description = "Run a configuration live. Without --arm only hold commands go out. Ctrl-C stops the"
                + " robot under control, flushes and exits (exit 0 ended cleanly, 1 ended faulted, arming was"
                + " refused or telemetry rows were lost, 2 could not start, 3 the control loop stalled).")
final class RunCommand implements Callable<Integer> {

    private static final Logger LOG = LoggerFactory.getLogger("weft.run");

    @Parameters(paramLabel = "CONFIG", description = "the configuration file (YAML)")
    Path config;

    @Option(names = "--arm", description = "arm once a plan is there: the robot follows the policy")
    boolean arm;

    @Option(names = "--warmup", paramLabel = "SECONDS", defaultValue = "2",
            description = "with --arm: hold disarmed this long first, so the JIT compiles the tick before"
                    + " the robot moves (default 2)")
    double warmup;

    @Option(names = "--duration", paramLabel = "SECONDS", defaultValue = "0",
            description = "stop after this long (default: run until Ctrl-C)")
    double duration;

    @Option(names = "--overwrite",
            description = "replace an existing telemetry file (as telemetry.overwrite: true does)")
    boolean overwrite;

    @Option(names = "--status-every", paramLabel = "SECONDS", defaultValue = "1",
            description = "seconds between status lines (default ${DEFAULT-VALUE})")
    double statusEvery;

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public Integer call() throws Exception {
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        Caution.print(out);
        out.flush();
        if (!(warmup >= 0 && warmup <= 3600)) {
            err.println("weft run: --warmup: must be from 0 to 3600 s, got " + warmup);
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        }
        Weft weft;
        try {
            WeftConfig c = WeftConfig.load(config);
            if (overwrite) {
                c = c.withTelemetry(c.telemetry().overwriting());
            }
            ConfiguredRun run = ConfiguredRun.of(c);
            run.checkTelemetry();
            for (WatchdogConfig.Disabled d : c.watchdog().disabled()) {
                LOG.warn("watchdog condition {} is switched off: {}", d.condition().label(), d.reason());
            }
            OnnxPolicy policy = run.loadPolicy();
            CommandPort port = null;
            try {
                port = run.port();
                weft = run.builder(policy, port, LoopClock.system(), null)
                        .listener((tick, time, from, to, cause, message) ->
                                LOG.info("tick {}: {} -> {}: {}", tick, name(from), name(to), message))
                        .build();
            } catch (BadInputException | IOException | RuntimeException e) {
                if (port != null) {
                    port.close();
                }
                policy.close();
                throw e;
            }
        } catch (BadInputException e) {
            err.println("weft run: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        } catch (TargetFile.Refused e) {
            // the file system changed since the check above
            err.println("weft run: " + TelemetryConfig.FILE_KEY + ": " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        } catch (IOException | RuntimeException e) {
            err.println("weft run: could not start: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        }
        Thread hook = new Thread(() -> {
            out.println("weft run: stopping (controlled stop, then flush)");
            out.flush();
            closeReporting(weft, out);
        }, "weft-shutdown");
        try {
            weft.start();
        } catch (IOException | RuntimeException e) {
            err.println("weft run: could not start: " + e.getMessage());
            err.flush();
            closeReporting(weft, out);
            return WeftCommand.COULD_NOT_RUN;
        }
        Runtime.getRuntime().addShutdownHook(hook);
        int exit = 0;
        try {
            if (!arm) {
                out.println("not armed: hold commands only; pass --arm to follow the policy");
            } else {
                if (warmup > 0) {
                    out.printf(Locale.ROOT, "warming up: holding disarmed for %s before arming%n", Units.seconds(warmup));
                    out.flush();
                    Thread.sleep((long) (warmup * 1000));
                }
                int result = armWhenPlanned(weft);
                if (result != 0) {
                    out.println("arming refused: " + Weft.describe(result));
                    exit = WeftCommand.VERDICT_FAILED;
                } else {
                    out.println("armed: soft start toward the plan");
                }
            }
            out.flush();
            if (exit == 0) {
                exit = statusUntilDone(weft, out);
            }
        } finally {
            closeReporting(weft, out);
            try {
                Runtime.getRuntime().removeShutdownHook(hook);
            } catch (IllegalStateException shuttingDown) {
                // the hook is already running
            }
        }
        LoopStatus s = weft.status();
        out.printf(Locale.ROOT, "ended %s after %d ticks: %d overruns, %d deadlines skipped, %d chunks, %d inference"
                        + " failures, %d queries deferred, %d frames dropped by the port, %s%n", s.state(), s.ticks(),
                s.overruns(), s.skipped(), s.chunksAccepted(), s.inferenceFailures(), s.deferredQueries(),
                s.portDropped(),
                s.telemetry() == null ? "no telemetry" : "telemetry: " + s.telemetry());
        if (weft.telemetryFailure() != null) {
            out.println("telemetry failed: " + weft.telemetryFailure());
            exit = WeftCommand.VERDICT_FAILED;
        } else if (s.telemetry() != null) {
            out.println("telemetry in " + weft.telemetryFile());
            if (s.telemetry().lost() > 0) {
                exit = WeftCommand.VERDICT_FAILED;
            }
        }
        int cause = weft.loop().supervisor() == null ? 0 : weft.loop().supervisor().latchedCause();
        if (cause != 0) {
            String detail = weft.faultDetail(cause);
            out.println("stopped by: " + Weft.describe(cause) + (detail == null ? "" : " (" + detail + ")"));
        }
        if (weft.loop().failure() != null) {
            out.println("the loop ended on an error: " + weft.loop().failure());
            exit = WeftCommand.VERDICT_FAILED;
        }
        if (weft.state() == SupervisorState.FAULTED) {
            exit = WeftCommand.VERDICT_FAILED;
        }
        if (weft.stalls() > 0 || weft.state() == SupervisorState.STALLED) {
            out.println("the control loop stalled " + weft.stalls() + " time(s): "
                    + weft.faultDetail(dev.weft.safety.WatchdogCondition.LOOP_STALLED.code()));
            exit = WeftCommand.LOOP_STALLED;
        }
        out.flush();
        return exit;
    }

    /** Closes the run; a part that would not close (a loop thread stuck in a port) is one line, not a trace. */
    private static void closeReporting(Weft weft, PrintWriter out) {
        try {
            weft.close();
        } catch (RuntimeException e) {
            out.println("weft run: " + e.getMessage());
            out.flush();
        }
    }

    private static int armWhenPlanned(Weft weft) throws InterruptedException {
        long until = System.nanoTime() + TimeUnit.SECONDS.toNanos(5);
        int r;
        do {
            r = weft.arm();
            if (r != ControlLoop.ARM_REFUSED_NO_PLAN) {
                return r;
            }
            Thread.sleep(10);
        } while (System.nanoTime() < until);
        return r;
    }

    private int statusUntilDone(Weft weft, PrintWriter out) throws InterruptedException {
        ControlLoop.Histograms h = ControlLoop.newHistograms();
        long start = System.nanoTime();
        long every = Math.max(1, (long) (statusEvery * 1e9));
        long next = start + every;
        while (weft.running()) {
            long now = System.nanoTime();
            if (duration > 0 && now - start >= (long) (duration * 1e9)) {
                break;
            }
            if (now >= next) {
                weft.loop().histograms(h);
                LoopStatus s = weft.status();
                RowCounts t = s.telemetry();
                out.printf(Locale.ROOT, "%-9s ticks %d  overruns %d  period error p99 %s  inference p50 %s p99 %s"
                                + "  plan %d ticks%s%n", s.state(), s.ticks(), s.overruns(),
                        Units.seconds(h.periodError().getValueAtPercentile(99) / 1e9),
                        Units.seconds(h.inference().getValueAtPercentile(50) / 1e9),
                        Units.seconds(h.inference().getValueAtPercentile(99) / 1e9), s.planTicks(),
                        t == null ? "" : String.format(Locale.ROOT, "  telemetry %d handed %d written %d lost",
                                t.handed(), t.written(), t.lost()));
                out.flush();
                next += every;
            }
            Thread.sleep(20);
        }
        return 0;
    }

    private static String name(SupervisorState s) {
        return s.name().toLowerCase(Locale.ROOT);
    }
}
