package dev.weft.runtime.dryrun;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.Weft;
import dev.weft.runtime.loop.LoopClock;
import dev.weft.runtime.loop.ManualClock;
import dev.weft.runtime.policy.LatencyProbe;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.port.CsvPort;
import dev.weft.runtime.recording.RecordedFrames;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.source.ObservationSource;
import dev.weft.runtime.source.SimulatedPlant;
import dev.weft.runtime.source.SimulatedSource;
import dev.weft.runtime.telemetry.RowCounts;
import dev.weft.safety.Cause;
import dev.weft.safety.JerkLimiter;
import dev.weft.safety.JointLimits;
import dev.weft.safety.SupervisorState;
import java.io.BufferedReader;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * A dry run: a recorded trajectory through the same control loop, blender, limiter, watchdog and
 * port path as a live run, with the commands recorded to a file instead of sent to a motor.
 *
 * <p>On virtual time (the default) the loop runs as fast as the machine allows and inference
 * latency is modelled as a whole number of ticks, so the same inputs give the same command file
 * and the same summary, timing figures aside. The run arms by itself at the first tick with a
 * plan, as a live run with {@code --arm} would, and the figures are computed afterwards from the
 * files it wrote, so the re-check of the bounds is independent of the loop.
 *
 * <p>Threading: one caller thread; the run's own threads are started and joined inside.
 */
public final class DryRun {

    /** Relative tolerance of the independent bound re-check (finite differences of the file's commands). */
    public static final double BOUND_TOLERANCE = 1e-9;

    /** Inference calls timed before the run to model its latency. */
    public static final int LATENCY_RUNS = 300;

    /**
     * How to run.
     *
     * @param reportDir the folder for commands.csv, telemetry.csv and summary.json (created)
     * @param name the run's name for the summary and report
     * @param closedLoop observations from the simulated plant instead of the recording
     * @param realtime paced at the control period on the real clock (measures real jitter; not deterministic)
     * @param latencyTicks modelled inference latency in ticks; -1 for {@code timing.dry_run_latency}
     *     when configured, else the measured p99 rounded up
     * @param gates what the run is judged by
     * @param progress where to write a progress line (a terminal), or null
     */
    public record Options(Path reportDir, String name, boolean closedLoop, boolean realtime, long latencyTicks,
                          GateThresholds gates, PrintWriter progress) {
    }

    /** The outcome: figures, series and the files written. */
    public record Result(DryRunSummary summary, DryRunTrace trace, Path commands, Path telemetry, Path summaryFile) {
    }

    private DryRun() {
    }

    /**
     * Runs the recording through the configured policy and loop.
     *
     * @throws BadInputException when the recording does not fit the policy or the robot
     * @throws IOException when a file cannot be written
     */
    public static Result run(ConfiguredRun run, Recording recording, Options o) throws BadInputException, IOException {
        return run(run, recording, List.of(), o);
    }

    /**
     * As {@link #run(ConfiguredRun, Recording, Options)}, with the recording's cameras replayed at
     * their own times: each configured camera is watched (its frame age, the frame-stale condition)
     * and a policy's camera inputs read the newest recorded frame at or before each query's
     * observation time.
     *
     * @param cameras the recording's cameras ({@code Recordings.readCameras}); every camera the
     *     configuration lists must be among them
     */
    public static Result run(ConfiguredRun run, Recording recording, List<RecordedFrames> cameras, Options o)
            throws BadInputException, IOException {
        checkCameras(run, recording, cameras);
        JointLimits limits = run.limits();
        int joints = limits.count();
        double period = run.config().timing().controlPeriod();
        long periodNanos = Math.round(period * 1e9);
        List<BadInputException.Problem> problems = new ArrayList<>();
        if (recording.actionSize() != joints) {
            problems.add(new BadInputException.Problem(recording.source(), "the recording has " + recording.actionSize()
                    + " action columns, robot.joints lists " + joints + " joints"));
        }
        if (recording.observationSize() != run.config().policy().observationSize()) {
            problems.add(new BadInputException.Problem(recording.source(), "the recording has "
                    + recording.observationSize() + " observation columns, policy.observation_size is "
                    + run.config().policy().observationSize()));
        }
        if (!problems.isEmpty()) {
            throw new BadInputException(problems);
        }
        // the latency is measured on an instance of its own: probing the run's policy would leave
        // the probe's observations in its history and draw from its noise generator
        long[] latencies;
        try (OnnxPolicy probe = run.loadPolicy()) {
            latencies = LatencyProbe.samples(probe, LATENCY_RUNS);
        }
        OnnxPolicy policy = run.loadPolicy();
        double[] latencyMs = new double[latencies.length];
        for (int i = 0; i < latencies.length; i++) {
            latencyMs[i] = latencies[i] / 1e6;
        }
        DryRunSummary.Percentiles inferenceMs = percentiles(latencyMs);
        long configured = run.config().timing().dryRunLatencyTicks();
        long latencyTicks = o.latencyTicks() >= 0 ? o.latencyTicks() : configured >= 0 ? configured
                : Math.max(1, (long) Math.ceil(inferenceMs.p99() / 1e3 / period - 1e-9));

        Files.createDirectories(o.reportDir());
        Path commands = o.reportDir().resolve("commands.csv");
        Path telemetry = o.reportDir().resolve("telemetry.csv");
        List<String> names = new ArrayList<>();
        for (int i = 0; i < joints; i++) {
            names.add(limits.name(i));
        }
        double span = recording.time(recording.length() - 1) - recording.time(0);
        long ticks = (long) Math.floor(span / period + 1e-9) + 1;

        LoopClock clock = o.realtime() ? LoopClock.system() : new ManualClock(1_000_000_000L);
        long start = clock.nanoTime();
        ObservationSource source;
        double[] first = new double[recording.observationSize()];
        recording.observation(0, first);
        if (o.closedLoop()) {
            boolean velocities = recording.observationSize() == 2 * joints;
            if (!velocities && recording.observationSize() != joints) {
                policy.close();
                throw new BadInputException(recording.source(), "a closed-loop dry run observes the simulated plant's"
                        + " positions (and velocities): the policy must read " + joints + " or " + 2 * joints
                        + " values, it reads " + recording.observationSize());
            }
            double[] pose = Arrays.copyOf(first, joints);
            source = new SimulatedSource(new SimulatedPlant(pose, 8.0, 0.9, period, velocities, 0.0, 1), clock, true);
        } else {
            source = new RecordingSource(recording, clock, start);
        }
        CsvPort port = new CsvPort(commands, names, CsvPort.DEFAULT_RING, !o.realtime());
        List<long[]> stopEvents = new ArrayList<>();
        Weft.Builder b = run.builderWithoutSource(policy, port)
                .source(source)
                .telemetry(telemetry)
                // the report folder's files are the dry run's own: replaced, each moved into place at the end
                .telemetryOverwrite(true)
                .telemetryDrainTimeout(run.config().telemetry().drainTimeout())
                .armWhenPlanned(true)
                .maxTicks(ticks)
                .firstObservationTimeout(5)
                .listener((tick, time, from, to, cause, message) -> {
                    synchronized (stopEvents) {
                        if (to == SupervisorState.STOPPING && from != SupervisorState.STOPPING) {
                            stopEvents.add(new long[] {tick, time, cause});
                        }
                    }
                });
        if (!o.realtime()) {
            b.virtualTime((ManualClock) clock, latencyTicks);
        }
        List<RecordedCamera> replayed = new ArrayList<>();
        for (dev.weft.runtime.config.CameraConfig c : run.config().cameras()) {
            // checkCameras made sure each one is there
            RecordedCamera rc = new RecordedCamera(framesOf(c.name(), cameras), clock, start, recording.time(0));
            replayed.add(rc);
            b.camera(c.name(), rc, c.ageMax());
        }
        Weft weft = b.build();
        long wallStart = System.nanoTime();
        try {
            weft.start();
            while (weft.running()) {
                if (o.progress() != null) {
                    long done = weft.status().ticks();
                    double rate = done / Math.max(1e-9, (System.nanoTime() - wallStart) / 1e9);
                    o.progress().printf(Locale.ROOT, "\rdry run %s: %3d%% (%d of %d ticks, %.0f ticks/s)", o.name(),
                            100 * done / Math.max(1, ticks), done, ticks, rate);
                    o.progress().flush();
                }
                try {
                    Thread.sleep(o.progress() != null ? 200 : 5);
                } catch (InterruptedException e) {
                    Thread.currentThread().interrupt();
                    break;
                }
            }
        } finally {
            weft.close();
            if (o.progress() != null) {
                o.progress().print("\r");
                o.progress().flush();
            }
        }
        if (weft.loop().failure() != null) {
            throw new IOException("the dry run's loop ended on an error: " + weft.loop().failure(), weft.loop().failure());
        }
        if (weft.telemetryFailure() != null) {
            throw new IOException("the dry run's telemetry failed: " + weft.telemetryFailure() + " ("
                    + weft.telemetryCounts() + ")");
        }
        RowCounts rows = weft.telemetryCounts();
        Files.deleteIfExists(o.reportDir().resolve("summary.json"));
        Series s = Series.read(telemetry, joints);
        long commandRows = countRows(commands);
        long violations = recheckBounds(commands, limits, period);
        long staleDropped = weft.status().staleSteps();
        long deferred = weft.status().deferredQueries();
        List<DryRunSummary.Stop> stops = new ArrayList<>();
        synchronized (stopEvents) {
            for (long[] e : stopEvents) {
                stops.add(new DryRunSummary.Stop(e[0], e[1] / 1e9, (int) e[2], Cause.message((int) e[2])));
            }
        }
        List<DryRunTrace.FrameSnapshot> snapshots = snapshots(replayed, start, s.time);
        return finish(run, recording, o, s, commandRows, violations, staleDropped, deferred, stops, inferenceMs, latencyMs,
                latencyTicks, weft.loop().autoArmResult(), commands, telemetry, rows, snapshots);
    }

    /** Camera frames shown in the report, per camera: at this many ticks, spread over the run. */
    static final int SNAPSHOTS = 4;
    /** Frames wider than this are shown shrunk (every n-th pixel) in the report. */
    static final int SNAPSHOT_WIDTH_MAX = 160;

    /**
     * Each replayed camera's frame at {@link #SNAPSHOTS} ticks spread over the ticks run (at 1/8,
     * 3/8, 5/8, 7/8): the newest frame at or before each tick, as a query there would read it.
     */
    private static List<DryRunTrace.FrameSnapshot> snapshots(List<RecordedCamera> cameras, long start,
                                                             double[] tickTimes) {
        List<DryRunTrace.FrameSnapshot> out = new ArrayList<>();
        if (tickTimes.length == 0) {
            return out;
        }
        for (RecordedCamera cam : cameras) {
            RecordedFrames f = cam.frames();
            int step = Math.max(1, (f.width() + SNAPSHOT_WIDTH_MAX - 1) / SNAPSHOT_WIDTH_MAX);
            int h = (f.height() + step - 1) / step;
            int w = (f.width() + step - 1) / step;
            java.nio.ByteBuffer frame = java.nio.ByteBuffer.allocate(f.frameBytes());
            for (int k = 0; k < SNAPSHOTS; k++) {
                int tick = (int) Math.min(tickTimes.length - 1, (long) tickTimes.length * (2 * k + 1) / (2 * SNAPSHOTS));
                double tickSeconds = tickTimes[tick];
                long at = start + Math.round(tickSeconds * 1e9);
                int i = cam.frameAtOrBefore(at);
                byte[] px = new byte[h * w * f.channels()];
                double frameSeconds = Double.NaN;
                if (i >= 0) {
                    f.copyFrame(i, frame, 0);
                    frameSeconds = (cam.stamp(i) - start) / 1e9;
                    boolean bgr = f.pixelFormat() == dev.weft.runtime.recording.PixelFormat.BGR8;
                    int n = 0;
                    for (int y = 0; y < f.height(); y += step) {
                        for (int x = 0; x < f.width(); x += step) {
                            int base = (y * f.width() + x) * f.channels();
                            for (int ch = 0; ch < f.channels(); ch++) {
                                px[n++] = frame.get(base + (bgr ? 2 - ch : ch));
                            }
                        }
                    }
                }
                out.add(new DryRunTrace.FrameSnapshot(f.camera(), tickSeconds, frameSeconds, h, w, f.channels(), px));
            }
        }
        return out;
    }

    /** The recorded frames of camera {@code name}, or null. */
    private static RecordedFrames framesOf(String name, List<RecordedFrames> cameras) {
        for (RecordedFrames f : cameras) {
            if (f.camera().equals(name)) {
                return f;
            }
        }
        return null;
    }

    /** Every configured camera is in the recording, with the configured frame size and pixel format. */
    private static void checkCameras(ConfiguredRun run, Recording recording, List<RecordedFrames> cameras)
            throws BadInputException {
        List<BadInputException.Problem> problems = new ArrayList<>();
        for (dev.weft.runtime.config.CameraConfig c : run.config().cameras()) {
            RecordedFrames found = framesOf(c.name(), cameras);
            if (found == null) {
                problems.add(new BadInputException.Problem(recording.source(), "camera " + c.name()
                        + " (cameras." + c.name() + ") has no frames here: list its datasets under recording.cameras."
                        + c.name()));
            } else if (found.height() != c.height() || found.width() != c.width()
                    || found.pixelFormat() != c.pixelFormat()) {
                problems.add(new BadInputException.Problem(found.source(), "frames are " + found.height() + " × "
                        + found.width() + " " + found.pixelFormat().label() + ", cameras." + c.name() + " says "
                        + c.height() + " × " + c.width() + " " + c.pixelFormat().label()));
            }
        }
        if (!problems.isEmpty()) {
            throw new BadInputException(problems);
        }
    }

    private static Result finish(ConfiguredRun run, Recording recording, Options o, Series s, long commandRows,
                                 long violations, long staleDropped, long deferred, List<DryRunSummary.Stop> stops,
                                 DryRunSummary.Percentiles inferenceMs, double[] latencyMs, long latencyTicks,
                                 int armOutcome, Path commands, Path telemetry, RowCounts rows,
                                 List<DryRunTrace.FrameSnapshot> snapshots) throws IOException {
        JointLimits limits = run.limits();
        int joints = limits.count();
        int n = s.ticks;
        double[][] recorded = new double[joints][n];
        double[] action = new double[joints];
        double first = recording.time(0);
        for (int k = 0; k < n; k++) {
            recordedActionAt(recording, first + s.time[k], action);
            for (int j = 0; j < joints; j++) {
                recorded[j][k] = action[j];
            }
        }
        double[] rms = new double[joints];
        double[] max = new double[joints];
        long armedTicks = 0;
        for (int k = 0; k < n; k++) {
            if (s.state[k] != SupervisorState.ARMED.ordinal()) {
                continue;
            }
            armedTicks++;
            for (int j = 0; j < joints; j++) {
                double e = s.command[j][k] - recorded[j][k];
                if (Double.isFinite(e)) {
                    rms[j] += e * e;
                    max[j] = Math.max(max[j], Math.abs(e));
                }
            }
        }
        for (int j = 0; j < joints; j++) {
            rms[j] = armedTicks == 0 ? Double.NaN : Math.sqrt(rms[j] / armedTicks);
            if (armedTicks == 0) {
                max[j] = Double.NaN;
            }
        }
        long pos = 0;
        long vel = 0;
        long acc = 0;
        long jerk = 0;
        long starved = 0;
        long events = 0;
        int firstPlanned = -1;
        for (int k = 0; k < n; k++) {
            int f = s.limiter[k];
            pos += (f & JerkLimiter.POSITION) != 0 ? 1 : 0;
            vel += (f & JerkLimiter.VELOCITY) != 0 ? 1 : 0;
            acc += (f & JerkLimiter.ACCELERATION) != 0 ? 1 : 0;
            jerk += (f & JerkLimiter.JERK) != 0 ? 1 : 0;
            if (firstPlanned < 0 && s.plan[k] > 0) {
                firstPlanned = k;
            }
            if (firstPlanned >= 0) {
                if (s.plan[k] == 0) {
                    starved++;
                }
                int rising = s.watchdog[k] & ~(k > firstPlanned ? s.watchdog[k - 1] : 0);
                events += Integer.bitCount(rising);
            }
        }
        DryRunSummary.Percentiles periodErrorMs = o.realtime() ? percentiles(s.periodErrorMs) : null;
        List<String> names = new ArrayList<>();
        for (int j = 0; j < joints; j++) {
            names.add(limits.name(j));
        }
        List<DryRunSummary.Gate> gates = gates(o.gates(), names, rms, max, stops.size(), starved, inferenceMs,
                staleDropped, violations, armOutcome == 0);
        boolean passed = gates.stream().allMatch(DryRunSummary.Gate::passed);
        DryRunSummary summary = new DryRunSummary(o.name(), recording.source(), names, o.closedLoop(), o.realtime(),
                run.config().timing().controlPeriod(), o.realtime() ? -1 : latencyTicks, n, commandRows, rows.written(),
                rows.handed(), rows.lost(), violations,
                rms, max, new DryRunSummary.LimitCounts(pos, vel, acc, jerk), staleDropped, deferred, starved, events,
                List.copyOf(stops), inferenceMs, periodErrorMs, passed, gates);
        List<DryRunTrace.JointTrace> traces = new ArrayList<>();
        for (int j = 0; j < joints; j++) {
            traces.add(new DryRunTrace.JointTrace(names.get(j), limits.operatingMin(j), limits.operatingMax(j),
                    recorded[j], s.target[j], s.command[j], s.jointFlags[j]));
        }
        DryRunTrace trace = new DryRunTrace(s.time, traces, s.state, s.watchdog, latencyMs,
                o.realtime() ? s.periodErrorMs : null, snapshots);
        Path summaryFile = o.reportDir().resolve("summary.json");
        writeSummary(summary, summaryFile);
        return new Result(summary, trace, commands, telemetry, summaryFile);
    }

    /** The recorded action at time {@code t}, linearly interpolated between samples; NaN past the ends. */
    static void recordedActionAt(Recording r, double t, double[] out) {
        int i = r.sampleAtOrBefore(t + 1e-12);
        if (i < 0) {
            Arrays.fill(out, Double.NaN);
            return;
        }
        r.action(i, out);
        if (i + 1 < r.length()) {
            double t0 = r.time(i);
            double t1 = r.time(i + 1);
            double w = (t - t0) / (t1 - t0);
            if (w > 0) {
                double[] next = new double[out.length];
                r.action(i + 1, next);
                for (int j = 0; j < out.length; j++) {
                    out[j] += w * (next[j] - out[j]);
                }
            }
        } else if (t > r.time(i) + 1e-9) {
            Arrays.fill(out, Double.NaN);
        }
    }

    static List<DryRunSummary.Gate> gates(GateThresholds g, List<String> names, double[] rms, double[] max, long stops,
                                          long starved, DryRunSummary.Percentiles inference, long stale,
                                          long violations, boolean armed) {
        List<DryRunSummary.Gate> out = new ArrayList<>();
        out.add(new DryRunSummary.Gate("bound_violations", 0, violations, violations == 0));
        out.add(new DryRunSummary.Gate("armed", 1, armed ? 1 : 0, armed));
        if (g.rmsErrorMax() != null) {
            for (int j = 0; j < names.size(); j++) {
                double t = g.rmsErrorMax()[Math.min(j, g.rmsErrorMax().length - 1)];
                out.add(new DryRunSummary.Gate("rms_error." + names.get(j), t, rms[j], rms[j] <= t));
            }
        }
        if (g.maxErrorMax() != null) {
            for (int j = 0; j < names.size(); j++) {
                double t = g.maxErrorMax()[Math.min(j, g.maxErrorMax().length - 1)];
                out.add(new DryRunSummary.Gate("max_error." + names.get(j), t, max[j], max[j] <= t));
            }
        }
        if (g.stopsMax() >= 0) {
            out.add(new DryRunSummary.Gate("stops_max", g.stopsMax(), stops, stops <= g.stopsMax()));
        }
        if (g.stopsMin() >= 0) {
            out.add(new DryRunSummary.Gate("stops_min", g.stopsMin(), stops, stops >= g.stopsMin()));
        }
        if (g.starvedTicksMax() >= 0) {
            out.add(new DryRunSummary.Gate("starved_ticks_max", g.starvedTicksMax(), starved,
                    starved <= g.starvedTicksMax()));
        }
        if (!Double.isNaN(g.inferenceP99MaxSeconds())) {
            double t = g.inferenceP99MaxSeconds() * 1e3;
            out.add(new DryRunSummary.Gate("inference_p99_max_ms", t, inference.p99(), inference.p99() <= t));
        }
        if (g.staleDroppedMax() >= 0) {
            out.add(new DryRunSummary.Gate("stale_dropped_max", g.staleDroppedMax(), stale, stale <= g.staleDroppedMax()));
        }
        return out;
    }

    /**
     * Counts the ticks where the command file breaks a bound: position outside the operating
     * range, or a finite-difference velocity, acceleration or jerk at the control period beyond
     * its bound, with {@link #BOUND_TOLERANCE} relative slack. The commands are taken to start
     * from rest at the first command, as the limiter does.
     */
    static long recheckBounds(Path commands, JointLimits limits, double dt) throws IOException {
        int joints = limits.count();
        long violations = 0;
        double[][] q = new double[4][joints];
        try (BufferedReader in = Files.newBufferedReader(commands)) {
            String header = in.readLine();
            if (header == null) {
                return 0;
            }
            int firstPosition = Arrays.asList(header.split(",")).indexOf("position." + limits.name(0));
            String line;
            long row = 0;
            while ((line = in.readLine()) != null) {
                String[] f = line.split(",");
                double[] now = q[3];
                q[3] = q[0];
                q[0] = q[1];
                q[1] = q[2];
                q[2] = now;
                for (int j = 0; j < joints; j++) {
                    now[j] = Double.parseDouble(f[firstPosition + j]);
                }
                if (row == 0) {
                    // the limiter starts at rest at its first command: the samples before it equal it
                    for (int h = 0; h < 4; h++) {
                        if (q[h] != now) {
                            System.arraycopy(now, 0, q[h], 0, joints);
                        }
                    }
                }
                // q[2] = q[n], q[1] = q[n-1], q[0] = q[n-2], q[3] = q[n-3]
                boolean bad = false;
                for (int j = 0; j < joints; j++) {
                    double v = (q[2][j] - q[1][j]) / dt;
                    double vPrev = (q[1][j] - q[0][j]) / dt;
                    double vPrev2 = (q[0][j] - q[3][j]) / dt;
                    double a = (v - vPrev) / dt;
                    double aPrev = (vPrev - vPrev2) / dt;
                    double jk = (a - aPrev) / dt;
                    bad |= q[2][j] < limits.operatingMin(j) - BOUND_TOLERANCE * Math.max(1, Math.abs(limits.operatingMin(j)))
                            || q[2][j] > limits.operatingMax(j) + BOUND_TOLERANCE * Math.max(1, Math.abs(limits.operatingMax(j)))
                            || Math.abs(v) > limits.velocity(j) * (1 + BOUND_TOLERANCE)
                            || Math.abs(a) > limits.acceleration(j) * (1 + BOUND_TOLERANCE)
                            || Math.abs(jk) > limits.jerk(j) * (1 + BOUND_TOLERANCE)
                            || !Double.isFinite(q[2][j]);
                }
                if (bad) {
                    violations++;
                }
                row++;
            }
        }
        return violations;
    }

    private static long countRows(Path file) throws IOException {
        try (var lines = Files.lines(file)) {
            return Math.max(0, lines.count() - 1);
        }
    }

    static DryRunSummary.Percentiles percentiles(double[] values) {
        if (values.length == 0) {
            return new DryRunSummary.Percentiles(Double.NaN, Double.NaN, Double.NaN);
        }
        double[] v = values.clone();
        Arrays.sort(v);
        return new DryRunSummary.Percentiles(rank(v, 0.50), rank(v, 0.99), v[v.length - 1]);
    }

    /** Nearest-rank percentile of sorted values. */
    private static double rank(double[] sorted, double p) {
        int i = (int) Math.ceil(p * sorted.length) - 1;
        return sorted[Math.max(0, Math.min(sorted.length - 1, i))];
    }

    /** Writes the summary as JSON with the keys docs/dry-run.md lists; NaN becomes null. */
    static void writeSummary(DryRunSummary s, Path file) throws IOException {
        Map<String, Object> m = new LinkedHashMap<>();
        m.put("name", s.name());
        m.put("recording", s.recording());
        m.put("joints", s.joints());
        m.put("mode", s.closedLoop() ? "closed_loop" : "open_loop");
        m.put("realtime", s.realtime());
        m.put("control_period_s", s.controlPeriod());
        m.put("latency_ticks", s.latencyTicks());
        m.put("ticks", s.ticks());
        m.put("commands", s.commands());
        m.put("telemetry_rows", s.telemetryRows());
        m.put("telemetry_rows_handed", s.telemetryHanded());
        m.put("telemetry_rows_lost", s.telemetryLost());
        m.put("bound_violations", s.boundViolations());
        m.put("rms_error", finiteOrNull(s.rmsError()));
        m.put("max_error", finiteOrNull(s.maxError()));
        Map<String, Object> limit = new LinkedHashMap<>();
        limit.put("position", s.limitActive().position());
        limit.put("velocity", s.limitActive().velocity());
        limit.put("acceleration", s.limitActive().acceleration());
        limit.put("jerk", s.limitActive().jerk());
        m.put("limit_active", limit);
        m.put("stale_dropped", s.staleDropped());
        m.put("deferred_queries", s.deferredQueries());
        m.put("starved_ticks", s.starvedTicks());
        m.put("watchdog_events", s.watchdogEvents());
        List<Object> stops = new ArrayList<>();
        for (DryRunSummary.Stop st : s.stops()) {
            Map<String, Object> e = new LinkedHashMap<>();
            e.put("tick", st.tick());
            e.put("time_s", st.timeSeconds());
            e.put("cause_code", st.causeCode());
            e.put("cause", st.cause());
            stops.add(e);
        }
        m.put("stops", stops);
        m.put("inference_ms", percentileMap(s.inferenceMs()));
        if (s.periodErrorMs() != null) {
            m.put("period_error_ms", percentileMap(s.periodErrorMs()));
        }
        m.put("verdict", s.passed() ? "pass" : "fail");
        List<Object> gates = new ArrayList<>();
        for (DryRunSummary.Gate g : s.gates()) {
            Map<String, Object> e = new LinkedHashMap<>();
            e.put("name", g.name());
            e.put("threshold", finiteOrNull(g.threshold()));
            e.put("value", finiteOrNull(g.value()));
            e.put("result", g.passed() ? "pass" : "fail");
            gates.add(e);
        }
        m.put("gates", gates);
        ObjectMapper mapper = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);
        Files.writeString(file, mapper.writeValueAsString(m) + "\n");
    }

    private static Map<String, Object> percentileMap(DryRunSummary.Percentiles p) {
        Map<String, Object> e = new LinkedHashMap<>();
        e.put("p50", finiteOrNull(p.p50()));
        e.put("p99", finiteOrNull(p.p99()));
        e.put("max", finiteOrNull(p.max()));
        return e;
    }

    private static Object finiteOrNull(double v) {
        return Double.isFinite(v) ? v : null;
    }

    private static List<Object> finiteOrNull(double[] v) {
        List<Object> out = new ArrayList<>();
        for (double x : v) {
            out.add(finiteOrNull(x));
        }
        return out;
    }

    /** The telemetry file read back, column by column. */
    static final class Series {
        int ticks;
        double[] time;
        double[] periodErrorMs;
        byte[] state;
        int[] watchdog;
        int[] limiter;
        long[] plan;
        double[][] target;
        double[][] command;
        int[][] jointFlags;

        static Series read(Path telemetry, int joints) throws IOException {
            List<String> lines = Files.readAllLines(telemetry);
            Series s = new Series();
            int n = lines.size() - 1;
            s.ticks = n;
            s.time = new double[n];
            s.periodErrorMs = new double[n];
            s.state = new byte[n];
            s.watchdog = new int[n];
            s.limiter = new int[n];
            s.plan = new long[n];
            s.target = new double[joints][n];
            s.command = new double[joints][n];
            s.jointFlags = new int[joints][n];
            for (int k = 0; k < n; k++) {
                String[] f = lines.get(k + 1).split(",");
                s.time[k] = Double.parseDouble(f[1]);
                s.periodErrorMs[k] = Double.parseDouble(f[2]) / 1e3;
                s.state[k] = (byte) SupervisorState.valueOf(f[4].toUpperCase(Locale.ROOT)).ordinal();
                s.watchdog[k] = Integer.parseInt(f[5]);
                s.limiter[k] = Integer.parseInt(f[6]);
                s.plan[k] = Long.parseLong(f[7]);
                for (int j = 0; j < joints; j++) {
                    s.target[j][k] = Double.parseDouble(f[10 + j]);
                    s.command[j][k] = Double.parseDouble(f[10 + joints + j]);
                    s.jointFlags[j][k] = Integer.parseInt(f[10 + 2 * joints + j]);
                }
            }
            return s;
        }
    }

    /** What the dry run does with the configured port, in one sentence for the user. */
    public static String portNote(ConfiguredRun run) throws BadInputException {
        String kind = run.config().port().kind();
        return run.livePort()
                ? "the configured port '" + kind + "' is live: the dry run sends nothing to it and records the"
                        + " commands to commands.csv instead"
                : "the configured port '" + kind + "' is not used: the dry run records the commands to commands.csv";
    }
}
