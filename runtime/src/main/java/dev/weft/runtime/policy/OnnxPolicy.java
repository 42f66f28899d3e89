package dev.weft.runtime.policy;

import ai.onnxruntime.OnnxJavaType;
import ai.onnxruntime.OnnxTensor;
import ai.onnxruntime.OrtEnvironment;
import ai.onnxruntime.OrtException;
import ai.onnxruntime.OrtSession;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.DoubleBuffer;
import java.nio.FloatBuffer;
import java.nio.LongBuffer;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;

/**
 * Any CPU ONNX model as a {@link Policy}, run through ONNX Runtime.
 *
 * <p>{@link #load} validates the whole binding before anything runs: every model input bound to
 * a source with an element type and shape that fit, the chunk output's layout, K and D against
 * the model's fixed axes and the configuration. It then builds every input tensor once over a
 * direct, native-order buffer and pins the output into a preallocated tensor, so an inference
 * call refills buffers in place and copies the result out; the only allocations left are ONNX
 * Runtime's own small result wrapper. Finally it warms the session up.
 *
 * <p>Threading: {@link #infer} from one thread at a time; {@link #close} once inference stopped.
 */
public final class OnnxPolicy implements Policy {

    private final ModelSignature signature;
    private final OrtSession session;
    private final OrtSession.SessionOptions options;
    private final int observationSize;
    private final int chunkLength;
    /** Actions the model gives per call: K, or 1 for a single-step actor whose action is held. */
    private final int modelSteps;
    private final int actionSize;
    private final Bound[] bound;
    private final Map<String, OnnxTensor> inputs;
    private final Map<String, OnnxTensor> pinned;
    private final OnnxTensor outputTensor;
    private final FloatBuffer outputFloats;
    private final DoubleBuffer outputDoubles;
    private final String outputName;
    private final ChunkLayout layout;
    private final long[] outputShape;
    private final List<InputBinding.History> histories;
    /** The request for a call made with an observation alone (no stream of samples behind it). */
    private final PolicyInput direct;
    private final Conversions conversions;
    private boolean closed;

    private OnnxPolicy(ModelSignature signature, OrtSession session, OrtSession.SessionOptions options, int observationSize,
                       int modelSteps, int holdSteps, int actionSize, Bound[] bound, OnnxTensor outputTensor,
                       String outputName, ChunkLayout layout, long[] outputShape, Conversions conversions) {
        this.signature = signature;
        this.conversions = conversions;
        this.session = session;
        this.options = options;
        this.observationSize = observationSize;
        this.modelSteps = modelSteps;
        this.chunkLength = modelSteps + holdSteps;
        this.actionSize = actionSize;
        this.bound = bound;
        this.outputTensor = outputTensor;
        this.outputName = outputName;
        this.layout = layout;
        this.outputShape = outputShape;
        Map<String, OnnxTensor> in = new HashMap<>();
        List<InputBinding.History> grids = new ArrayList<>();
        for (Bound b : bound) {
            in.put(b.name, b.tensor);
            if (b.binding instanceof InputBinding.History h) {
                b.historyIndex = grids.size();
                grids.add(h);
            }
        }
        this.inputs = in;
        this.histories = List.copyOf(grids);
        this.direct = new PolicyInput(observationSize, histories);
        this.pinned = Map.of(outputName, outputTensor);
        if (outputTensor.getInfo().type == OnnxJavaType.FLOAT) {
            this.outputFloats = directFloats(outputTensor);
            this.outputDoubles = null;
        } else {
            this.outputFloats = null;
            this.outputDoubles = directDoubles(outputTensor);
        }
    }

    /**
     * Loads, validates and warms up a policy.
     *
     * @throws BadInputException naming every problem found (tensor, expected, actual); nothing
     *     is left open when it is thrown
     */
    public static OnnxPolicy load(PolicySpec spec) throws BadInputException {
        byte[] bytes = ModelSignature.readModelFile(spec.model());
        String file = spec.model().toString();
        ModelHeader header = ModelHeader.read(bytes, file);
        ModelSignature.checkExternalData(spec.model(), bytes);
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        OrtSession.SessionOptions options = sessionOptions(spec.session(), file);
        OrtSession session = null;
        List<AutoCloseable> opened = new ArrayList<>();
        try {
            session = ModelSignature.openSession(env, options, spec.model());
            ModelSignature sig = ModelSignature.of(spec.model(), bytes.length, header, session);
            List<Problem> problems = new ArrayList<>();
            List<Plan> plans = planInputs(spec, sig, problems);
            OutputPlan out = planOutput(spec, sig, problems);
            Conversions conversions = out == null ? null
                    : Conversions.plan(spec, session.getMetadata().getCustomMetadata(), out.name, out.d, problems);
            if (!problems.isEmpty()) {
                throw new BadInputException(problems);
            }
            Bound[] bound = new Bound[plans.size()];
            for (int i = 0; i < bound.length; i++) {
                bound[i] = Bound.create(env, plans.get(i), spec.observationSize(), conversions.observation());
                opened.add(bound[i].tensor);
            }
            OnnxTensor outTensor = allocate(env, out.type, out.shape);
            opened.add(outTensor);
            OnnxPolicy p = new OnnxPolicy(sig, session, options, spec.observationSize(), out.k,
                    spec.output().effectiveHoldSteps(), out.d, bound, outTensor, out.name, spec.output().layout(),
                    out.shape, conversions);
            p.warmUp(spec.session().warmupRuns(), file);
            return p;
        } catch (BadInputException e) {
            closeAll(opened, session, options);
            throw e;
        } catch (OrtException | RuntimeException e) {
            closeAll(opened, session, options);
            throw new BadInputException(file, "could not prepare the model for inference: "
                    + ModelSignature.firstLine(e.getMessage()));
        }
    }

    @Override
    public int observationSize() {
        return observationSize;
    }

    /**
     * K: the actions the policy gives per call. For a single-step actor (layout {@code 1xD}) that
     * is 1 plus the steps its action is held for: the action, and then the same action again.
     */
    @Override
    public int chunkLength() {
        return chunkLength;
    }

    @Override
    public int actionSize() {
        return actionSize;
    }

    /** The model's interface as loaded. */
    public ModelSignature signature() {
        return signature;
    }

    /** The name of the output read as the chunk. */
    public String outputName() {
        return outputName;
    }

    /** The layout the output is read with. */
    public ChunkLayout layout() {
        return layout;
    }

    /** The concrete shape of each bound input (dynamic axes resolved), by input name. */
    public Map<String, long[]> boundShapes() {
        Map<String, long[]> m = new LinkedHashMap<>();
        for (Bound b : bound) {
            m.put(b.name, b.shape.clone());
        }
        return m;
    }

    /** The observation values' scale, as resolved from the configuration or the model's metadata. */
    public ValueScale observationScale() {
        return conversions.observation();
    }

    /** The action values' scale, as resolved from the configuration or the model's metadata. */
    public ValueScale actionScale() {
        return conversions.actions();
    }

    /** What the model's action values mean; the chunks {@link #infer} gives are always absolute. */
    public ActionRepresentation actionRepresentation() {
        return conversions.representation();
    }

    /** The concrete output shape. */
    public long[] outputShape() {
        return outputShape.clone();
    }

    @Override
    public List<String> cameras() {
        List<String> out = new ArrayList<>();
        for (Bound b : bound) {
            if (b.binding instanceof InputBinding.Image i && !out.contains(i.camera())) {
                out.add(i.camera());
            }
        }
        return out;
    }

    @Override
    public void attachFrames(String camera, dev.weft.runtime.image.FrameSource frames) {
        boolean found = false;
        for (Bound b : bound) {
            if (b.binding instanceof InputBinding.Image i && i.camera().equals(camera)) {
                if (frames.height() != i.frameHeight() || frames.width() != i.frameWidth()
                        || frames.channels() != i.frameChannels()) {
                    throw new IllegalArgumentException("camera " + camera + ": " + frames.describe()
                            + ", the policy's input '" + b.name + "' is configured for " + i.frameHeight() + " × "
                            + i.frameWidth() + " × " + i.frameChannels());
                }
                b.frames = frames;
                found = true;
            }
        }
        if (!found) {
            throw new IllegalArgumentException("the policy reads no camera named " + camera + "; it reads "
                    + cameras());
        }
    }

    /**
     * The stamp of the frame the last call read from {@code camera} (ns, the loop's clock), or −1.
     * Read on the thread that calls {@code infer}.
     */
    public long lastFrameStamp(String camera) {
        for (Bound b : bound) {
            if (b.binding instanceof InputBinding.Image i && i.camera().equals(camera)) {
                return b.frameStamp;
            }
        }
        return -1;
    }

    /** The history inputs' grids, in model input order. */
    @Override
    public List<InputBinding.History> histories() {
        return histories;
    }

    /**
     * One call with an observation alone, outside a control loop (a latency probe, a benchmark):
     * every history input holds this observation at each of its grid points.
     */
    @Override
    public void infer(double[] observation, long tick, double[] chunk) {
        System.arraycopy(observation, 0, direct.observation(), 0, observationSize);
        direct.stamp(tick, 0);
        direct.historiesFromObservation();
        infer(direct, chunk);
    }

    @Override
    public void infer(PolicyInput input, double[] chunk) {
        if (closed) {
            throw new IllegalStateException("policy is closed");
        }
        boolean isDirect = input == direct;
        for (Bound b : bound) {
            b.fill(input, isDirect);
        }
        try (OrtSession.Result ignored = session.run(inputs, pinned)) {
            int n = modelSteps * actionSize;
            if (outputFloats != null) {
                for (int i = 0; i < n; i++) {
                    chunk[i] = outputFloats.get(i);
                }
            } else {
                for (int i = 0; i < n; i++) {
                    chunk[i] = outputDoubles.get(i);
                }
            }
            conversions.toTargets(input.observation(), chunk, modelSteps, actionSize);
            // a single-step actor's action, held: the same target for the steps that follow
            for (int j = modelSteps; j < chunkLength; j++) {
                System.arraycopy(chunk, 0, chunk, j * actionSize, actionSize);
            }
        } catch (OrtException e) {
            throw new IllegalStateException("ONNX Runtime failed: " + e.getMessage(), e);
        }
    }

    @Override
    public void close() {
        if (closed) {
            return;
        }
        closed = true;
        List<AutoCloseable> all = new ArrayList<>();
        for (Bound b : bound) {
            all.add(b.tensor);
        }
        all.add(outputTensor);
        closeAll(all, session, options);
    }

    private void warmUp(int runs, String file) throws BadInputException {
        double[] obs = new double[observationSize];
        double[] chunk = new double[chunkLength * actionSize];
        try {
            for (int i = 0; i < runs; i++) {
                infer(obs, 0, chunk);
            }
        } catch (RuntimeException e) {
            close();
            throw new BadInputException(file, "warm-up inference failed: " + ModelSignature.firstLine(e.getMessage()));
        }
        for (Bound b : bound) {
            b.restart();
        }
    }

    private static OrtSession.SessionOptions sessionOptions(SessionSettings s, String file) throws BadInputException {
        OrtSession.SessionOptions o = new OrtSession.SessionOptions();
        try {
            o.setIntraOpNumThreads(s.intraOpThreads());
            o.setInterOpNumThreads(1);
            o.setExecutionMode(OrtSession.SessionOptions.ExecutionMode.SEQUENTIAL);
            o.setOptimizationLevel(switch (s.optimization()) {
                case NONE -> OrtSession.SessionOptions.OptLevel.NO_OPT;
                case BASIC -> OrtSession.SessionOptions.OptLevel.BASIC_OPT;
                case EXTENDED -> OrtSession.SessionOptions.OptLevel.EXTENDED_OPT;
                case ALL -> OrtSession.SessionOptions.OptLevel.ALL_OPT;
            });
            String spin = s.spinning() ? "1" : "0";
            o.addConfigEntry("session.intra_op.allow_spinning", spin);
            o.addConfigEntry("session.inter_op.allow_spinning", spin);
            return o;
        } catch (OrtException e) {
            o.close();
            throw new BadInputException(file, "ONNX Runtime refused the session options: " + e.getMessage());
        }
    }

    // ---------------------------------------------------------------------------------- planning

    /** A validated input: its binding, element type and concrete shape. */
    private record Plan(String name, InputBinding binding, TensorElement element, long[] shape,
                        dev.weft.runtime.image.ImagePreprocessor image) {
        Plan(String name, InputBinding binding, TensorElement element, long[] shape) {
            this(name, binding, element, shape, null);
        }
    }

    private record OutputPlan(String name, TensorElement type, long[] shape, int k, int d) {
    }

    private static List<Plan> planInputs(PolicySpec spec, ModelSignature sig, List<Problem> problems) {
        String file = spec.model().toString();
        Map<String, TensorSignature> byName = new LinkedHashMap<>();
        for (TensorSignature t : sig.inputs()) {
            byName.put(t.name(), t);
        }
        for (String name : spec.inputs().keySet()) {
            if (!byName.containsKey(name)) {
                problems.add(new Problem(file + " input '" + name + "'",
                        "the model has no such input; its inputs are " + names(sig.inputs())));
            }
        }
        List<Plan> plans = new ArrayList<>();
        for (TensorSignature t : sig.inputs()) {
            String where = file + " input '" + t.name() + "'";
            InputBinding b = spec.inputs().get(t.name());
            if (b == null) {
                problems.add(new Problem(where, "not bound to a source (" + t.elementLabel() + " " + t.shapeText()
                        + "); bind it to observation, history, constant, noise, step or camera"));
                continue;
            }
            if (!t.isTensor()) {
                problems.add(new Problem(where, "is a " + t.kind() + ", weft binds tensors only"));
                continue;
            }
            TensorElement e = TensorElement.of(t.type());
            boolean typeOk = switch (b.kind()) {
                case OBSERVATION, HISTORY, NOISE -> e == TensorElement.FLOAT32 || e == TensorElement.FLOAT64;
                case CONSTANT, STEP -> e != null && e != TensorElement.UINT8;
                case CAMERA -> e == TensorElement.FLOAT32 || e == TensorElement.UINT8;
            };
            if (!typeOk) {
                String allowed = (b instanceof InputBinding.Constant || b instanceof InputBinding.Step)
                        ? "float32, float64 or int64" : b instanceof InputBinding.Image ? "float32 or uint8"
                        : "float32 or float64";
                problems.add(new Problem(where, "bound to " + kindName(b) + ", which needs " + allowed
                        + ", but the model wants " + t.elementLabel()));
                continue;
            }
            if (b instanceof InputBinding.Image image) {
                Plan p = planImage(t, image, e, where, problems);
                if (p != null) {
                    plans.add(p);
                }
                continue;
            }
            int needed = b.valueCount(spec.observationSize());
            if (b instanceof InputBinding.Noise n && n.count() == 0) {
                if (!isFixed(t.shape())) {
                    problems.add(new Problem(where, "bound to noise, but the model's shape " + t.shapeText()
                            + " has dynamic axes; give the noise a value count"));
                    continue;
                }
                needed = (int) elements(t.shape());
            }
            long[] shape = resolve(t.shape(), needed);
            if (shape == null) {
                problems.add(new Problem(where, "shape " + t.shapeText() + " cannot hold the " + needed
                        + " values that " + kindName(b) + " gives" + countHint(b, spec.observationSize())));
                continue;
            }
            plans.add(new Plan(t.name(), b, e, shape));
        }
        return plans;
    }

    /**
     * An image input: a fixed {@code [1, C, H, W]} (or {@code [1, H, W, C]}) tensor, the batch axis
     * 1 or dynamic, {@code C} the camera's channels; the preprocessing resizes to its {@code H × W}.
     */
    private static Plan planImage(TensorSignature t, InputBinding.Image image, TensorElement e, String where,
                                  List<Problem> problems) {
        long[] s = t.shape();
        boolean nchw = image.layout() == dev.weft.runtime.image.ImagePreprocessor.Layout.NCHW;
        String axes = nchw ? "[1, C, H, W]" : "[1, H, W, C]";
        if (s.length != 4 || (s[0] >= 0 && s[0] != 1) || s[1] <= 0 || s[2] <= 0 || s[3] <= 0) {
            problems.add(new Problem(where, "bound to camera " + image.camera() + " with layout "
                    + image.layout().label() + ", which needs a shape " + axes
                    + " with H, W and C fixed, but the model's shape is " + t.shapeText()));
            return null;
        }
        long c = nchw ? s[1] : s[3];
        long h = nchw ? s[2] : s[1];
        long w = nchw ? s[3] : s[2];
        if (c != image.frameChannels()) {
            problems.add(new Problem(where, "has " + c + " channels (C of " + axes + ", layout "
                    + image.layout().label() + "), camera " + image.camera() + " gives " + image.frameChannels()
                    + (nchw && s[3] == image.frameChannels() ? "; is the layout nhwc?" : "")
                    + (!nchw && s[1] == image.frameChannels() ? "; is the layout nchw?" : "")));
            return null;
        }
        try {
            dev.weft.runtime.image.ImagePreprocessor pre = new dev.weft.runtime.image.ImagePreprocessor(image.settings(
                    (int) h, (int) w, e == TensorElement.UINT8 ? dev.weft.runtime.image.ImagePreprocessor.Element.UINT8
                            : dev.weft.runtime.image.ImagePreprocessor.Element.FLOAT32));
            return new Plan(t.name(), image, e, new long[] {1, s[1], s[2], s[3]}, pre);
        } catch (IllegalArgumentException bad) {
            problems.add(new Problem(where, "camera " + image.camera() + ": " + bad.getMessage()));
            return null;
        }
    }

    private static OutputPlan planOutput(PolicySpec spec, ModelSignature sig, List<Problem> problems) {
        String file = spec.model().toString();
        OutputSpec o = spec.output();
        TensorSignature t = null;
        if (o.name() == null) {
            if (sig.outputs().size() == 1) {
                t = sig.outputs().get(0);
            } else {
                problems.add(new Problem(file + " outputs", "the model has " + sig.outputs().size()
                        + " outputs (" + names(sig.outputs()) + "); name the one that is the chunk"));
                return null;
            }
        } else {
            for (TensorSignature s : sig.outputs()) {
                if (s.name().equals(o.name())) {
                    t = s;
                }
            }
            if (t == null) {
                problems.add(new Problem(file + " output '" + o.name() + "'",
                        "the model has no such output; its outputs are " + names(sig.outputs())));
                return null;
            }
        }
        String where = file + " output '" + t.name() + "'";
        TensorElement e = t.isTensor() ? TensorElement.of(t.type()) : null;
        if (e != TensorElement.FLOAT32 && e != TensorElement.FLOAT64) {
            problems.add(new Problem(where, "a chunk must be float32 or float64, the model gives " + t.elementLabel()));
            return null;
        }
        long[] s = t.shape();
        ChunkLayout layout = o.layout();
        if (s.length != layout.rank()) {
            problems.add(new Problem(where, "layout " + layout.label() + " needs rank " + layout.rank()
                    + ", the model's shape " + t.shapeText() + " has rank " + s.length));
            return null;
        }
        int before = problems.size();
        long k;
        long d;
        long[] shape = s.clone();
        switch (layout) {
            case BATCH_STEPS_VALUES -> {
                batchAxis(s, 0, t, where, problems);
                k = axis(s[1], o.chunkLength(), "K", 1, t, where, problems);
                d = axis(s[2], o.actionSize(), "D", 2, t, where, problems);
                shape = new long[] {1, k, d};
            }
            case STEPS_VALUES -> {
                k = axis(s[0], o.chunkLength(), "K", 0, t, where, problems);
                d = axis(s[1], o.actionSize(), "D", 1, t, where, problems);
                shape = new long[] {k, d};
            }
            case SINGLE_ACTION -> {
                batchAxis(s, 0, t, where, problems);
                if (o.chunkLength() > 1) {
                    problems.add(new Problem(where, "layout 1xD is one action (K = 1), the configuration says K = "
                            + o.chunkLength()));
                }
                k = 1;
                d = axis(s[1], o.actionSize(), "D", 1, t, where, problems);
                shape = new long[] {1, d};
            }
            case BATCH_FLAT -> {
                batchAxis(s, 0, t, where, problems);
                long n = s[1];
                k = o.chunkLength();
                d = o.actionSize();
                if (n < 0) {
                    if (k == 0 || d == 0) {
                        problems.add(new Problem(where, "axis 1 of " + t.shapeText()
                                + " is dynamic; layout 1xKD then needs both K and D configured"));
                    }
                } else if (k == 0 && d == 0) {
                    problems.add(new Problem(where, "layout 1xKD of " + t.shapeText()
                            + " needs K or D configured to split " + n + " values"));
                } else if (k == 0) {
                    k = n % d == 0 ? n / d : -1;
                } else if (d == 0) {
                    d = n % k == 0 ? n / k : -1;
                }
                if (n >= 0 && (k <= 0 || d <= 0 || k * d != n) && problems.size() == before) {
                    problems.add(new Problem(where, "layout 1xKD: " + n + " values do not split into K = "
                            + (k > 0 ? k : o.chunkLength()) + " actions of D = " + (d > 0 ? d : o.actionSize())));
                }
                shape = new long[] {1, k * d};
            }
            default -> throw new IllegalStateException(layout.toString());
        }
        if (problems.size() != before) {
            return null;
        }
        return new OutputPlan(t.name(), e, shape, (int) k, (int) d);
    }

    private static void batchAxis(long[] s, int i, TensorSignature t, String where, List<Problem> problems) {
        if (s[i] >= 0 && s[i] != 1) {
            problems.add(new Problem(where, "axis " + i + " of " + t.shapeText() + " is a batch of " + s[i]
                    + "; weft runs one observation at a time and needs 1 or a dynamic axis"));
        }
    }

    private static long axis(long model, int configured, String what, int index, TensorSignature t, String where,
                             List<Problem> problems) {
        if (model >= 0) {
            if (configured > 0 && configured != model) {
                problems.add(new Problem(where, "the model fixes " + what + " = " + model + " (axis " + index + " of "
                        + t.shapeText() + "), the configuration says " + what + " = " + configured));
            }
            if (model == 0) {
                problems.add(new Problem(where, what + " = 0 (axis " + index + " of " + t.shapeText() + ")"));
            }
            return model;
        }
        if (configured == 0) {
            problems.add(new Problem(where, "axis " + index + " of " + t.shapeText() + " is dynamic; configure " + what));
        }
        return configured;
    }

    /**
     * Resolves dynamic axes so that the shape holds {@code needed} values: the last dynamic axis
     * takes what the fixed axes leave, the others become 1. Null when no resolution fits.
     */
    static long[] resolve(long[] model, long needed) {
        long fixed = 1;
        int lastDynamic = -1;
        for (int i = 0; i < model.length; i++) {
            if (model[i] < 0) {
                lastDynamic = i;
            } else {
                fixed *= model[i];
            }
        }
        long[] shape = model.clone();
        if (lastDynamic < 0) {
            return fixed == needed ? shape : null;
        }
        if (fixed == 0 || needed % fixed != 0) {
            return null;
        }
        for (int i = 0; i < shape.length; i++) {
            if (shape[i] < 0) {
                shape[i] = i == lastDynamic ? needed / fixed : 1;
            }
        }
        return shape;
    }

    private static boolean isFixed(long[] shape) {
        for (long d : shape) {
            if (d < 0) {
                return false;
            }
        }
        return true;
    }

    private static long elements(long[] shape) {
        long n = 1;
        for (long d : shape) {
            n *= d;
        }
        return n;
    }

    private static String countHint(InputBinding b, int observationSize) {
        if (b instanceof InputBinding.History h) {
            return " (" + h.depth() + " observations of " + observationSize + ")";
        }
        return "";
    }

    static String kindName(InputBinding b) {
        return b.kind().label();
    }

    private static String names(List<TensorSignature> ts) {
        StringBuilder b = new StringBuilder();
        for (TensorSignature t : ts) {
            if (b.length() > 0) {
                b.append(", ");
            }
            b.append('\'').append(t.name()).append("' ").append(t.elementLabel()).append(' ').append(t.shapeText());
        }
        return b.toString();
    }

    // -------------------------------------------------------------------------------- allocation

    private static OnnxTensor allocate(OrtEnvironment env, TensorElement e, long[] shape) throws OrtException {
        int n = (int) elements(shape);
        ByteBuffer buf = ByteBuffer.allocateDirect(Math.max(1, n) * e.bytes).order(ByteOrder.nativeOrder());
        return switch (e) {
            case FLOAT32 -> OnnxTensor.createTensor(env, buf.asFloatBuffer(), shape);
            case FLOAT64 -> OnnxTensor.createTensor(env, buf.asDoubleBuffer(), shape);
            case INT64 -> OnnxTensor.createTensor(env, buf.asLongBuffer(), shape);
            case UINT8 -> OnnxTensor.createTensor(env, buf, shape, OnnxJavaType.UINT8);
        };
    }

    private static FloatBuffer directFloats(OnnxTensor t) {
        return t.getBufferRef().map(b -> (FloatBuffer) b).orElseThrow();
    }

    private static DoubleBuffer directDoubles(OnnxTensor t) {
        return t.getBufferRef().map(b -> (DoubleBuffer) b).orElseThrow();
    }

    private static void closeAll(List<AutoCloseable> tensors, OrtSession session, OrtSession.SessionOptions options) {
        for (AutoCloseable c : tensors) {
            try {
                c.close();
            } catch (Exception ignored) {
                // closing is best effort; the first failure is what the caller reports
            }
        }
        if (session != null) {
            try {
                session.close();
            } catch (OrtException ignored) {
                // as above
            }
        }
        options.close();
    }

    /** One input tensor, its buffer, and the state its source keeps (the noise generator). */
    private static final class Bound {
        final String name;
        final InputBinding binding;
        final long[] shape;
        final OnnxTensor tensor;
        final FloatBuffer floats;
        final DoubleBuffer doubles;
        final LongBuffer longs;
        final int count;
        final int observationSize;
        final ValueScale scale;
        SplittableRandom random;
        /** Which of the request's history grids this input reads; −1 for other sources. */
        int historyIndex = -1;
        /** An image input's preprocessing, its frame slot, and the camera's frames (attached by the run). */
        final dev.weft.runtime.image.ImagePreprocessor image;
        final ByteBuffer frame;
        final ByteBuffer bytes;
        dev.weft.runtime.image.FrameSource frames;
        /** The stamp of the frame the last call read, or −1. */
        long frameStamp = -1;

        private Bound(String name, InputBinding binding, long[] shape, OnnxTensor tensor, int count, int observationSize,
                      ValueScale scale, dev.weft.runtime.image.ImagePreprocessor image) {
            this.name = name;
            this.image = image;
            this.frame = image == null ? null : ByteBuffer.allocateDirect(image.frameBytes());
            this.scale = scale;
            this.binding = binding;
            this.shape = shape;
            this.tensor = tensor;
            this.count = count;
            this.observationSize = observationSize;
            java.nio.Buffer ref = tensor.getBufferRef().orElseThrow();
            this.floats = ref instanceof FloatBuffer f ? f : null;
            this.doubles = ref instanceof DoubleBuffer d ? d : null;
            this.longs = ref instanceof LongBuffer l ? l : null;
            this.bytes = ref instanceof ByteBuffer u ? u : null;
            this.random = binding instanceof InputBinding.Noise n ? new SplittableRandom(n.seed()) : null;
            if (binding instanceof InputBinding.Constant c) {
                double[] v = c.values();
                for (int i = 0; i < v.length; i++) {
                    put(i, v[i]);
                }
            }
        }

        static Bound create(OrtEnvironment env, Plan p, int observationSize, ValueScale scale) throws OrtException {
            OnnxTensor t = allocate(env, p.element(), p.shape());
            return new Bound(p.name(), p.binding(), p.shape(), t, (int) elements(p.shape()), observationSize, scale,
                    p.image());
        }

        void restart() {
            if (binding instanceof InputBinding.Noise n) {
                // a fresh generator from the same seed: warm-up draws do not shift the sequence
                random = new SplittableRandom(n.seed());
            }
        }

        void fill(PolicyInput input, boolean direct) {
            switch (binding.kind()) {
                case CAMERA -> fillImage(input, direct);
                case OBSERVATION -> {
                    double[] observation = input.observation();
                    for (int i = 0; i < count; i++) {
                        put(i, scale.normalise(i, observation[i]));
                    }
                }
                case HISTORY -> {
                    // grid points one after another, each observationSize values: value i of a point
                    // is normalised as observation value i
                    double[] h = input.history(historyIndex);
                    for (int at = 0; at < count; at += observationSize) {
                        for (int i = 0; i < observationSize; i++) {
                            put(at + i, scale.normalise(i, h[at + i]));
                        }
                    }
                }
                case NOISE -> {
                    double stddev = ((InputBinding.Noise) binding).stddev();
                    for (int i = 0; i < count; i++) {
                        put(i, random.nextGaussian() * stddev);
                    }
                }
                case STEP -> put(0, input.tick());
                case CONSTANT -> {
                    // written once at construction
                }
            }
        }

        /**
         * The newest frame at or before the observation's time, preprocessed into the tensor; a call
         * outside a run (warm-up, latency probe) reads a black frame.
         */
        private void fillImage(PolicyInput input, boolean direct) {
            String camera = ((InputBinding.Image) binding).camera();
            if (!direct) {
                if (frames == null) {
                    throw new IllegalStateException("camera " + camera + ": the run gave the policy no frames");
                }
                long stamp = frames.copyAtOrBefore(input.timeNanos(), frame);
                if (stamp < 0) {
                    throw new IllegalStateException("camera " + camera + ": no frame stamped at or before the"
                            + " observation's time " + input.timeNanos() + " ns (" + frames.describe() + ")");
                }
                frameStamp = stamp;
            }
            if (floats != null) {
                image.apply(frame, 0, floats);
            } else {
                image.apply(frame, 0, bytes);
            }
        }

        private void put(int i, double v) {
            if (floats != null) {
                floats.put(i, (float) v);
            } else if (doubles != null) {
                doubles.put(i, v);
            } else {
                longs.put(i, (long) v);
            }
        }

        @Override
        public String toString() {
            return name + " " + kindName(binding) + " " + Arrays.toString(shape);
        }
    }
}
