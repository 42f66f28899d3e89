package dev.weft.runtime;

import dev.weft.filters.ButterworthLowPass;
import dev.weft.filters.ChunkBlender;
import dev.weft.filters.CrossfadeBlender;
import dev.weft.filters.LatestChunkBlender;
import dev.weft.filters.OneEuroFilter;
import dev.weft.filters.Smoother;
import dev.weft.filters.TemporalEnsembleBlender;
import dev.weft.runtime.BadInputException.Problem;
import dev.weft.runtime.config.BlendingConfig;
import dev.weft.runtime.config.JointConfig;
import dev.weft.runtime.config.SmoothingConfig;
import dev.weft.runtime.config.TelemetryConfig;
import dev.weft.runtime.config.TimingConfig;
import dev.weft.runtime.config.WatchdogConfig;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.port.CommandPortProvider;
import dev.weft.runtime.port.PortOptions;
import dev.weft.runtime.port.Ports;
import dev.weft.runtime.port.SimPort;
import dev.weft.runtime.source.ObservationSource;
import dev.weft.runtime.source.SimulatedPlant;
import dev.weft.runtime.source.SimulatedSource;
import dev.weft.runtime.telemetry.TargetFile;
import dev.weft.runtime.udp.UdpStateReceiver;
import dev.weft.safety.JointLimits;
import dev.weft.safety.StopCategory;
import dev.weft.safety.Watchdog;
import dev.weft.safety.WatchdogCondition;
import java.util.ArrayList;
import java.util.List;

/**
 * Turns a checked {@link WeftConfig} into the parts of a run: joint limits, the ONNX policy, the
 * blender, the smoother, the watchdog, the source and the port, and a {@link Weft.Builder} holding
 * them. Everything that can be wrong is found here, before anything starts.
 *
 * <p>Threading: used by the thread that builds the run.
 */
public final class ConfiguredRun {

    /** Source kinds a configuration may name. */
    public static final List<String> SOURCE_KINDS = List.of("embedded", "udp", "sim");

    /** Soft-start ramp when {@code arming.ramp_time} is not given, seconds. */
    public static final double DEFAULT_RAMP_TIME = 1.0;

    /** How long after its ramp a soft start may still chase the plan before it is a fault, seconds. */
    public static final double ARMING_GRACE = 10.0;

    private final WeftConfig config;
    private final JointLimits limits;

    private ConfiguredRun(WeftConfig config, JointLimits limits) {
        this.config = config;
        this.limits = limits;
    }

    /**
     * Checks what the configuration reader could not (the limits as the safety module takes them,
     * the kinds of source and port) and returns the assembly.
     */
    public static ConfiguredRun of(WeftConfig config) throws BadInputException {
        List<Problem> problems = new ArrayList<>();
        JointLimits limits = null;
        try {
            limits = limits(config);
        } catch (IllegalArgumentException e) {
            problems.add(new Problem("robot.joints", e.getMessage()));
        }
        String source = config.source().kind();
        if (!SOURCE_KINDS.contains(source)) {
            problems.add(new Problem("source.kind", "no source of kind '" + source + "'; known kinds: "
                    + String.join(", ", SOURCE_KINDS)));
        }
        if (source.equals("sim") && config.source().options().size() > 0) {
            problems.add(new Problem("source.options", "a sim source takes no options; the plant is set up under"
                    + " port.options when port.kind is sim, and with its defaults otherwise"));
        }
        try {
            // built and closed unopened (no socket, no file), so that weft check refuses what weft
            // run would: a bad option, a key file others can read, an unauthenticated link off loopback
            Ports.provider(config.port().kind(), "port.kind").create(config.portOptions()).close();
        } catch (BadInputException e) {
            problems.addAll(e.problems());
        }
        if (source.equals("udp")) {
            try {
                UdpStateReceiver.create(config.sourceOptions()).close();
            } catch (BadInputException e) {
                problems.addAll(e.problems());
            }
        }
        if (!problems.isEmpty()) {
            throw new BadInputException(problems);
        }
        return new ConfiguredRun(config, limits);
    }

    public WeftConfig config() {
        return config;
    }

    public JointLimits limits() {
        return limits;
    }

    /** Joint limits as the safety module takes them. */
    static JointLimits limits(WeftConfig c) {
        JointLimits.Builder b = JointLimits.builder();
        for (JointConfig j : c.robot().joints()) {
            b.joint(j.name(), j.min(), j.max(), j.velocity(), j.acceleration(), j.jerk(), j.margin());
        }
        return b.build();
    }

    /** The model metadata property holding the time between two actions of a chunk, seconds. */
    public static final String POLICY_STEP_KEY = "weft.policy_step";

    /**
     * Loads the configured policy and checks it against the configuration: D against the joints,
     * and the model's {@value #POLICY_STEP_KEY} property, when it has one, against
     * {@code timing.policy_step}.
     *
     * @throws BadInputException naming the model's problems, a D that differs from the joints, or
     *     a policy step that differs from the model's
     */
    public OnnxPolicy loadPolicy() throws BadInputException {
        OnnxPolicy p = OnnxPolicy.load(config.policySpec());
        int joints = config.robot().jointCount();
        if (p.actionSize() != joints) {
            p.close();
            throw new BadInputException("policy.output", "the model's actions have D = " + p.actionSize()
                    + " values, robot.joints lists " + joints + " joints");
        }
        String step = p.signature().metadata().properties().get(POLICY_STEP_KEY);
        if (step != null) {
            String where = config.policySpec().model() + " metadata '" + POLICY_STEP_KEY + "'";
            double recorded;
            try {
                recorded = Double.parseDouble(step.trim());
            } catch (NumberFormatException e) {
                recorded = Double.NaN;
            }
            if (!(recorded > 0) || Double.isInfinite(recorded)) {
                p.close();
                throw new BadInputException(where, "must be the time between two actions in seconds, a number > 0,"
                        + " got \"" + (step.length() > 40 ? step.substring(0, 40) + "…" : step) + "\"");
            }
            double configured = config.timing().policyStep();
            if (Math.abs(recorded - configured) > 1e-9 * Math.max(recorded, configured)) {
                p.close();
                throw new BadInputException(where, "the model was exported with actions " + recorded
                        + " s apart, timing.policy_step is " + configured
                        + " s: its chunks would be played at the wrong speed");
            }
        }
        return p;
    }

    /** The blender the configuration asks for, sized for chunks of {@code steps}. */
    public ChunkBlender blender(int steps) {
        BlendingConfig b = config.blending();
        int d = config.robot().jointCount();
        double r = config.timing().stepRatio();
        return switch (b.method()) {
            case ENSEMBLE -> b.favour() == BlendingConfig.Favour.OLDEST
                    ? TemporalEnsembleBlender.oldestFirst(d, steps, r, b.interpolation(), b.weightRate(),
                            b.taperSteps(steps))
                    : TemporalEnsembleBlender.newestFirst(d, steps, r, b.interpolation(), b.weightRate(),
                            b.taperSteps(steps));
            case LATEST -> b.executedSteps() > 0
                    ? LatestChunkBlender.firstSteps(d, steps, r, b.interpolation(), b.executedSteps())
                    : LatestChunkBlender.of(d, steps, r, b.interpolation());
            case CROSSFADE -> CrossfadeBlender.of(d, steps, r, b.interpolation(), b.fadeSteps());
        };
    }

    /** The smoother, or null for none. */
    public Smoother smoother() {
        SmoothingConfig s = config.smoothing();
        int d = config.robot().jointCount();
        double rate = config.timing().controlRate();
        return switch (s.method()) {
            case NONE -> null;
            case BUTTERWORTH -> ButterworthLowPass.of(d, rate, s.cutoff());
            case ONE_EURO -> OneEuroFilter.of(d, rate, s.minCutoff(), s.beta(), s.derivativeCutoff());
        };
    }

    /** The watchdog with the configured bounds; conditions switched off are named with their reasons. */
    public Watchdog watchdog() {
        WatchdogConfig w = config.watchdog();
        double period = config.timing().controlPeriod();
        Watchdog.Builder b = Watchdog.builder()
                .maxObservationAgeNanos(Math.round(w.observationAgeMax() * 1e9))
                .minPlanTicks((int) Math.max(1, Math.ceil(w.planRemainingMin() / period - 1e-9)))
                .maxInferenceLatencyNanos(Math.round(w.inferenceLatencyMax() * 1e9))
                .maxConsecutiveOverruns(w.overrunsMax());
        for (WatchdogConfig.Disabled d : w.disabled()) {
            b.disable(condition(d.condition()), d.reason());
        }
        return b.build();
    }

    /** The safety module's condition for a configuration name. */
    static WatchdogCondition condition(WatchdogConfig.Condition c) {
        return switch (c) {
            case OBSERVATION_AGE -> WatchdogCondition.STALE_OBSERVATION;
            case PLAN_REMAINING -> WatchdogCondition.PLAN_LOW;
            case INFERENCE_LATENCY -> WatchdogCondition.INFERENCE_LATE;
            case OVERRUNS -> WatchdogCondition.LOOP_OVERRUNS;
            case PORT_FAULT -> WatchdogCondition.PORT_FAULT;
            case NON_FINITE_OUTPUT -> WatchdogCondition.NON_FINITE_OUTPUT;
            case OPERATOR_STOP -> WatchdogCondition.OPERATOR_STOP;
        };
    }

    /** The configured port, unopened. */
    public CommandPort port() throws BadInputException {
        CommandPortProvider provider = Ports.provider(config.port().kind(), "port.kind");
        return provider.create(config.portOptions());
    }

    /** Whether the configured port kind is live (may move hardware). */
    public boolean livePort() throws BadInputException {
        return Ports.provider(config.port().kind(), "port.kind").live();
    }

    /** The soft start's ramp, seconds. */
    public double rampTime() {
        return config.arming().rampTime() > 0 ? config.arming().rampTime() : DEFAULT_RAMP_TIME;
    }

    /** A pose inside every joint's operating range: 0 where allowed, else the nearest bound. */
    public double[] restPose() {
        double[] pose = new double[limits.count()];
        for (int i = 0; i < pose.length; i++) {
            pose[i] = Math.min(Math.max(0.0, limits.operatingMin(i)), limits.operatingMax(i));
        }
        return pose;
    }

    /**
     * The builder of a run with every part the configuration names.
     *
     * @param policy the loaded policy (closed with the run)
     * @param port the port, unopened (the caller may have swapped it, as a dry run does)
     * @param clock the run's clock (a {@code ManualClock} for virtual time), used by a sim source
     * @param initialPose the simulated plant's initial pose when the source is {@code sim}; null for {@link #restPose()}
     */
    public Weft.Builder builder(Policy policy, CommandPort port, dev.weft.runtime.loop.LoopClock clock, double[] initialPose)
            throws BadInputException {
        Weft.Builder b = builderWithoutSource(policy, port);
        watchCameras(b);
        ObservationSource source = source(policy, port, clock, initialPose);
        if (source != null) {
            b.source(source);
        }
        if (port instanceof SimPort sp && sp.plant() == null) {
            // a sim port whose plant nobody observes: it still follows the commands
            sp.attach(initialPose != null ? initialPose : restPose(), config.timing().controlPeriod());
        }
        return b;
    }

    /** Slots of an embedded camera's ring: at 30 Hz, 266 ms of frames for the inference thread to find its frame in. */
    public static final int EMBEDDED_RING_SLOTS = 8;

    /**
     * Watches every configured camera: one whose frames come from a shared-memory frame file (the
     * file is mapped and its header checked now), or, with {@code source: {kind: embedded}}, one
     * whose frames the embedding program offers into an in-process ring of
     * {@link #EMBEDDED_RING_SLOTS} slots ({@link Weft#frameRing(String)}).
     *
     * @throws BadInputException naming {@code cameras.<name>} when a camera has no live source, or
     *     its frame file is missing or does not fit
     */
    public void watchCameras(Weft.Builder b) throws BadInputException {
        for (dev.weft.runtime.config.CameraConfig c : config.cameras()) {
            if (c.embedded()) {
                b.camera(c.name(), new dev.weft.runtime.source.FrameRing(c.name(), EMBEDDED_RING_SLOTS, c.height(),
                        c.width(), c.channels(), c.pixelFormat().headerCode()), c.ageMax());
                continue;
            }
            if (c.frameFile().isEmpty()) {
                throw new BadInputException("cameras." + c.name(), "has no source: a live run reads frames from"
                        + " source: {kind: shared_memory, file: ...} or, in an embedding program, {kind: embedded}");
            }
            dev.weft.runtime.source.SharedFrameReader reader = dev.weft.runtime.source.SharedFrameReader.open(
                    c.frameFile().get(), c.height(), c.width(), c.channels());
            if (reader.format() != c.pixelFormat()) {
                reader.close();
                throw new BadInputException("cameras." + c.name() + ".pixel_format", "is " + c.pixelFormat().label()
                        + ", the frame file " + c.frameFile().get() + " holds " + reader.format().label() + " frames");
            }
            b.camera(c.name(), reader, c.ageMax());
        }
    }

    /**
     * The builder with every configured part but the source, which the caller supplies (a dry
     * run reads a recording or a simulated plant instead of the configured source).
     */
    public Weft.Builder builderWithoutSource(Policy policy, CommandPort port) {
        TimingConfig t = config.timing();
        double period = t.controlPeriod();
        Weft.Builder b = Weft.builder(limits, period)
                .policy(policy, true)
                .port(port)
                .policyStepRatio(t.stepRatio())
                .blender(blender(policy.chunkLength()))
                .smoother(smoother())
                .watchdog(watchdog())
                .stopCategory(config.arming().stopCategory() == 1 ? StopCategory.CATEGORY_1 : StopCategory.CATEGORY_2)
                .armingOffset(config.arming().poseDistanceMax())
                .armingRamp(rampTime())
                .armingTimeout(rampTime() + ARMING_GRACE)
                .queryEveryTicks(t.schedule() == TimingConfig.QuerySchedule.FIXED ? t.everyTicks() : 0)
                .observationAheadMax(config.watchdog().observationAheadMax())
                .planRangeSlack(config.watchdog().planRangeSlack())
                .stallPeriods(config.watchdog().stallPeriods())
                .spinWindow(t.spinWindow());
        TelemetryConfig tc = config.telemetry();
        tc.file().ifPresent(f -> b.telemetry(f).telemetryOverwrite(tc.overwrite())
                .telemetryDrainTimeout(tc.drainTimeout()));
        return b;
    }

    /**
     * Checks that the telemetry file can be written as configured: its folder exists and takes a
     * new file (proved by creating and deleting the partial file), it is not a folder or a special
     * file, and it does not exist unless {@code telemetry.overwrite} (or the command line's
     * {@code --overwrite}) allows replacing it. Leaves nothing behind and never touches the file
     * itself. Nothing to check when no telemetry file is configured.
     *
     * @return the resolved target, or null when no telemetry file is configured
     * @throws BadInputException naming {@code telemetry.file} (with its line), the resolved path and why
     */
    public TargetFile checkTelemetry() throws BadInputException {
        TelemetryConfig tc = config.telemetry();
        if (tc.file().isEmpty()) {
            return null;
        }
        try {
            TargetFile t = TargetFile.resolve(tc.file().get(), tc.overwrite());
            t.probe();
            return t;
        } catch (TargetFile.Refused e) {
            String hint = e.reason() == TargetFile.Reason.EXISTS
                    ? "; pass --overwrite or set telemetry.overwrite: true to replace it" : "";
            throw new BadInputException(tc.where(), e.getMessage() + hint);
        }
    }

    private ObservationSource source(Policy policy, CommandPort port, dev.weft.runtime.loop.LoopClock clock,
                                     double[] initialPose) throws BadInputException {
        String kind = config.source().kind();
        double[] pose = initialPose != null ? initialPose : restPose();
        double period = config.timing().controlPeriod();
        switch (kind) {
            case "embedded":
                config.sourceOptions().finish();
                return null;
            case "udp": {
                PortOptions o = config.sourceOptions();
                ObservationSource s = UdpStateReceiver.create(o);
                if (s.size() != policy.observationSize()) {
                    s.close();
                    throw new BadInputException("source.options.size", "the source gives " + s.size()
                            + " values, policy.observation_size is " + policy.observationSize());
                }
                return s;
            }
            case "sim": {
                SimulatedPlant plant;
                boolean stepsPlant;
                if (port instanceof SimPort sp) {
                    plant = sp.attach(pose, period);
                    stepsPlant = false;
                } else {
                    plant = new SimulatedPlant(pose, 8.0, 0.9, period, false, 0.0, 1);
                    stepsPlant = true;
                }
                if (plant.observationSize() != policy.observationSize()) {
                    throw new BadInputException("source.kind", "a sim source observes " + plant.observationSize()
                            + " values (joint positions" + (plant.observationSize() > plant.joints() ? " and velocities" : "")
                            + "), policy.observation_size is " + policy.observationSize());
                }
                return new SimulatedSource(plant, clock, stepsPlant);
            }
            default:
                throw new BadInputException("source.kind", "no source of kind '" + kind + "'");
        }
    }
}
