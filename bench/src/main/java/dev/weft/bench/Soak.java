package dev.weft.bench;

import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.Weft;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.loop.ControlLoop;
import dev.weft.runtime.loop.LoopClock;
import dev.weft.runtime.loop.LoopStatus;
import dev.weft.runtime.policy.OnnxPolicy;
import java.io.IOException;
import java.io.PrintStream;
import java.lang.management.GarbageCollectorMXBean;
import java.lang.management.ManagementFactory;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.TimeUnit;
import jdk.jfr.Recording;
import jdk.jfr.consumer.RecordedEvent;
import jdk.jfr.consumer.RecordingFile;
import org.HdrHistogram.Histogram;

/**
 * The soak run: a configured run at 1 kHz (six joints, an ONNX policy sweeping every joint along
 * a sine, queried every 50 ms on its own thread, the simulated plant as source and port, telemetry on), warmed up
 * disarmed for 10 s, then armed for a given wall-clock time (10 minutes unless told), with Java Flight Recorder capturing every
 * garbage-collection pause. Not part of CI; its figures go into {@code docs/performance.md}.
 *
 * <pre>
 * java -Xms512m -Xmx512m -XX:+AlwaysPreTouch -XX:+UseZGC -cp bench/target/benchmarks.jar \
 *     dev.weft.bench.Soak [seconds [rateHz [outDir]]]
 * </pre>
 *
 * <p>It prints, and writes to {@code outDir/soak.txt}: ticks, overruns and skipped deadlines,
 * the period error's and the tick compute time's percentiles, inference latency, telemetry rows
 * lost, and the GC pauses (count, longest, how many above 1 ms). Exit 0 when no pause exceeded
 * 1 ms after arming, no telemetry row was lost and the run was still armed at its end, 1
 * otherwise. The figures in {@code docs/performance.md} were taken with the JVM flags above.
 */
public final class Soak {

    private Soak() {
    }

    public static void main(String[] args) throws Exception {
        double seconds = args.length > 0 ? Double.parseDouble(args[0]) : 600;
        int rate = args.length > 1 ? Integer.parseInt(args[1]) : 1000;
        Path out = args.length > 2 ? Path.of(args[2]) : Files.createTempDirectory("weft-soak");
        Files.createDirectories(out);
        // a plan the arm can follow (the example model's random weights ask for more than its limits,
        // so the soft start would never reach that plan): each joint sweeps 0.4 rad at 0.15 Hz
        // (0.38 rad/s, 0.36 rad/s² at the peak, against 1.5 rad/s and 6 rad/s²)
        Path model = Files.createTempFile("weft-soak-sweep-", ".onnx");
        model.toFile().deleteOnExit();
        Files.write(model, dev.weft.onnxkit.PolicyModels.sweepPolicy(12, 16, 6, 1.0 / rate, 0.02, 0.4, 0.15));
        String yaml = config(model, rate, out.resolve("telemetry.csv"));
        Path cfg = Files.writeString(out.resolve("soak.yaml"), yaml);

        WeftConfig c = WeftConfig.load(cfg);
        ConfiguredRun run = ConfiguredRun.of(c);
        OnnxPolicy policy = run.loadPolicy();
        Path jfr = out.resolve("soak.jfr");
        try (Recording rec = new Recording()) {
            rec.enable("jdk.GCPhasePause");
            rec.enable("jdk.GarbageCollection");
            rec.start();
            long gcCountBefore = gcCount();
            Weft weft = run.builder(policy, run.port(), LoopClock.system(), null).build();
            weft.start();
            // warm up disarmed, as docs/performance.md recommends, so the JIT has compiled the tick
            Thread.sleep(10_000);
            long armUntil = System.nanoTime() + TimeUnit.SECONDS.toNanos(10);
            int armed;
            do {
                armed = weft.arm();
                Thread.sleep(10);
            } while (armed == ControlLoop.ARM_REFUSED_NO_PLAN && System.nanoTime() < armUntil);
            if (armed != 0) {
                weft.close();
                throw new IllegalStateException("arming refused: " + Weft.describe(armed));
            }
            // the pauses that count are those after the warm-up (set-up, model loading and the
            // explicit collection at start are over by then)
            java.time.Instant armedAt = java.time.Instant.now();
            long end = System.nanoTime() + (long) (seconds * 1e9);
            while (System.nanoTime() < end && weft.running()) {
                Thread.sleep(200);
            }
            ControlLoop.Histograms h = ControlLoop.newHistograms();
            weft.loop().histograms(h);
            String state = weft.state().name();
            int cause = weft.loop().supervisor().latchedCause();
            weft.close();
            LoopStatus s = weft.status();
            long gcCount = gcCount() - gcCountBefore;
            rec.stop();
            rec.dump(jfr);
            List<Duration> pauses = new ArrayList<>();
            int before = 0;
            for (RecordedEvent e : RecordingFile.readAllEvents(jfr)) {
                if (e.getEventType().getName().equals("jdk.GCPhasePause")) {
                    if (e.getStartTime().isBefore(armedAt)) {
                        before++;
                    } else {
                        pauses.add(e.getDuration());
                    }
                }
            }
            long over1ms = pauses.stream().filter(d -> d.toNanos() > 1_000_000).count();
            Duration longest = pauses.stream().max(Duration::compareTo).orElse(Duration.ZERO);
            String report = report(seconds, rate, s, state, cause, h, gcCount, pauses.size(), longest, over1ms, before);
            Files.writeString(out.resolve("soak.txt"), report);
            System.out.print(report);
            System.out.println("files: " + out);
            // the run must also have stayed armed to its end: a soak that faulted measured a robot at rest
            System.exit(over1ms == 0 && s.telemetryLost() == 0 && state.equals("ARMED") ? 0 : 1);
        }
    }

    private static long gcCount() {
        long n = 0;
        for (GarbageCollectorMXBean b : ManagementFactory.getGarbageCollectorMXBeans()) {
            n += Math.max(0, b.getCollectionCount());
        }
        return n;
    }

    private static String report(double seconds, int rate, LoopStatus s, String state, int cause,
            ControlLoop.Histograms h, long gcCount, int pauses, Duration longest, long over1ms, int pausesBefore) {
        java.io.ByteArrayOutputStream buf = new java.io.ByteArrayOutputStream();
        PrintStream p = new PrintStream(buf, true, java.nio.charset.StandardCharsets.UTF_8);
        p.printf(Locale.ROOT, "weft soak: %.0f s at %d Hz, %s, Java %s, %s, %d cores%n", seconds, rate,
                collectors(), System.getProperty("java.version"), System.getProperty("os.arch"),
                Runtime.getRuntime().availableProcessors());
        p.printf(Locale.ROOT, "state at the end  %s (latched cause %d: %s)%n", state, cause,
                cause == 0 ? "none" : Weft.describe(cause));
        p.printf(Locale.ROOT, "ticks             %d (%d overruns, %d deadlines skipped)%n", s.ticks(), s.overruns(),
                s.skipped());
        p.printf(Locale.ROOT, "chunks            %d accepted, %d inferences, %d failures%n", s.chunksAccepted(),
                s.inferences(), s.inferenceFailures());
        p.printf(Locale.ROOT, "telemetry         %d rows lost%n", s.telemetryLost());
        line(p, "period error", h.periodError());
        line(p, "tick compute", h.compute());
        line(p, "inference", h.inference());
        p.printf(Locale.ROOT, "GC                %d collections in all; armed: %d pauses, longest %.3f ms, %d over 1 ms"
                + " (%d pauses before arming not counted)%n", gcCount, pauses, longest.toNanos() / 1e6, over1ms,
                pausesBefore);
        return buf.toString(java.nio.charset.StandardCharsets.UTF_8);
    }

    private static void line(PrintStream p, String name, Histogram h) {
        p.printf(Locale.ROOT, "%-17s p50 %.1f µs  p99 %.1f µs  p99.9 %.1f µs  p99.99 %.1f µs  max %.1f µs  (%d samples)%n",
                name, h.getValueAtPercentile(50) / 1e3, h.getValueAtPercentile(99) / 1e3,
                h.getValueAtPercentile(99.9) / 1e3, h.getValueAtPercentile(99.99) / 1e3, h.getMaxValue() / 1e3,
                h.getTotalCount());
    }

    private static String collectors() {
        List<String> names = new ArrayList<>();
        for (GarbageCollectorMXBean b : ManagementFactory.getGarbageCollectorMXBeans()) {
            names.add(b.getName());
        }
        return String.join(" + ", names);
    }

    /** Six joints of our own bench arm on the simulated plant, at {@code rate} Hz. */
    static String config(Path model, int rate, Path telemetry) throws IOException {
        String joints = "";
        String[] names = {"base", "shoulder", "elbow", "wrist_1", "wrist_2", "wrist_3"};
        for (String n : names) {
            joints += "    - {name: " + n + ", position: {min: -2.9, max: 2.9, margin: 0.05}, velocity: 1.5,"
                    + " acceleration: 6.0, jerk: 60.0}\n";
        }
        int every = Math.max(1, rate / 20);
        return "robot:\n  name: soak-arm-six\n  joints:\n" + joints
                + "timing:\n  control_period: " + (1.0 / rate) + "\n  policy_step: 0.02\n"
                + "  query: {schedule: fixed, every_ticks: " + every + "}\n"
                + "policy:\n  model: " + model.toAbsolutePath() + "\n  observation_size: 12\n"
                + "  inputs:\n    obs: {source: observation}\n    step: {source: step}\n  output: {layout: 1xKxD}\n"
                + "blending:\n  method: ensemble\n  interpolation: cubic_hermite\n"
                + "  ensemble: {weight_rate: 0.1, favour: oldest}\n"
                + "watchdog:\n  observation_age_max: 0.02\n  plan_remaining_min: 0.04\n"
                + "  inference_latency_max: 0.03\n  overruns_max: 10\n"
                // a shared virtual machine holds a thread off its core for a few milliseconds now and
                // then (the report's period error shows how often); a tuned robot computer keeps the
                // default of 3 periods
                + "  stall_periods: 20\n"
                + "arming:\n  pose_distance_max: 0.5\n  ramp_time: 5\n"
                + "source:\n  kind: sim\n"
                + "port:\n  kind: sim\n  options: {velocities: true, frequency: 8, damping: 0.9}\n"
                + "telemetry:\n  file: " + telemetry.toAbsolutePath() + "\n";
    }
}
