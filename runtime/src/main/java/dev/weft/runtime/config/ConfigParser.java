package dev.weft.runtime.config;

import com.fasterxml.jackson.databind.JsonNode;
import dev.weft.filters.Interpolation;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.config.TreeReader.Section;
import dev.weft.runtime.policy.ActionRepresentation;
import dev.weft.runtime.policy.ChunkLayout;
import dev.weft.runtime.image.ImagePreprocessor;
import dev.weft.runtime.policy.InputBinding;
import dev.weft.runtime.recording.PixelFormat;
import dev.weft.runtime.policy.NormalisationSpec;
import dev.weft.runtime.policy.OutputSpec;
import dev.weft.runtime.policy.PolicySpec;
import dev.weft.runtime.policy.SessionSettings;
import dev.weft.runtime.recording.CameraSpec;
import dev.weft.runtime.recording.Columns;
import dev.weft.runtime.recording.RecordingFormat;
import dev.weft.runtime.telemetry.TargetFile;
import java.math.BigDecimal;
import java.math.MathContext;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Optional;
import java.util.OptionalDouble;
import java.util.OptionalLong;

/**
 * The schema: walks the tree section by section, checks every key and the rules between keys, and
 * builds a {@link WeftConfig} only when nothing is wrong. A section with a problem yields null, and
 * the checks that need it are skipped, so one mistake is reported once rather than again by every
 * rule that depends on it.
 */
final class ConfigParser {

    /** Relative slack on comparisons of products of configured times (0.1 × 3 is not exactly 0.3). */
    private static final double TIME_SLACK = 1e-9;

    private final TreeReader r;
    private final Path baseDir;

    // Single values the rules between sections need, each set as soon as it reads correctly (null
    // until then), so that a rule is checked even when another key of the same section is wrong.
    private Integer jointCount;
    private Double controlPeriod;
    private Double policyStep;
    private TimingConfig.QuerySchedule schedule;
    private Integer everyTicks;
    private Integer chunkLength;
    private BlendingConfig.Method blendMethod;
    private Integer executedSteps;
    private Double butterworthCutoff;
    private Double observationAgeMax;
    private Double planRemainingMin;
    private Double inferenceLatencyMax;
    private Integer observationSize;
    private Integer recordedObservationColumns;
    private Integer recordedActionColumns;

    ConfigParser(YamlTree tree, Path baseDir) {
        this.r = new TreeReader(tree);
        this.baseDir = baseDir;
    }

    WeftConfig parse() throws BadInputException {
        Section root = r.root();
        if (root == null) {
            r.finish();
        }
        RobotConfig robot = robot(root.section("robot", true));
        TimingConfig timing = timing(root.section("timing", true));
        List<CameraConfig> cameras = cameras(root.section("cameras", false), root.has("cameras"));
        PolicySpec policy = policy(root.section("policy", true));
        BlendingConfig blending = blending(root.section("blending", false), root.has("blending"));
        SmoothingConfig smoothing = smoothing(root.section("smoothing", false), root.has("smoothing"));
        WatchdogConfig watchdog = watchdog(root.section("watchdog", true));
        ArmingConfig arming = arming(root.section("arming", true));
        EndpointConfig source = endpoint(root.section("source", true));
        EndpointConfig port = endpoint(root.section("port", true));
        TelemetryConfig telemetry = telemetry(root.section("telemetry", false), root.has("telemetry"));
        Optional<RecordingConfig> recording = recording(root.section("recording", false), root.has("recording"));
        GatesConfig gates = gates(root.section("gates", false), root.has("gates"));
        root.done();
        recordingChecks();
        crossChecks();
        r.finish();
        return new WeftConfig(robot, timing, cameras, policy, blending, smoothing, watchdog, arming, source, port, telemetry,
                recording, gates);
    }

    // ---- robot

    private RobotConfig robot(Section s) {
        if (s == null) {
            return null;
        }
        int before = r.count();
        String name = s.text("name", null);
        Map<String, JsonNode> list = s.list("joints", true);
        List<JointConfig> joints = new ArrayList<>();
        if (list != null && list.isEmpty()) {
            s.problem("joints", "must list at least one joint");
        } else if (list != null) {
            jointCount = list.size();
        }
        Map<String, String> firstByName = new HashMap<>();
        if (list != null) {
            for (Map.Entry<String, JsonNode> e : list.entrySet()) {
                JointConfig j = joint(s.element(e.getKey(), e.getValue()), firstByName);
                if (j != null) {
                    joints.add(j);
                }
            }
        }
        s.done();
        return r.count() == before ? new RobotConfig(name, joints) : null;
    }

    private JointConfig joint(Section j, Map<String, String> firstByName) {
        if (j == null) {
            return null;
        }
        int before = r.count();
        String name = j.text("name", null);
        if (name != null) {
            String first = firstByName.putIfAbsent(name, j.path());
            if (first != null) {
                j.problem("name", "\"" + name + "\" is already the name of " + first);
            }
        }
        Section pos = j.section("position", true);
        Double min = null;
        Double max = null;
        Double margin = null;
        if (pos != null) {
            min = pos.number("min", null);
            max = pos.number("max", null);
            margin = pos.nonNegative("margin", 0.0);
            if (min != null && max != null && !(min < max)) {
                pos.problem("max", "must be > min (" + r.raw(pos.pathOf("min")) + "), got " + r.raw(pos.pathOf("max")));
            } else if (min != null && max != null && margin != null && !(2 * margin < max - min)) {
                pos.problem("margin", "must be < half the position range ((max - min) / 2 = " + show((max - min) / 2)
                        + "), got " + r.raw(pos.pathOf("margin")));
            }
            pos.done();
        }
        Double velocity = j.positive("velocity", null);
        Double acceleration = j.positive("acceleration", null);
        Double jerk = j.positive("jerk", null);
        j.done();
        if (r.count() != before) {
            return null;
        }
        return new JointConfig(name, min, max, margin, velocity, acceleration, jerk);
    }

    // ---- timing

    private TimingConfig timing(Section s) {
        if (s == null) {
            return null;
        }
        int before = r.count();
        Double control = s.positive("control_period", null);
        Double step = s.has("policy_step") ? s.positive("policy_step", null) : control;
        if (control != null && step != null && step < control) {
            s.problem("policy_step", "must be >= control_period (" + r.raw(s.pathOf("control_period")) + "), got "
                    + r.raw(s.pathOf("policy_step")));
            step = null;
        }
        controlPeriod = control;
        policyStep = step;
        TimingConfig.QuerySchedule schedule = TimingConfig.QuerySchedule.WHEN_IDLE;
        Integer every = 0;
        Section q = s.section("query", false);
        if (q != null) {
            schedule = q.choice("schedule", TimingConfig.QuerySchedule.values(), TimingConfig.QuerySchedule::label,
                    null);
            if (schedule == TimingConfig.QuerySchedule.FIXED) {
                every = q.count("every_ticks", null, 1);
            } else if (schedule == TimingConfig.QuerySchedule.WHEN_IDLE && q.has("every_ticks")) {
                q.get("every_ticks", false);
                q.problem("every_ticks", "applies only to schedule fixed; schedule when_idle queries whenever the "
                        + "inference worker is free");
            } else if (schedule == null) {
                q.get("every_ticks", false);
            }
            q.done();
        }
        this.schedule = schedule;
        everyTicks = every;
        Double spin;
        if (s.has("spin_window")) {
            spin = s.nonNegative("spin_window", null);
            if (spin != null && control != null && !(spin < control)) {
                s.problem("spin_window", "must be < control_period (" + r.raw(s.pathOf("control_period")) + "), got "
                        + r.raw(s.pathOf("spin_window")));
            }
        } else {
            spin = control == null ? null : Math.min(WeftConfig.DEFAULT_SPIN_WINDOW, control / 2);
        }
        Double dryRunLatency = s.has("dry_run_latency") ? s.positive("dry_run_latency", null) : Double.valueOf(Double.NaN);
        s.done();
        if (r.count() != before) {
            return null;
        }
        return new TimingConfig(control, step, schedule, every, spin, dryRunLatency);
    }

    // ---- policy

    private PolicySpec policy(Section s) {
        if (s == null) {
            return null;
        }
        int before = r.count();
        Path model = null;
        String modelText = s.text("model", null);
        if (modelText != null) {
            model = baseDir.resolve(modelText).normalize();
            if (!Files.exists(model)) {
                s.problem("model", "file not found: " + model);
            } else if (!Files.isRegularFile(model)) {
                s.problem("model", "is not a file: " + model);
            }
        }
        Integer observationSize = s.count("observation_size", null, 1);
        this.observationSize = observationSize;
        Map<String, InputBinding> inputs = new LinkedHashMap<>();
        Section in = s.section("inputs", true);
        if (in != null) {
            in.acceptAllKeys();
            if (in.keys().isEmpty()) {
                s.problem("inputs", "must bind at least one model input");
            }
            for (String name : in.keys()) {
                InputBinding b = binding(in.section(name, true));
                if (b != null) {
                    inputs.put(name, b);
                }
            }
            in.done();
        }
        OutputSpec output = output(s.section("output", true));
        NormalisationSpec normalisation = new NormalisationSection(r).read(s.section("normalisation", false),
                observationSize, output == null || output.actionSize() == 0 ? null : output.actionSize());
        SessionSettings session = session(s.section("session", false));
        s.done();
        if (r.count() != before) {
            return null;
        }
        return new PolicySpec(model, observationSize, inputs, output, session, normalisation);
    }

    // ---- cameras

    /** The cameras by name, for the policy's camera inputs (read before the policy). */
    private final Map<String, CameraConfig> camerasByName = new LinkedHashMap<>();
    /** Whether {@code cameras} was given but did not read: camera inputs are then not checked against it. */
    private boolean camerasBroken;

    private List<CameraConfig> cameras(Section s, boolean given) {
        if (s == null) {
            camerasBroken = given;
            return given ? null : List.of();
        }
        int before = r.count();
        List<CameraConfig> out = new ArrayList<>();
        if (s.keys().isEmpty()) {
            r.add(s.path(), "must name at least one camera, or be left out");
        }
        for (String name : s.keys()) {
            Section c = s.section(name, true);
            if (c == null) {
                continue;
            }
            int at = r.count();
            if (name.isBlank()) {
                s.problem(name, "a camera's name must not be empty");
            }
            Integer height = c.count("height", null, 1);
            Integer width = c.count("width", null, 1);
            PixelFormat format = c.choice("pixel_format", PixelFormat.values(), PixelFormat::label, null);
            Double ageMax = c.positive("age_max", null);
            Optional<Path> file = Optional.empty();
            boolean embedded = false;
            Section src = c.section("source", false);
            if (src != null) {
                String kind = src.choice("kind", new String[] {"shared_memory", "embedded"}, x -> x, null);
                if ("shared_memory".equals(kind)) {
                    String f = src.text("file", null);
                    if (f != null) {
                        file = Optional.of(baseDir.resolve(f).normalize());
                    }
                } else if ("embedded".equals(kind)) {
                    embedded = true;
                }
                src.done();
            }
            c.done();
            if (height != null && width != null && (long) height * width * 3 > Integer.MAX_VALUE / 2) {
                c.problem("height", "a frame of " + height + " × " + width + " is larger than weft takes (1 GiB)");
            }
            if (r.count() == at) {
                CameraConfig cc = new CameraConfig(name, height, width, format, ageMax, file, embedded);
                out.add(cc);
                camerasByName.put(name, cc);
            }
        }
        s.done();
        if (r.count() != before) {
            camerasBroken = true;
            return null;
        }
        return out;
    }

    private InputBinding camera(Section b) {
        String camera = b.text("camera", null);
        int[] crop = new int[0];
        Section cs = b.section("crop", false);
        if (cs != null) {
            Long top = cs.whole("top", 0L, 0, Integer.MAX_VALUE);
            Long left = cs.whole("left", 0L, 0, Integer.MAX_VALUE);
            Integer rows = cs.count("height", null, 1);
            Integer columns = cs.count("width", null, 1);
            cs.done();
            if (top != null && left != null && rows != null && columns != null) {
                crop = new int[] {top.intValue(), left.intValue(), rows, columns};
            }
        }
        ImagePreprocessor.Resize resize = b.choice("resize", ImagePreprocessor.Resize.values(),
                ImagePreprocessor.Resize::label, ImagePreprocessor.Resize.BILINEAR);
        ImagePreprocessor.Layout layout = b.choice("layout", ImagePreprocessor.Layout.values(),
                ImagePreprocessor.Layout::label, null);
        String order = b.choice("channel_order", new String[] {"rgb", "bgr"}, x -> x, "rgb");
        Boolean unit = b.flag("scale_to_unit", Boolean.TRUE);
        CameraConfig cam = camera == null ? null : camerasByName.get(camera);
        if (camera != null && cam == null && !camerasBroken) {
            b.problem("camera", camerasByName.isEmpty() ? "names camera \"" + camera
                    + "\", but the file has no cameras section; add cameras." + camera + " (height, width,"
                    + " pixel_format, age_max)" : "no camera \"" + camera + "\" in cameras; they are "
                    + camerasByName.keySet());
        }
        int channels = cam == null ? 3 : cam.channels();
        double[] mean = b.has("mean") ? b.numbers("mean") : filled(channels, 0);
        double[] std = b.has("std") ? b.numbers("std") : filled(channels, 1);
        if (mean != null && mean.length != channels) {
            b.problem("mean", "needs " + channels + " values, one per channel, got " + mean.length);
            mean = null;
        }
        if (std != null && std.length != channels) {
            b.problem("std", "needs " + channels + " values, one per channel, got " + std.length);
            std = null;
        } else if (std != null) {
            for (double v : std) {
                if (!(v > 0)) {
                    b.problem("std", "every value must be > 0, got " + v);
                    std = null;
                    break;
                }
            }
        }
        if (cam != null && crop.length == 4 && ((long) crop[0] + crop[2] > cam.height()
                || (long) crop[1] + crop[3] > cam.width())) {
            b.problem("crop", "the window rows " + crop[0] + " to " + ((long) crop[0] + crop[2]) + ", columns "
                    + crop[1] + " to " + ((long) crop[1] + crop[3]) + " does not fit camera " + camera + "'s "
                    + cam.height() + " × " + cam.width() + " frames");
        }
        if (cam == null || resize == null || layout == null || order == null || unit == null || mean == null
                || std == null) {
            return null;
        }
        return new InputBinding.Image(camera, cam.height(), cam.width(), channels,
                cam.pixelFormat() == PixelFormat.BGR8, crop, resize, layout, order.equals("bgr"), unit, mean, std);
    }

    private static double[] filled(int n, double v) {
        double[] out = new double[n];
        java.util.Arrays.fill(out, v);
        return out;
    }

    private InputBinding binding(Section b) {
        if (b == null) {
            return null;
        }
        int before = r.count();
        InputBinding.Kind kind = b.choice("source", InputBinding.Kind.values(), InputBinding.Kind::label, null);
        if (kind == null) {
            b.acceptAllKeys();
            return null;
        }
        InputBinding out = null;
        switch (kind) {
            case OBSERVATION -> out = new InputBinding.Observation();
            case CAMERA -> out = camera(b);
            case STEP -> out = new InputBinding.Step();
            case HISTORY -> {
                Integer depth = b.count("depth", null, 1);
                Double spacing = b.positive("spacing", null);
                Boolean withCurrent = b.flag("with_current", Boolean.TRUE);
                String between = b.choice("between_samples", new String[] {"latest", "linear"}, x -> x, "latest");
                if (depth != null && spacing != null && withCurrent != null && between != null) {
                    long nanos = Math.round(spacing * 1e9);
                    if (nanos <= 0) {
                        b.problem("spacing", "must be at least 1 ns, got " + spacing);
                    } else if (nanos > InputBinding.History.MAX_SPAN_NANOS / (depth + 1L)) {
                        b.problem("spacing", depth + " points " + spacing + " s apart span more than "
                                + InputBinding.History.MAX_SPAN_NANOS / 1_000_000_000L + " s");
                    } else {
                        out = new InputBinding.History(depth, nanos, withCurrent, between.equals("linear"));
                    }
                }
            }
            case CONSTANT -> {
                Map<String, JsonNode> values = b.list("values", true);
                if (values != null) {
                    if (values.isEmpty()) {
                        b.problem("values", "must hold at least one number");
                    }
                    double[] v = new double[values.size()];
                    int i = 0;
                    for (Map.Entry<String, JsonNode> e : values.entrySet()) {
                        Double d = r.finite(e.getKey(), e.getValue());
                        v[i++] = d == null ? 0 : d;
                    }
                    out = new InputBinding.Constant(v);
                }
            }
            case NOISE -> {
                Long seed = b.whole("seed", null, Long.MIN_VALUE, Long.MAX_VALUE);
                Double stddev = b.nonNegative("stddev", WeftConfig.DEFAULT_NOISE_STDDEV);
                Integer count = b.has("count") ? b.count("count", null, 1) : Integer.valueOf(0);
                if (seed != null && stddev != null && count != null) {
                    out = new InputBinding.Noise(seed, stddev, count);
                }
            }
            default -> throw new IllegalStateException(kind.toString());
        }
        b.done();
        return r.count() == before ? out : null;
    }

    private OutputSpec output(Section o) {
        if (o == null) {
            return null;
        }
        int before = r.count();
        String name = o.has("name") ? o.text("name", null) : null;
        ChunkLayout layout = o.choice("layout", ChunkLayout.values(), ChunkLayout::label, null);
        Integer k = o.has("chunk_length") ? o.count("chunk_length", null, 1) : Integer.valueOf(0);
        Integer hold = o.has("hold_steps") ? o.count("hold_steps", null, 1) : null;
        if (hold != null && layout != null && layout != ChunkLayout.SINGLE_ACTION) {
            o.problem("hold_steps", "is for layout 1xD (a single-step actor), the layout is " + layout.label());
        }
        if (layout == ChunkLayout.SINGLE_ACTION && k != null && k > 1) {
            o.problem("chunk_length", "must be 1 for layout 1xD (one action per call), got " + k);
        } else if (layout == ChunkLayout.SINGLE_ACTION) {
            // the actor's action is held: the policy gives 1 + hold equal actions
            chunkLength = 1 + (hold != null ? hold : OutputSpec.DEFAULT_HOLD_STEPS);
        } else if (k != null && k > 0) {
            chunkLength = k;
        }
        Integer d = o.has("action_size") ? o.count("action_size", null, 1) : null;
        if (d != null && jointCount != null && !d.equals(jointCount)) {
            o.problem("action_size", "must equal the number of joints in robot.joints (" + jointCount
                    + "), got " + d);
        }
        ActionRepresentation actions = o.choice("actions", ActionRepresentation.values(), ActionRepresentation::label,
                ActionRepresentation.ABSOLUTE);
        int actionSize = d != null ? d : jointCount != null ? jointCount : 0;
        if (actions != null && actions.needsJointState() && observationSize != null && observationSize < actionSize) {
            o.problem("actions", actions.label() + " adds the joint positions, the first D = " + actionSize
                    + " observation values, but policy.observation_size is " + observationSize);
        }
        o.done();
        if (r.count() != before) {
            return null;
        }
        return new OutputSpec(name, layout, k, actionSize, actions,
                layout == ChunkLayout.SINGLE_ACTION && hold != null ? hold : 0);
    }

    private SessionSettings session(Section s) {
        if (s == null) {
            return SessionSettings.DEFAULTS;
        }
        int before = r.count();
        SessionSettings d = SessionSettings.DEFAULTS;
        Integer threads = s.count("intra_op_threads", d.intraOpThreads(), 1);
        SessionSettings.Optimization optimization = s.choice("optimization", SessionSettings.Optimization.values(),
                o -> o.name().toLowerCase(Locale.ROOT), d.optimization());
        Boolean spinning = s.flag("spinning", d.spinning());
        Integer warmup = s.count("warmup_runs", d.warmupRuns(), 0);
        s.done();
        if (r.count() != before) {
            return null;
        }
        return new SessionSettings(threads, optimization, spinning, warmup);
    }

    // ---- blending and smoothing

    private BlendingConfig blending(Section s, boolean given) {
        if (s == null) {
            return given ? null : BlendingConfig.DEFAULTS;
        }
        int before = r.count();
        BlendingConfig d = BlendingConfig.DEFAULTS;
        BlendingConfig.Method method = s.choice("method", BlendingConfig.Method.values(), BlendingConfig.Method::label,
                d.method());
        Interpolation interpolation = s.choice("interpolation", Interpolation.values(),
                i -> i.name().toLowerCase(Locale.ROOT), d.interpolation());
        if (method == null) {
            s.acceptAllKeys();
            s.done();
            return null;
        }
        blendMethod = method;
        for (BlendingConfig.Method m : BlendingConfig.Method.values()) {
            if (m != method && s.has(m.label())) {
                s.get(m.label(), false);
                s.problem(m.label(), "is given but blending.method is " + method.label()
                        + "; remove it or change the method");
            }
        }
        double weightRate = d.weightRate();
        BlendingConfig.Favour favour = d.favour();
        BlendingConfig.Weights weights = d.weights();
        double taper = d.taperSteps();
        int executed = 0;
        int fade = 0;
        switch (method) {
            case ENSEMBLE -> {
                Section e = s.section("ensemble", false);
                if (e != null) {
                    Double m = e.nonNegative("weight_rate", d.weightRate());
                    BlendingConfig.Favour f = e.choice("favour", BlendingConfig.Favour.values(),
                            BlendingConfig.Favour::label, d.favour());
                    BlendingConfig.Weights w = e.choice("weights", BlendingConfig.Weights.values(),
                            BlendingConfig.Weights::label, d.weights());
                    Double t = e.has("taper_steps") ? e.nonNegative("taper_steps", null) : null;
                    if (w == BlendingConfig.Weights.PUBLISHED && e.has("taper_steps")) {
                        e.problem("taper_steps", "is given but blending.ensemble.weights is published, which has no"
                                + " taper; remove it or use weights: tapered");
                    }
                    e.done();
                    weightRate = m == null ? weightRate : m;
                    favour = f == null ? favour : f;
                    weights = w == null ? weights : w;
                    taper = t == null ? taper : t;
                }
            }
            case LATEST -> {
                Section l = s.section("latest", false);
                if (l != null) {
                    Integer n = l.has("executed_steps") ? l.count("executed_steps", null, 1) : Integer.valueOf(0);
                    l.done();
                    executed = n == null ? 0 : n;
                    executedSteps = n;
                }
            }
            case CROSSFADE -> {
                Section c = s.section("crossfade", true);
                if (c != null) {
                    Integer n = c.count("fade_steps", null, 1);
                    c.done();
                    fade = n == null ? 0 : n;
                }
            }
            default -> throw new IllegalStateException(method.toString());
        }
        s.done();
        if (r.count() != before) {
            return null;
        }
        return new BlendingConfig(method, interpolation, weightRate, favour, executed, fade, weights, taper);
    }

    private SmoothingConfig smoothing(Section s, boolean given) {
        if (s == null) {
            return given ? null : SmoothingConfig.NONE;
        }
        int before = r.count();
        SmoothingConfig.Method method = s.choice("method", SmoothingConfig.Method.values(),
                SmoothingConfig.Method::label, SmoothingConfig.Method.NONE);
        if (method == null) {
            s.acceptAllKeys();
            s.done();
            return null;
        }
        for (SmoothingConfig.Method m : SmoothingConfig.Method.values()) {
            if (m != method && m != SmoothingConfig.Method.NONE && s.has(m.label())) {
                s.get(m.label(), false);
                s.problem(m.label(), "is given but smoothing.method is " + method.label()
                        + "; remove it or change the method");
            }
        }
        SmoothingConfig out = null;
        switch (method) {
            case NONE -> out = SmoothingConfig.NONE;
            case BUTTERWORTH -> {
                Section b = s.section("butterworth", true);
                if (b != null) {
                    Double cutoff = b.positive("cutoff", null);
                    butterworthCutoff = cutoff;
                    b.done();
                    out = cutoff == null ? null : new SmoothingConfig(method, cutoff, 0, 0, 0);
                }
            }
            case ONE_EURO -> {
                Section e = s.section("one_euro", true);
                if (e != null) {
                    Double min = e.positive("min_cutoff", null);
                    Double beta = e.nonNegative("beta", 0.0);
                    Double dc = e.positive("derivative_cutoff", WeftConfig.DEFAULT_DERIVATIVE_CUTOFF);
                    e.done();
                    if (min != null && beta != null && dc != null) {
                        out = new SmoothingConfig(method, 0, min, beta, dc);
                    }
                }
            }
            default -> throw new IllegalStateException(method.toString());
        }
        s.done();
        return r.count() == before ? out : null;
    }

    // ---- watchdog and arming

    private WatchdogConfig watchdog(Section s) {
        if (s == null) {
            return null;
        }
        int before = r.count();
        Double age = s.positive("observation_age_max", null);
        Double remaining = s.nonNegative("plan_remaining_min", 0.0);
        Double latency = s.positive("inference_latency_max", null);
        observationAgeMax = age;
        planRemainingMin = remaining;
        inferenceLatencyMax = latency;
        Integer overruns = s.count("overruns_max", null, 1);
        Double ahead = s.nonNegative("observation_ahead_max", WatchdogConfig.DEFAULT_OBSERVATION_AHEAD_MAX);
        Double slack = s.nonNegative("plan_range_slack", 0.0);
        Integer stall = s.count("stall_periods", WatchdogConfig.DEFAULT_STALL_PERIODS, 1);
        List<WatchdogConfig.Disabled> disabled = new ArrayList<>();
        Map<String, JsonNode> list = s.list("disabled", false);
        if (list != null) {
            Map<WatchdogConfig.Condition, String> firstBy = new HashMap<>();
            for (Map.Entry<String, JsonNode> e : list.entrySet()) {
                Section d = s.element(e.getKey(), e.getValue());
                if (d == null) {
                    continue;
                }
                WatchdogConfig.Condition c = null;
                JsonNode given = d.peek("condition");
                if (given != null && given.isTextual() && given.textValue().equals(WatchdogConfig.Condition.OPERATOR_STOP.label())) {
                    d.get("condition", true);
                    d.problem("condition", "operator_stop cannot be disabled: an operator's stop request always stops");
                } else {
                    c = d.choice("condition", disableable(), WatchdogConfig.Condition::label, null);
                }
                String reason = d.text("reason", null);
                if (c != null) {
                    String first = firstBy.putIfAbsent(c, d.path());
                    if (first != null) {
                        d.problem("condition", c.label() + " is already disabled by " + first);
                    }
                }
                d.done();
                if (c != null && reason != null) {
                    disabled.add(new WatchdogConfig.Disabled(c, reason));
                }
            }
        }
        s.done();
        if (r.count() != before) {
            return null;
        }
        return new WatchdogConfig(age, remaining, latency, overruns, disabled, ahead, slack, stall);
    }

    private static WatchdogConfig.Condition[] disableable() {
        List<WatchdogConfig.Condition> out = new ArrayList<>();
        for (WatchdogConfig.Condition c : WatchdogConfig.Condition.values()) {
            if (c.canDisable()) {
                out.add(c);
            }
        }
        return out.toArray(new WatchdogConfig.Condition[0]);
    }

    private ArmingConfig arming(Section s) {
        if (s == null) {
            return null;
        }
        int before = r.count();
        Double distance = s.positive("pose_distance_max", null);
        Double ramp = s.has("ramp_time") ? s.positive("ramp_time", null) : Double.valueOf(0);
        Long category = s.whole("stop_category", (long) ArmingConfig.DEFAULT_STOP_CATEGORY, 1, 2);
        s.done();
        if (r.count() != before) {
            return null;
        }
        return new ArmingConfig(distance, ramp, (int) (long) category);
    }

    // ---- source, port, telemetry

    private EndpointConfig endpoint(Section s) {
        if (s == null) {
            return null;
        }
        int before = r.count();
        String kind = s.text("kind", null);
        Map<String, Object> options = Map.of();
        JsonNode o = s.get("options", false);
        if (o != null) {
            if (o.isObject()) {
                options = plainMap(o);
            } else {
                s.problem("options", "must be a map, got " + r.describe(s.pathOf("options"), o));
            }
        }
        s.done();
        if (r.count() != before) {
            return null;
        }
        return new EndpointConfig(kind, options, s.pathOf("options"), baseDir);
    }

    private TelemetryConfig telemetry(Section s, boolean given) {
        if (s == null) {
            return given ? null : TelemetryConfig.NONE;
        }
        int before = r.count();
        Optional<Path> file = Optional.empty();
        Boolean overwrite = s.flag("overwrite", false);
        Double drain = s.positive("drain_timeout", TelemetryConfig.DEFAULT_DRAIN_TIMEOUT);
        if (s.has("file")) {
            String text = s.text("file", null);
            if (text != null) {
                Path p = baseDir.resolve(text).normalize();
                // everything but an existing file, which --overwrite may still allow: the run's
                // own check (ConfiguredRun.checkTelemetry) decides that one
                try {
                    TargetFile.resolve(p, true);
                } catch (TargetFile.Refused e) {
                    s.problem("file", e.getMessage());
                }
                file = Optional.of(p);
            }
        }
        String where = r.where(s.pathOf("file"));
        s.done();
        return r.count() == before ? new TelemetryConfig(file, where, overwrite, drain) : null;
    }

    // ---- recording and gates

    /** Null when the section is given with a problem; empty when it is left out. */
    private Optional<RecordingConfig> recording(Section s, boolean given) {
        if (s == null) {
            return given ? null : Optional.empty();
        }
        int before = r.count();
        RecordingFormat format = s.has("format")
                ? s.choice("format", RecordingFormat.values(), RecordingFormat::label, null) : null;
        String time = s.text("time", null);
        Columns observation = columns(s, "observation", format);
        if (observation != null && !observation.matrix()) {
            recordedObservationColumns = observation.names().size();
        }
        Columns action = columns(s, "action", format);
        if (action != null && !action.matrix()) {
            recordedActionColumns = action.names().size();
        }
        List<CameraSpec> cameras = new CameraSection(r).read(s, format);
        s.done();
        if (r.count() != before) {
            return null;
        }
        return Optional.of(new RecordingConfig(Optional.ofNullable(format), time, observation, action, cameras));
    }

    /** A list of column names or dataset paths, or (not for CSV) one dataset path; null with a problem. */
    private Columns columns(Section s, String key, RecordingFormat format) {
        JsonNode n = s.get(key, true);
        if (n == null) {
            return null;
        }
        String path = s.pathOf(key);
        if (n.isArray()) {
            if (n.isEmpty()) {
                s.problem(key, "must name at least one column");
                return null;
            }
            int before = r.count();
            List<String> names = new ArrayList<>();
            Map<String, String> firstByName = new HashMap<>();
            for (int i = 0; i < n.size(); i++) {
                String at = KeyPath.index(path, i);
                String name = columnName(at, n.get(i));
                if (name == null) {
                    continue;
                }
                String first = firstByName.putIfAbsent(name, at);
                if (first != null) {
                    r.add(at, "\"" + name + "\" is already named by " + first);
                }
                names.add(name);
            }
            return r.count() == before ? Columns.list(names) : null;
        }
        if (n.isObject()) {
            s.problem(key, "must be a list of column names or dataset paths, or one 2-D dataset path (HDF5), got a map");
            return null;
        }
        String one = columnName(path, n);
        if (one == null) {
            return null;
        }
        if (format == RecordingFormat.CSV) {
            s.problem(key, "must be a list of column names with format csv (one name stands for a 2-D HDF5 "
                    + "dataset), got \"" + one + "\"");
            return null;
        }
        return Columns.matrix(one);
    }

    /** Text as written (a number or true/false counts as its text), not blank; null with a problem. */
    private String columnName(String path, JsonNode n) {
        if (n == null || n.isNull() || n.isObject() || n.isArray()) {
            r.add(path, "must be a column name or dataset path, got " + r.describe(path, n));
            return null;
        }
        String s = n.isTextual() ? n.textValue() : r.describe(path, n);
        if (s.isBlank()) {
            r.add(path, "must not be empty");
            return null;
        }
        return s;
    }

    /** Null when the section is given with a problem; the defaults when it is left out. */
    private GatesConfig gates(Section s, boolean given) {
        if (s == null) {
            return given ? null : GatesConfig.DEFAULTS;
        }
        int before = r.count();
        List<Double> rms = perJoint(s, "rms_error_max");
        List<Double> max = perJoint(s, "max_error_max");
        Long stops = s.whole("stops_max", 0L, 0, Long.MAX_VALUE);
        Long starved = s.whole("starved_ticks_max", 0L, 0, Long.MAX_VALUE);
        Double p99 = s.has("inference_p99_max") ? s.positive("inference_p99_max", null) : null;
        Long stale = s.has("stale_dropped_max") ? s.whole("stale_dropped_max", null, 0, Long.MAX_VALUE) : null;
        if (s.has("bound_violations_max")) {
            s.get("bound_violations_max", false);
            s.problem("bound_violations_max", "cannot be configured: a dry run in which any command leaves the "
                    + "limiter's bounds always fails");
        }
        s.done();
        if (r.count() != before || rms == null || max == null) {
            return null;
        }
        return new GatesConfig(rms, max, stops, starved,
                p99 == null ? OptionalDouble.empty() : OptionalDouble.of(p99),
                stale == null ? OptionalLong.empty() : OptionalLong.of(stale));
    }

    /**
     * One number {@code >= 0} for every joint, or a list of them in joint order; an empty list when
     * the key is left out; null with a problem, or when the number of joints is not known.
     */
    private List<Double> perJoint(Section s, String key) {
        JsonNode n = s.get(key, false);
        if (n == null) {
            return s.has(key) ? null : List.of();
        }
        String path = s.pathOf(key);
        if (n.isArray()) {
            if (jointCount != null && n.size() != jointCount) {
                s.problem(key, "must have one number per joint (" + jointCount + " in robot.joints), got " + n.size());
                return null;
            }
            List<Double> out = new ArrayList<>();
            for (int i = 0; i < n.size(); i++) {
                Double v = atLeastZero(KeyPath.index(path, i), n.get(i));
                if (v != null) {
                    out.add(v);
                }
            }
            return out.size() == n.size() && jointCount != null ? out : null;
        }
        if (!n.isNumber()) {
            s.problem(key, "must be a number or a list of numbers (one per joint), got " + r.describe(path, n));
            return null;
        }
        Double v = atLeastZero(path, n);
        if (v == null || jointCount == null) {
            return null;
        }
        return Collections.nCopies(jointCount, v);
    }

    private Double atLeastZero(String path, JsonNode n) {
        if (n == null || n.isNull()) {
            r.add(path, "must be a number, got no value");
            return null;
        }
        Double v = r.finite(path, n);
        if (v != null && v < 0) {
            r.add(path, "must be >= 0, got " + r.describe(path, n));
            return null;
        }
        return v;
    }

    /** The recording's column counts against the policy's observation size and the number of joints. */
    private void recordingChecks() {
        if (recordedObservationColumns != null && observationSize != null
                && !recordedObservationColumns.equals(observationSize)) {
            r.add("recording.observation", "must name one column per observation value (policy.observation_size = "
                    + observationSize + "), got " + recordedObservationColumns);
        }
        if (recordedActionColumns != null && jointCount != null && !recordedActionColumns.equals(jointCount)) {
            r.add("recording.action", "must name one column per joint, in joint order (" + jointCount
                    + " in robot.joints), got " + recordedActionColumns);
        }
    }

    // ---- rules between sections

    private void crossChecks() {
        if (controlPeriod == null) {
            return;
        }
        if (observationAgeMax != null && observationAgeMax < controlPeriod) {
            r.add("watchdog.observation_age_max", "must be >= timing.control_period (" + show(controlPeriod)
                    + "), got " + show(observationAgeMax));
        }
        if (butterworthCutoff != null) {
            double nyquist = 1 / (2 * controlPeriod);
            if (!(butterworthCutoff < nyquist)) {
                r.add("smoothing.butterworth.cutoff", "must be below the Nyquist frequency of the control rate ("
                        + show(nyquist) + " Hz = 1 / (2 × timing.control_period)), got " + show(butterworthCutoff));
            }
        }
        if (chunkLength == null) {
            return;
        }
        int k = chunkLength;
        boolean latest = blendMethod == BlendingConfig.Method.LATEST && executedSteps != null && executedSteps > 0;
        if (latest && executedSteps > k) {
            r.add("blending.latest.executed_steps", "must be <= policy.output.chunk_length (" + k + "), got "
                    + executedSteps);
            return;
        }
        if (policyStep == null) {
            return;
        }
        int planned = latest ? executedSteps : k;
        double span = planned * policyStep;
        String spanText = (latest ? "blending.latest.executed_steps" : "policy.output.chunk_length")
                + " × timing.policy_step = " + planned + " × " + show(policyStep) + " s = " + show(span) + " s";
        if (schedule == TimingConfig.QuerySchedule.FIXED && everyTicks != null) {
            double interval = everyTicks * controlPeriod;
            if (interval > span * (1 + TIME_SLACK)) {
                r.add("timing.query.every_ticks", "queries " + show(interval) + " s apart (" + everyTicks
                        + " × timing.control_period) outlast the plan one chunk gives (" + spanText
                        + "), so the plan would run out even with instant inference");
            }
        }
        if (planRemainingMin != null && planRemainingMin >= span * (1 - TIME_SLACK)) {
            r.add("watchdog.plan_remaining_min", "must be below the plan one chunk gives (" + spanText + "), got "
                    + show(planRemainingMin));
        }
        if (inferenceLatencyMax != null && inferenceLatencyMax >= span * (1 - TIME_SLACK)) {
            r.add("watchdog.inference_latency_max", "must be below the plan one chunk gives (" + spanText
                    + ": a chunk that late is entirely in the past), got " + show(inferenceLatencyMax));
        }
    }

    // ---- helpers

    /** A computed number for a message: at most six significant digits, no trailing zeros. */
    static String show(double v) {
        if (!Double.isFinite(v)) {
            return Double.toString(v);
        }
        return new BigDecimal(v).round(new MathContext(6)).stripTrailingZeros().toPlainString();
    }

    private static Map<String, Object> plainMap(JsonNode o) {
        Map<String, Object> m = new LinkedHashMap<>();
        for (Map.Entry<String, JsonNode> e : o.properties()) {
            m.put(e.getKey(), plain(e.getValue()));
        }
        return Collections.unmodifiableMap(m);
    }

    private static Object plain(JsonNode n) {
        if (n.isObject()) {
            return plainMap(n);
        }
        if (n.isArray()) {
            List<Object> l = new ArrayList<>();
            for (JsonNode e : n) {
                l.add(plain(e));
            }
            return Collections.unmodifiableList(l);
        }
        if (n.isTextual()) {
            return n.textValue();
        }
        if (n.isBoolean()) {
            return n.booleanValue();
        }
        if (n.isInt()) {
            return n.intValue();
        }
        if (n.isLong()) {
            return n.longValue();
        }
        if (n.isBigInteger()) {
            return n.bigIntegerValue();
        }
        if (n.isNumber()) {
            return n.doubleValue();
        }
        return null;
    }
}
