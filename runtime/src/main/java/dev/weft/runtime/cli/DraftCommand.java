package dev.weft.runtime.cli;

import ai.onnxruntime.OnnxJavaType;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.policy.ModelSignature;
import dev.weft.runtime.policy.TensorSignature;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.FileAlreadyExistsException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import java.util.regex.Pattern;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Parameters;

/**
 * {@code weft draft MODEL CONFIG}: writes a starting configuration for a model. Inputs are bound
 * to guessed sources, the output's layout, K and D are read from the model's fixed axes, and
 * every value a person must decide (joint limits, periods, watchdog bounds, anything the model
 * leaves open) is the placeholder {@value #PLACEHOLDER}, which the configuration reader refuses,
 * so the draft cannot run until each one is filled in. Never replaces an existing file.
 */
@Command(name = "draft", mixinStandardHelpOptions = true,
        description = "Write a starting configuration for an ONNX model: inputs bound to guessed sources, the output's"
                + " layout, K and D from the model, and " + DraftCommand.PLACEHOLDER + " (with a comment) wherever a"
                + " person must decide, such as joint limits. Refuses to replace an existing file.")
final class DraftCommand implements Callable<Integer> {

    /** What the draft writes where a person must decide; not a valid value for any key it is used at. */
    static final String PLACEHOLDER = "DECIDE";

    /** Column the comments start at. */
    private static final int COMMENT_COLUMN = 40;

    private static final Pattern PLAIN = Pattern.compile("[A-Za-z0-9_][A-Za-z0-9_./-]*");

    @Parameters(index = "0", paramLabel = "MODEL", description = "the ONNX model file")
    Path model;

    @Parameters(index = "1", paramLabel = "CONFIG", description = "the configuration file to write (must not exist)")
    Path config;

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public Integer call() {
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        try {
            if (Files.exists(config, java.nio.file.LinkOption.NOFOLLOW_LINKS)) {
                throw new BadInputException(config.toString(), "already exists; weft draft never replaces a file"
                        + " (name another, or move it away)");
            }
            ModelSignature sig = ModelSignature.read(model);
            Draft d = draft(sig, modelPathFrom(config, model));
            try {
                Files.writeString(config, d.text(), StandardCharsets.UTF_8, StandardOpenOption.CREATE_NEW,
                        StandardOpenOption.WRITE);
            } catch (FileAlreadyExistsException e) {
                throw new BadInputException(config.toString(), "already exists; weft draft never replaces a file"
                        + " (name another, or move it away)");
            } catch (java.nio.file.NoSuchFileException e) {
                throw new BadInputException(config.toString(), "cannot write: its folder does not exist");
            } catch (IOException e) {
                throw new BadInputException(config.toString(), "cannot write: " + e.getMessage());
            }
            out.printf("wrote %s: %d values to decide (marked %s), %d guesses to check (marked guess)%n", config,
                    d.decisions(), PLACEHOLDER, d.guesses());
            out.printf("next: fill them in, then weft check %s%n", config);
            out.flush();
            return 0;
        } catch (BadInputException e) {
            err.println("weft draft: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        }
    }

    /** The model as the configuration names it: relative to the configuration's folder when possible. */
    static String modelPathFrom(Path config, Path model) {
        Path folder = config.toAbsolutePath().normalize().getParent();
        Path m = model.toAbsolutePath().normalize();
        try {
            return folder.relativize(m).toString();
        } catch (IllegalArgumentException e) {
            return m.toString();
        }
    }

    /** A written draft and how many places in it need a person. */
    record Draft(String text, int decisions, int guesses) {
    }

    /** How one model input is bound in the draft. */
    private record Guess(String binding, String why) {
    }

    /** Builds the draft's text for a model whose path, as the configuration names it, is {@code modelPath}. */
    static Draft draft(ModelSignature sig, String modelPath) {
        Writer w = new Writer();
        w.comment("A starting configuration for " + sig.file().getFileName() + ", written by weft draft.");
        w.comment("Every " + PLACEHOLDER + " is a value a person must choose; weft refuses the file until each is");
        w.comment("filled in. Every value marked \"guess\" was guessed from the model's inputs and outputs:");
        w.comment("check it. Then run: weft check <this file>. The keys: docs/configuration.md.");
        w.comment("weft is not a safety-rated component: a hardware e-stop and a safety-rated controller stay");
        w.comment("in charge of the machine.");

        // ---- output: the chunk, its layout, K and D
        TensorSignature chunk = chunkOutput(sig.outputs());
        String layout = PLACEHOLDER;
        String layoutWhy = "could not tell how " + (chunk == null ? "any output" : "'" + chunk.name() + "'")
                + " holds a chunk: 1xKxD, KxD, 1xKD or 1xD (docs/policies.md)";
        long k = -1;
        long d = -1;
        String kAxis = null;
        String dAxis = null;
        if (chunk != null) {
            long[] s = chunk.shape();
            String shape = chunk.shapeText();
            if (s.length == 3) {
                layout = "1xKxD";
                layoutWhy = "from " + shape;
                k = s[1];
                d = s[2];
                kAxis = "axis 1";
                dAxis = "axis 2";
            } else if (s.length == 2 && s[0] > 1) {
                layout = "KxD";
                layoutWhy = "from " + shape;
                k = s[0];
                d = s[1];
                kAxis = "axis 0";
                dAxis = "axis 1";
            } else if (s.length == 2) {
                layout = "1xD";
                layoutWhy = "guess: " + shape + " read as one action; a flat chunk would be 1xKD with chunk_length";
                k = 1;
                d = s[1];
                dAxis = "axis 1";
            }
        }
        boolean layoutGuessed = layoutWhy.startsWith("guess");

        // ---- inputs
        long observationSize = -1;
        String observationName = null;
        TensorSignature observation = observationInput(sig.inputs());
        if (observation != null) {
            observationName = observation.name();
            observationSize = fixedCount(observation);
        }

        // ---- robot
        w.line(0, "robot:", null);
        w.guess(1, "name: robot", "your robot's name");
        int joints = d > 0 ? (int) d : 1;
        w.line(1, "joints:", d > 0 ? "D = " + d + " values per action (" + dAxis + "), one joint each, in action order"
                : "the model does not fix D: list one joint per action value, in action order");
        for (int j = 0; j < joints; j++) {
            w.guess(2, "- name: joint_" + j, "rename");
            w.decide(3, "position: {min: " + PLACEHOLDER + ", max: " + PLACEHOLDER + "}",
                    "rad or m, from the robot's data sheet", 2);
            w.decide(3, "velocity: " + PLACEHOLDER, "rad/s or m/s, > 0", 1);
            w.decide(3, "acceleration: " + PLACEHOLDER, "rad/s² or m/s², > 0", 1);
            w.decide(3, "jerk: " + PLACEHOLDER, "rad/s³ or m/s³, > 0", 1);
        }

        // ---- timing
        w.line(0, "timing:", null);
        w.decide(1, "control_period: " + PLACEHOLDER, "seconds: the control loop's period (0.002 is 500 Hz)", 1);
        w.decide(1, "policy_step: " + PLACEHOLDER, "seconds: the time between two actions of a chunk, as the policy was"
                + " trained", 1);
        w.guess(1, "query: {schedule: when_idle}", "the next request as soon as the worker is free");

        // ---- cameras: one per image input
        List<TensorSignature> images = new java.util.ArrayList<>();
        for (TensorSignature in : sig.inputs()) {
            if (imageLayout(in) != null) {
                images.add(in);
            }
        }
        if (!images.isEmpty()) {
            w.line(0, "cameras:", "one stream per image input; the frames' own size, not the model's");
            for (int i = 0; i < images.size(); i++) {
                TensorSignature in = images.get(i);
                w.guess(1, "camera_" + i + ":", "for input '" + in.name() + "'; rename");
                w.decide(2, "height: " + PLACEHOLDER, "the camera's frame rows", 1);
                w.decide(2, "width: " + PLACEHOLDER, "the camera's frame columns", 1);
                w.guess(2, "pixel_format: " + (imageChannels(in) == 1 ? "grey8" : "rgb8"), "rgb8, bgr8 or grey8");
                w.decide(2, "age_max: " + PLACEHOLDER, "seconds: the oldest frame the robot may act on", 1);
                w.decide(2, "source: {kind: shared_memory, file: " + PLACEHOLDER + "}",
                        "the frame file the camera process writes (docs/ports.md)", 1);
            }
        }

        // ---- policy
        w.line(0, "policy:", null);
        w.line(1, "model: " + quote(modelPath), null);
        if (observationSize > 0) {
            w.line(1, "observation_size: " + observationSize, "from input '" + observationName + "' "
                    + observation.shapeText());
        } else {
            w.decide(1, "observation_size: " + PLACEHOLDER, observation == null
                    ? "no input looks like an observation vector"
                    : "input '" + observationName + "' " + observation.shapeText() + " leaves its size open", 1);
        }
        w.line(1, "inputs:", null);
        for (TensorSignature in : sig.inputs()) {
            Guess g = in == observation ? new Guess("{source: observation}",
                    in.elementLabel() + " " + in.shapeText() + ": the observation vector")
                    : images.contains(in) ? imageGuess(in, images.indexOf(in)) : bind(in, observationSize);
            String text = quote(in.name()) + ": " + g.binding();
            if (g.binding().contains(PLACEHOLDER)) {
                w.decide(2, text, g.why(), 1);
            } else {
                w.guess(2, text, g.why());
            }
        }
        w.line(1, "output:", null);
        if (chunk != null) {
            if (sig.outputs().size() > 1) {
                w.guess(2, "name: " + quote(chunk.name()), "the model has " + sig.outputs().size()
                        + " outputs; this one reads as a chunk");
            } else {
                w.line(2, "name: " + quote(chunk.name()), null);
            }
        }
        if (layout.equals(PLACEHOLDER)) {
            w.decide(2, "layout: " + PLACEHOLDER, layoutWhy, 1);
        } else if (layoutGuessed) {
            w.guess(2, "layout: " + layout, layoutWhy.substring("guess: ".length()));
        } else {
            w.line(2, "layout: " + layout, layoutWhy);
        }
        if (!layout.equals(PLACEHOLDER) && !layout.equals("1xD")) {
            if (k > 0) {
                w.line(2, "chunk_length: " + k, "K, fixed by the model (" + kAxis + ")");
            } else {
                w.decide(2, "chunk_length: " + PLACEHOLDER, "K: the model leaves " + kAxis + " open", 1);
            }
        }
        if (d > 0) {
            w.line(2, "action_size: " + d, "D, fixed by the model (" + dAxis + ")");
        }

        // ---- watchdog, arming
        w.line(0, "watchdog:", null);
        w.decide(1, "observation_age_max: " + PLACEHOLDER, "seconds: the oldest observation the policy may act on;"
                + " >= control_period", 1);
        w.decide(1, "inference_latency_max: " + PLACEHOLDER, "seconds: weft check measures the model; below the plan"
                + " one chunk gives", 1);
        w.guess(1, "overruns_max: 3", "missed deadlines in a row before a stop");
        w.line(0, "arming:", null);
        w.decide(1, "pose_distance_max: " + PLACEHOLDER, "rad or m: how far the measured pose may be from the"
                + " first target", 1);

        // ---- source and port: the simulated plant when it can feed the observation
        boolean simPositions = observationSize > 0 && observationSize == joints;
        boolean simWithVelocities = observationSize > 0 && observationSize == 2L * joints;
        if (simPositions || simWithVelocities) {
            w.line(0, "source:", null);
            w.guess(1, "kind: sim", "the simulated plant observes " + (simPositions ? "the joint positions"
                    : "the joint positions, then velocities") + "; for a robot: udp (docs/ports.md)");
            w.line(0, "port:", null);
            w.guess(1, "kind: sim", "nothing leaves weft; for a robot: udp (docs/ports.md)");
            if (simWithVelocities) {
                w.line(1, "options: {velocities: true}", "the plant reports velocities after the positions");
            }
        } else {
            w.line(0, "source:", null);
            w.guess(1, "kind: embedded", "observations from your own process (Weft.offer), or udp (docs/ports.md)");
            w.line(0, "port:", null);
            w.guess(1, "kind: discard", "nothing leaves weft; for a robot: udp (docs/ports.md)");
        }
        return new Draft(w.text(), w.decisions, w.guesses);
    }

    /** The output that reads as a chunk: the only one, else the first a layout fits. */
    private static TensorSignature chunkOutput(List<TensorSignature> outputs) {
        if (outputs.size() == 1) {
            return outputs.get(0);
        }
        for (TensorSignature t : outputs) {
            if (t.chunkReading() != null) {
                return t;
            }
        }
        return null;
    }

    /**
     * {@code nchw} or {@code nhwc} for an input that reads as an image (rank 4, float32 or uint8,
     * 1 or 3 channels on axis 1 or 3, height and width fixed), else null.
     */
    static String imageLayout(TensorSignature t) {
        long[] s = t.shape();
        if (!t.isTensor() || s.length != 4 || (t.type() != OnnxJavaType.FLOAT && t.type() != OnnxJavaType.UINT8)) {
            return null;
        }
        boolean nchw = (s[1] == 1 || s[1] == 3) && s[2] > 1 && s[3] > 1;
        boolean nhwc = (s[3] == 1 || s[3] == 3) && s[1] > 1 && s[2] > 1;
        return nchw ? "nchw" : nhwc ? "nhwc" : null;
    }

    private static long imageChannels(TensorSignature t) {
        return "nchw".equals(imageLayout(t)) ? t.shape()[1] : t.shape()[3];
    }

    private static Guess imageGuess(TensorSignature t, int camera) {
        String layout = imageLayout(t);
        long c = imageChannels(t);
        String values = t.type() == OnnxJavaType.UINT8 ? "" : ", mean: [" + PLACEHOLDER + "], std: [" + PLACEHOLDER + "]";
        return new Guess("{source: camera, camera: camera_" + camera + ", layout: " + layout + ", resize: bilinear"
                + values + "}", t.elementLabel() + " " + t.shapeText() + " reads as an image of " + c + " channel"
                + (c == 1 ? "" : "s") + (values.isEmpty() ? "" : "; the mean and std per channel, as trained (after"
                + " dividing by 255)"));
    }

    /** The float input named like an observation, else the first float input. */
    private static TensorSignature observationInput(List<TensorSignature> inputs) {
        TensorSignature first = null;
        for (TensorSignature t : inputs) {
            if (!isFloat(t) || named(t, "noise", "latent") || fixedCount(t) == 1 || imageLayout(t) != null) {
                continue;
            }
            if (named(t, "obs", "state", "qpos", "joint")) {
                return t;
            }
            if (first == null) {
                first = t;
            }
        }
        return first;
    }

    private static Guess bind(TensorSignature t, long observationSize) {
        String about = t.elementLabel() + " " + t.shapeText();
        long count = fixedCount(t);
        if (t.type() == OnnxJavaType.INT64) {
            if (count == 1) {
                return new Guess("{source: step}", about + ", one whole number: the control tick");
            }
            return new Guess("{source: constant, values: " + PLACEHOLDER + "}", about
                    + ": weft cannot tell what this input holds; bind it (docs/policies.md)");
        }
        if (isFloat(t)) {
            if (named(t, "noise", "latent")) {
                return new Guess("{source: noise, seed: 1}", about + " named like a noise input; the seed is a guess"
                        + (count > 0 ? "" : "; give count, the model leaves it open"));
            }
            long[] s = t.shape();
            if (observationSize > 0 && s.length >= 2 && s[s.length - 1] == observationSize && count > observationSize
                    && count % observationSize == 0) {
                // the observation is bound to an input of its own, so the history is guessed to hold
                // the previous observations only
                return new Guess("{source: history, depth: " + count / observationSize + ", spacing: " + PLACEHOLDER
                        + ", with_current: false}", "seconds between past observations, as trained; guess: " + about
                        + ", past observations, oldest first, the current one in its own input");
            }
            if (count == 1) {
                return new Guess("{source: step}", about + ", one value: the control tick");
            }
        }
        return new Guess("{source: constant, values: " + PLACEHOLDER + "}", about
                + ": weft cannot tell what this input holds; bind it (docs/policies.md)");
    }

    private static boolean isFloat(TensorSignature t) {
        return t.type() == OnnxJavaType.FLOAT || t.type() == OnnxJavaType.DOUBLE;
    }

    private static boolean named(TensorSignature t, String... words) {
        String n = t.name().toLowerCase(Locale.ROOT);
        for (String w : words) {
            if (n.contains(w)) {
                return true;
            }
        }
        return false;
    }

    /**
     * The values a tensor holds when only a leading batch axis is dynamic (it runs as 1), or -1
     * when another axis is left open.
     */
    static long fixedCount(TensorSignature t) {
        long[] s = t.shape();
        long n = 1;
        for (int i = 0; i < s.length; i++) {
            if (s[i] < 0) {
                if (i != 0 || s.length == 1) {
                    return -1;
                }
            } else {
                n *= s[i];
            }
        }
        return n;
    }

    /** A text as YAML: plain when it is a plain word, double-quoted otherwise. */
    static String quote(String s) {
        if (PLAIN.matcher(s).matches() && !s.equals(PLACEHOLDER) && !List.of("true", "false", "null", "yes", "no",
                "on", "off", "y", "n", "~").contains(s.toLowerCase(Locale.ROOT))) {
            return s;
        }
        StringBuilder b = new StringBuilder("\"");
        for (char c : s.toCharArray()) {
            switch (c) {
                case '"' -> b.append("\\\"");
                case '\\' -> b.append("\\\\");
                case '\n' -> b.append("\\n");
                case '\t' -> b.append("\\t");
                default -> {
                    if (c < 0x20) {
                        b.append(String.format(Locale.ROOT, "\\x%02x", (int) c));
                    } else {
                        b.append(c);
                    }
                }
            }
        }
        return b.append('"').toString();
    }

    /** Lines with their comments in one column. */
    private static final class Writer {
        private final List<String> lines = new ArrayList<>();
        int decisions;
        int guesses;

        void comment(String text) {
            lines.add("# " + text);
        }

        void line(int indent, String text, String comment) {
            String body = "  ".repeat(indent) + text;
            if (comment == null) {
                lines.add(body);
            } else {
                // tensor names may hold anything; a comment stays on its line
                comment = comment.replaceAll("\\p{Cntrl}", "?");
                lines.add(body + " ".repeat(Math.max(1, COMMENT_COLUMN - body.length())) + "# " + comment);
            }
        }

        void guess(int indent, String text, String comment) {
            guesses++;
            line(indent, text, "guess: " + comment);
        }

        void decide(int indent, String text, String comment, int count) {
            decisions += count;
            line(indent, text, PLACEHOLDER + ": " + comment);
        }

        String text() {
            return String.join("\n", lines) + "\n";
        }
    }
}
