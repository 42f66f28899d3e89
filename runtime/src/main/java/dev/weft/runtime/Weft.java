package dev.weft.runtime;

import dev.weft.filters.ChunkBlender;
import dev.weft.filters.Interpolation;
import dev.weft.filters.Smoother;
import dev.weft.filters.TemporalEnsembleBlender;
import dev.weft.runtime.config.BlendingConfig;
import dev.weft.runtime.loop.ControlLoop;
import dev.weft.runtime.loop.Inference;
import dev.weft.runtime.loop.InferenceWorker;
import dev.weft.runtime.loop.LoopClock;
import dev.weft.runtime.loop.LoopSettings;
import dev.weft.runtime.loop.LoopStatus;
import dev.weft.runtime.loop.ManualClock;
import dev.weft.runtime.loop.ModelledLatencyInference;
import dev.weft.runtime.loop.WaitStrategy;
import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.source.EmbeddedSource;
import dev.weft.runtime.source.ObservationSource;
import dev.weft.runtime.telemetry.CsvRecorder;
import dev.weft.runtime.telemetry.TelemetryFormat;
import dev.weft.runtime.telemetry.RowCounts;
import dev.weft.runtime.telemetry.TargetFile;
import dev.weft.runtime.telemetry.TelemetryRow;
import dev.weft.safety.JointLimits;
import dev.weft.safety.StopCategory;
import dev.weft.safety.Supervisor;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.TransitionListener;
import dev.weft.safety.Watchdog;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;

/**
 * weft embedded in a robot team's own controller process: a policy, a command port, joint limits
 * and timing in; a fixed-rate control loop out.
 *
 * <pre>{@code
 * try (Weft weft = Weft.builder(limits, 0.002)
 *         .policy(policy)              // an OnnxPolicy or a Java-coded Policy
 *         .port(myDriverPort)          // a CommandPort
 *         .build()) {
 *     weft.start();                    // disarmed: hold commands only
 *     driverThread: weft.offer(System.nanoTime(), jointState);
 *     weft.arm();                      // soft start from the measured pose toward the plan
 *     ...
 *     weft.disarm();                   // controlled stop
 * }
 * }</pre>
 *
 * <p>Without an explicit {@link #arm()} nothing but hold commands leave the loop. A watchdog
 * condition stops the robot and latches a fault until {@link #reset()}.
 *
 * <p>Threading: every method may be called from any thread except the loop's; {@link #offer} is
 * meant for the application's driver thread.
 */
public final class Weft implements AutoCloseable {

    private static final long COMMAND_TIMEOUT_NANOS = TimeUnit.SECONDS.toNanos(2);

    private final ControlLoop loop;
    private final CommandPort port;
    private final ObservationSource source;
    private final EmbeddedSource embedded;
    private final Inference inference;
    private final CsvRecorder<TelemetryRow> telemetry;
    private final EventRelay relay;
    private final Policy policy;
    private final boolean closePolicy;
    /** The in-process frame rings of embedded cameras, by name. */
    private final java.util.Map<String, dev.weft.runtime.source.FrameRing> rings;
    /** The watched cameras' readers that hold a resource (a mapped frame file), closed with the run. */
    private final List<AutoCloseable> cameraReaders;
    private boolean started;
    private boolean closed;

    private final LoopClock builderClock;

    private Weft(Builder b, ControlLoop loop, ObservationSource source, EmbeddedSource embedded, Inference inference,
                 CsvRecorder<TelemetryRow> telemetry, EventRelay relay) {
        this.loop = loop;
        this.port = b.port;
        this.source = source;
        this.embedded = embedded;
        this.inference = inference;
        this.telemetry = telemetry;
        this.relay = relay;
        this.policy = b.policy;
        this.closePolicy = b.closePolicy;
        this.builderClock = b.clock;
        this.rings = java.util.Map.copyOf(b.rings);
        this.cameraReaders = new ArrayList<>();
        for (ControlLoop.Camera c : b.cameras) {
            if (c.reader() instanceof AutoCloseable a) {
                cameraReaders.add(a);
            }
        }
    }

    /**
     * Starts a builder.
     *
     * @param limits joint limits, in the order of the policy's action values
     * @param controlPeriodSeconds the control period Δc
     */
    public static Builder builder(JointLimits limits, double controlPeriodSeconds) {
        return new Builder(limits, controlPeriodSeconds);
    }

    /**
     * Opens the port, starts the source and the inference worker, waits for the first observation
     * and starts the loop, disarmed. On the wall clock it first asks for a full collection, so
     * that the set-up's garbage is not collected while the loop runs.
     *
     * @throws IOException when the port or source cannot be opened; nothing is left running, and
     *     no telemetry file is left behind
     * @throws IllegalStateException when no observation arrives in time
     */
    public synchronized void start() throws IOException {
        if (started) {
            throw new IllegalStateException("already started");
        }
        started = true;
        try {
            port.open(loop.supervisorJoints());
            source.start();
            if (inference instanceof InferenceWorker w) {
                w.start();
            }
            if (!(builderClock instanceof ManualClock)) {
                // collect the set-up's garbage (model loading, class loading: tens of MB) now, not
                // in a young collection that would stop the first seconds of the loop for ~10 ms
                System.gc();
            }
            loop.start("weft-loop");
        } catch (IOException | RuntimeException e) {
            if (telemetry != null) {
                // the run never ran: no telemetry file is left behind
                telemetry.discard();
            }
            close();
            throw e;
        }
    }

    /**
     * Offers an observation to the embedded source.
     *
     * @param timeNanos when it was measured, on {@link System#nanoTime}'s scale
     * @return false when refused (wrong length, non-finite value)
     * @throws IllegalStateException when the run reads another source
     */
    public boolean offer(long timeNanos, double[] values) {
        if (embedded == null) {
            throw new IllegalStateException("this run reads " + source.describe() + ", not offered observations");
        }
        return embedded.offer(timeNanos, values);
    }

    /**
     * The frame ring of an embedded camera, for the embedding program's camera thread to
     * {@linkplain dev.weft.runtime.source.FrameRing#offer offer} frames into (one writing thread;
     * copies into a preallocated slot, never blocks, allocates nothing).
     *
     * @throws IllegalArgumentException when the run has no embedded camera of that name
     */
    public dev.weft.runtime.source.FrameRing frameRing(String camera) {
        dev.weft.runtime.source.FrameRing r = rings.get(camera);
        if (r == null) {
            throw new IllegalArgumentException("the run has no embedded camera named " + camera + "; embedded cameras: "
                    + rings.keySet());
        }
        return r;
    }

    /**
     * Arms: soft start from the measured pose toward the plan.
     *
     * @return 0 when arming started, or the refusal's cause code ({@link #describe(int)} says why)
     */
    public int arm() {
        return loop.arm(COMMAND_TIMEOUT_NANOS);
    }

    /** Controlled stop to disarmed (not a fault). */
    public int disarm() {
        return loop.disarm(COMMAND_TIMEOUT_NANOS);
    }

    /** Clears a latched fault once its condition has cleared; returns 0 or the refusal's cause. */
    public int reset() {
        loop.releaseOperatorStop();
        return loop.reset(COMMAND_TIMEOUT_NANOS);
    }

    /** An operator stop: controlled stop, latched as a fault until {@link #reset()}. */
    public void operatorStop() {
        loop.operatorStop();
    }

    /** The fixed message of a cause or refusal code. */
    public static String describe(int code) {
        if (code == ControlLoop.COMMAND_TIMED_OUT) {
            return "the loop did not take the command in time";
        }
        if (code == ControlLoop.NOT_RUNNING) {
            return "the loop is not running";
        }
        return dev.weft.safety.Cause.message(code);
    }

    /**
     * The detail of a watchdog code's latest occurrence (an exception's class and message, the
     * value out of range, where a stalled loop is), or null.
     */
    public String faultDetail(int code) {
        return loop.faultDetail(code);
    }

    /** Loop-stalled alarms raised so far. */
    public long stalls() {
        return loop.stalls();
    }

    /** The current state ({@link SupervisorState#STALLED} while the loop cannot complete a tick). */
    public SupervisorState state() {
        return loop.state();
    }

    /** A snapshot of the run's counters. */
    public LoopStatus status() {
        return loop.status();
    }

    /**
     * What became of the telemetry rows so far (final once {@link #close()} returned), or null when
     * the run records no telemetry.
     */
    public RowCounts telemetryCounts() {
        return telemetry == null ? null : telemetry.counts();
    }

    /** The telemetry recorder's first failure (the file and why), or null. */
    public String telemetryFailure() {
        return telemetry == null ? null : telemetry.failure();
    }

    /** The telemetry file (resolved), or null when the run records no telemetry. */
    public Path telemetryFile() {
        return telemetry == null ? null : telemetry.file();
    }

    /** The loop, for timing readouts ({@link ControlLoop#histograms}). */
    public ControlLoop loop() {
        return loop;
    }

    /** The port commands go to. */
    public CommandPort port() {
        return port;
    }

    /** True while the loop runs. */
    public boolean running() {
        return loop.running();
    }

    /**
     * Ends the run: a moving robot is brought to a controlled stop first, then the loop, the
     * worker, the source, the port and the telemetry file are closed. Closing the telemetry waits
     * at most its drain timeout for the writer; {@link #telemetryCounts()} and
     * {@link #telemetryFailure()} then say what was written and what was lost. Idempotent.
     */
    @Override
    public synchronized void close() {
        if (closed) {
            return;
        }
        closed = true;
        List<Throwable> errors = new ArrayList<>();
        run(errors, loop::close);
        run(errors, inference::close);
        run(errors, source::close);
        run(errors, port::close);
        if (telemetry != null) {
            // bounded by the drain timeout; what it could not write is counted, not thrown
            run(errors, telemetry::close);
        }
        if (relay != null) {
            run(errors, relay::close);
        }
        if (closePolicy) {
            run(errors, policy::close);
        }
        for (AutoCloseable a : cameraReaders) {
            run(errors, () -> {
                try {
                    a.close();
                } catch (Exception e) {
                    throw new IllegalStateException("closing a camera's frames: " + e.getMessage(), e);
                }
            });
        }
        if (!errors.isEmpty()) {
            RuntimeException e = new IllegalStateException("closing the run: " + errors.get(0).getMessage(), errors.get(0));
            for (int i = 1; i < errors.size(); i++) {
                e.addSuppressed(errors.get(i));
            }
            throw e;
        }
    }

    private static void run(List<Throwable> errors, Runnable r) {
        try {
            r.run();
        } catch (RuntimeException e) {
            errors.add(e);
        }
    }

    /** Builds a {@link Weft}; defaults follow the configuration file's. Not thread-safe. */
    public static final class Builder {
        private final JointLimits limits;
        private final double period;
        private Policy policy;
        private boolean closePolicy;
        private CommandPort port;
        private ObservationSource source;
        private double stepRatio = 1.0;
        private ChunkBlender blender;
        private Smoother smoother;
        private Watchdog watchdog;
        private StopCategory stopCategory = StopCategory.CATEGORY_2;
        private double armingOffset = 0.1;
        private double armingTimeout = 11.0;
        private double armingRamp = 1.0;
        private int queryEvery;
        private double spinWindow = 0.0002;
        private Path telemetryFile;
        private boolean telemetryOverwrite;
        private long telemetryDrainNanos = CsvRecorder.DEFAULT_DRAIN_TIMEOUT_NANOS;
        private WeftListener listener;
        private LoopClock clock = LoopClock.system();
        private WaitStrategy wait;
        private long modelledLatencyTicks = -1;
        private long maxTicks;
        private int[] positionIndex;
        private long firstObservationTimeout = TimeUnit.SECONDS.toNanos(5);
        private boolean armWhenPlanned;
        private long observationAheadMax = LoopSettings.DEFAULT_OBSERVATION_AHEAD_MAX_NANOS;
        private double planRangeSlack;
        private int stallPeriods = LoopSettings.DEFAULT_STALL_PERIODS;
        private final List<ControlLoop.Camera> cameras = new ArrayList<>();
        private final java.util.Map<String, dev.weft.runtime.source.FrameRing> rings = new java.util.LinkedHashMap<>();

        private Builder(JointLimits limits, double period) {
            if (limits == null) {
                throw new IllegalArgumentException("joint limits must be given");
            }
            if (!(period > 0) || !Double.isFinite(period)) {
                throw new IllegalArgumentException("control period must be finite and > 0 s, got " + period);
            }
            this.limits = limits;
            this.period = period;
        }

        /** The policy (required). {@code closeWithRun}: close it when the run closes. */
        public Builder policy(Policy p, boolean closeWithRun) {
            this.policy = p;
            this.closePolicy = closeWithRun;
            return this;
        }

        /** The policy (required); the caller closes it. */
        public Builder policy(Policy p) {
            return policy(p, false);
        }

        /** Where commands go (required). Opened by {@link Weft#start()}, closed by {@link Weft#close()}. */
        public Builder port(CommandPort p) {
            this.port = p;
            return this;
        }

        /** Where observations come from; default: observations offered with {@link Weft#offer}. */
        public Builder source(ObservationSource s) {
            this.source = s;
            return this;
        }

        /** For each joint, its position's index in the observation; default: the first D values. */
        public Builder positionIndex(int[] index) {
            this.positionIndex = index.clone();
            return this;
        }

        /** Δp / Δc; default 1. */
        public Builder policyStepRatio(double r) {
            this.stepRatio = r;
            return this;
        }

        /** The blender; default exponential temporal ensembling, oldest first, m = 0.01, linear. */
        public Builder blender(ChunkBlender b) {
            this.blender = b;
            return this;
        }

        /** An optional smoother after blending. */
        public Builder smoother(Smoother s) {
            this.smoother = s;
            return this;
        }

        /** The watchdog; default: the safety module's defaults. */
        public Builder watchdog(Watchdog w) {
            this.watchdog = w;
            return this;
        }

        public Builder stopCategory(StopCategory c) {
            this.stopCategory = c;
            return this;
        }

        /** Largest distance between the measured pose and the first planned action to arm; default 0.1. */
        public Builder armingOffset(double offset) {
            this.armingOffset = offset;
            return this;
        }

        /**
         * Seconds over which the soft start blends its target from the held pose to the plan,
         * under a quarter of each bound; default 1. 0 chases the plan directly.
         */
        public Builder armingRamp(double seconds) {
            this.armingRamp = seconds;
            return this;
        }

        /** Seconds the soft start may take before it is a fault; default 11. */
        public Builder armingTimeout(double seconds) {
            this.armingTimeout = seconds;
            return this;
        }

        /** An inference request every {@code n} ticks; 0 (default) whenever the worker is free. */
        public Builder queryEveryTicks(int n) {
            this.queryEvery = n;
            return this;
        }

        /** Seconds before each deadline the loop spins instead of parking; default 0.0002. */
        public Builder spinWindow(double seconds) {
            this.spinWindow = seconds;
            return this;
        }

        /**
         * Writes one telemetry row per tick to this CSV file: into {@code <file>.incomplete} during
         * the run, moved onto {@code file} when the run closes. An existing file is refused unless
         * {@link #telemetryOverwrite} allows replacing it.
         */
        public Builder telemetry(Path file) {
            this.telemetryFile = file;
            return this;
        }

        /** Whether an existing telemetry file may be replaced (when the run closes); default false. */
        public Builder telemetryOverwrite(boolean replace) {
            this.telemetryOverwrite = replace;
            return this;
        }

        /**
         * How long opening the telemetry file and closing the run wait for the recorder's writer,
         * seconds; rows it has not written by then are counted as lost. Default 2.
         */
        public Builder telemetryDrainTimeout(double seconds) {
            if (!(seconds > 0 && seconds < 1e6)) {
                throw new IllegalArgumentException("telemetry drain timeout must be > 0 s, got " + seconds);
            }
            this.telemetryDrainNanos = Math.round(seconds * 1e9);
            return this;
        }

        /**
         * Watches a camera whose frames another process writes into a shared-memory frame file (or
         * any frame ring): every tick the age of its latest frame is checked against
         * {@code ageMaxSeconds} (the frame-stale condition stops the robot; no frame yet counts as
         * stale, so arming waits for the camera) and recorded in telemetry as
         * {@code frame_age_ms.<name>}. The reader becomes the loop's own (closed with the run); a policy that reads this
         * camera ({@link Policy#cameras()}) is given a {@linkplain dev.weft.runtime.image.FrameSource#sibling()
         * sibling} of it, read on the inference thread.
         */
        public Builder camera(String name, dev.weft.runtime.image.FrameSource reader, double ageMaxSeconds) {
            if (!(ageMaxSeconds > 0 && ageMaxSeconds < Double.POSITIVE_INFINITY)) {
                throw new IllegalArgumentException("camera " + name + ": the age bound must be > 0 s, got " + ageMaxSeconds);
            }
            for (ControlLoop.Camera c : cameras) {
                if (c.name().equals(name)) {
                    throw new IllegalArgumentException("camera " + name + " is watched already");
                }
            }
            cameras.add(new ControlLoop.Camera(name, reader, Math.round(ageMaxSeconds * 1e9)));
            return this;
        }

        /** As {@link #camera(String, dev.weft.runtime.image.FrameSource, double)}, for frames offered in this process. */
        public Builder camera(String name, dev.weft.runtime.source.FrameRing ring, double ageMaxSeconds) {
            camera(name, ring.reader(), ageMaxSeconds);
            rings.put(name, ring);
            return this;
        }

        /** Hears every transition, on weft's event thread. */
        public Builder listener(WeftListener l) {
            this.listener = l;
            return this;
        }

        /**
         * Runs on virtual time: a {@link ManualClock} the loop advances itself, with inference
         * latency modelled as {@code latencyTicks} ticks. Deterministic; for dry runs and tests.
         */
        public Builder virtualTime(ManualClock clock, long latencyTicks) {
            this.clock = clock;
            this.wait = WaitStrategy.virtual();
            this.modelledLatencyTicks = latencyTicks;
            return this;
        }

        /** Ends the run after this many ticks; 0 (default) runs until closed. */
        public Builder maxTicks(long ticks) {
            this.maxTicks = ticks;
            return this;
        }

        /**
         * Arms by itself at the first tick that has a plan and follows a tick free of watchdog
         * conditions, instead of waiting for {@link Weft#arm()}. A live run arms only when told
         * to; a dry run uses this so that it arms at the same tick every time.
         */
        public Builder armWhenPlanned(boolean on) {
            this.armWhenPlanned = on;
            return this;
        }

        /**
         * How far an observation's time stamp may lie ahead of the loop's clock before it is a
         * fault (a source stamping in another clock domain); default 1 ms.
         */
        public Builder observationAheadMax(double seconds) {
            if (!(seconds >= 0 && seconds < 1e9)) {
                throw new IllegalArgumentException("observation-ahead tolerance must be >= 0 s, got " + seconds);
            }
            this.observationAheadMax = Math.round(seconds * 1e9);
            return this;
        }

        /**
         * How far (position units) a chunk's action may lie outside its joint's position bounds
         * before the chunk is a policy fault; default 0, any value outside them.
         */
        public Builder planRangeSlack(double slack) {
            this.planRangeSlack = slack;
            return this;
        }

        /**
         * Control periods without a completed tick before the loop monitor raises the
         * loop-stalled alarm (wall-clock runs); default 3.
         */
        public Builder stallPeriods(int periods) {
            this.stallPeriods = periods;
            return this;
        }

        /** How long {@link Weft#start()} waits for the first observation; default 5 s. */
        public Builder firstObservationTimeout(double seconds) {
            this.firstObservationTimeout = (long) (seconds * 1e9);
            return this;
        }

        /**
         * Checks that the parts fit together and builds the run; nothing starts but the telemetry
         * recorder's thread, with its partial file created.
         *
         * @throws IllegalArgumentException naming what does not fit
         * @throws IOException when the telemetry file is refused ({@link TargetFile}) or cannot be
         *     created; nothing is left behind
         */
        public Weft build() throws IOException {
            if (policy == null) {
                throw new IllegalArgumentException("a policy must be given");
            }
            if (port == null) {
                throw new IllegalArgumentException("a command port must be given");
            }
            int joints = limits.count();
            if (policy.actionSize() != joints) {
                throw new IllegalArgumentException("the policy's actions have " + policy.actionSize()
                        + " values, the limits describe " + joints + " joints");
            }
            EmbeddedSource embedded = null;
            ObservationSource src = source;
            if (src == null) {
                embedded = new EmbeddedSource(policy.observationSize());
                src = embedded;
            }
            if (src.size() != policy.observationSize()) {
                throw new IllegalArgumentException("the source gives " + src.size() + " values, the policy reads "
                        + policy.observationSize());
            }
            if (positionIndex != null && policy instanceof dev.weft.runtime.policy.OnnxPolicy onnx
                    && onnx.actionRepresentation().needsJointState()
                    && !java.util.Arrays.equals(positionIndex, LoopSettings.leadingPositions(joints))) {
                // the policy adds its offsets to the observation's leading values: the loop must read
                // the joint positions from the same place, or arming and the plan would disagree
                throw new IllegalArgumentException("the policy's actions are " + onnx.actionRepresentation().label()
                        + ", offsets from the observation's first " + joints + " values, but the position index "
                        + java.util.Arrays.toString(positionIndex) + " reads the joint positions elsewhere");
            }
            for (String name : policy.cameras()) {
                ControlLoop.Camera watched = null;
                for (ControlLoop.Camera c : cameras) {
                    if (c.name().equals(name)) {
                        watched = c;
                    }
                }
                if (watched == null) {
                    throw new IllegalArgumentException("the policy reads camera " + name
                            + ", which the run does not watch; give it with camera(\"" + name + "\", ...)");
                }
                // the loop keeps its reader (ages only); the inference thread copies frames with its own
                policy.attachFrames(name, watched.reader().sibling());
            }
            long periodNanos = Math.round(period * 1e9);
            ChunkBlender b = blender != null ? blender
                    : TemporalEnsembleBlender.oldestFirst(joints, policy.chunkLength(), stepRatio,
                            Interpolation.CUBIC_SPLINE, BlendingConfig.DEFAULT_WEIGHT_RATE,
                            BlendingConfig.DEFAULTS.taperSteps(policy.chunkLength()));
            if (b.dimensions() != joints) {
                throw new IllegalArgumentException("the blender has " + b.dimensions() + " dimensions for " + joints
                        + " joints");
            }
            if (b.maxSteps() < policy.chunkLength()) {
                throw new IllegalArgumentException("the blender takes chunks of up to " + b.maxSteps()
                        + " steps, the policy gives " + policy.chunkLength());
            }
            Watchdog w = watchdog != null ? watchdog : Watchdog.builder().build();
            WaitStrategy ws = wait != null ? wait : WaitStrategy.parkThenSpin(Math.round(spinWindow * 1e9));
            Inference inf = modelledLatencyTicks >= 0
                    ? new ModelledLatencyInference(policy, modelledLatencyTicks, periodNanos)
                    : new InferenceWorker(policy, clock, 64, "weft-inference");
            CsvRecorder<TelemetryRow> rec = null;
            if (telemetryFile != null) {
                List<String> names = new ArrayList<>();
                for (int i = 0; i < joints; i++) {
                    names.add(limits.name(i));
                }
                List<String> cameraNames = new ArrayList<>();
                for (ControlLoop.Camera c : cameras) {
                    cameraNames.add(c.name());
                }
                int watched = cameras.size();
                rec = CsvRecorder.open(TargetFile.resolve(telemetryFile, telemetryOverwrite), 1 << 14,
                        telemetryDrainNanos, () -> new TelemetryRow(joints, watched),
                        new TelemetryFormat(names, cameraNames), "weft-telemetry");
            }
            try {
                return build(joints, src, embedded, periodNanos, b, w, ws, inf, rec);
            } catch (RuntimeException e) {
                if (rec != null) {
                    rec.discard();
                }
                throw e;
            }
        }

        private Weft build(int joints, ObservationSource src, EmbeddedSource embedded, long periodNanos,
                           ChunkBlender b, Watchdog w, WaitStrategy ws, Inference inf, CsvRecorder<TelemetryRow> rec) {
            EventRelay relay = listener == null ? null : new EventRelay(listener);
            TransitionListener tl = relay == null ? TransitionListener.NONE : relay;
            LoopSettings settings = new LoopSettings(periodNanos, queryEvery,
                    positionIndex != null ? positionIndex : LoopSettings.leadingPositions(joints), maxTicks,
                    firstObservationTimeout, TimeUnit.SECONDS.toNanos(10), armWhenPlanned, observationAheadMax,
                    planRangeSlack, stallPeriods);
            long timeoutTicks = Math.max(1, Math.round(armingTimeout / period));
            long rampTicks = Math.max(0, Math.round(armingRamp / period));
            ControlLoop loop = new ControlLoop(clock, ws, settings, src, inf, b, smoother, w,
                    pose -> Supervisor.builder(limits, period).stopCategory(stopCategory).maxArmingOffset(armingOffset)
                            .armingTimeoutTicks(timeoutTicks).armingRampTicks(rampTicks).listener(tl).build(pose),
                    stopCategory, port, rec);
            loop.watchCameras(cameras);
            if (relay != null) {
                loop.alarmListener(relay);
                relay.details(loop::faultDetail);
            }
            return new Weft(this, loop, src, embedded, inf, rec, relay);
        }
    }
}
