package dev.weft.examples.demo;

import java.io.IOException;
import java.math.BigDecimal;
import java.math.RoundingMode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * Regenerates every file of the demo under {@code examples/demo}, deterministically: the five
 * recordings, the fitted policy and the configuration, plus a short fit summary. Run from the
 * repository root:
 *
 * <pre>
 * mvn -B -q -pl examples -am verify -DskipTests
 * mvn -B -q -pl examples exec:java -Dexec.mainClass=dev.weft.examples.demo.BuildDemo
 * </pre>
 *
 * An argument names another repository root (the test regenerates into a temporary folder).
 *
 * <h2>Episodes</h2>
 * {@code dip-01} to {@code dip-03} train the policy, {@code dip-04} is held out, and
 * {@code dip-05-glitch} is a clean episode of its own with two faults written into it, for the
 * dry run: from {@link #GLITCH_TIME} the measured {@code lift} position reads
 * {@link #GLITCH_SIZE} rad high for {@link #GLITCH_SAMPLES} samples (a sensor glitch the policy
 * follows), and from {@link #DROPOUT_TIME} the logger lost {@link #DROPOUT_SAMPLES} samples
 * (no observation for 0.13 s, longer than the watchdog's observation age bound). The recordings
 * are read back from their text before the fit, so the fit sees exactly what ships.
 */
public final class BuildDemo {

    /** The demo folder, relative to the repository root. */
    public static final Path DEMO = Path.of("examples", "demo");
    /** The recordings' folder, relative to the demo folder. */
    public static final Path RECORDINGS = Path.of("recordings");
    /** The model, relative to the demo folder. */
    public static final Path MODEL = Path.of("models", "dip-policy.onnx");
    /** The configuration, relative to the demo folder. */
    public static final Path CONFIG = Path.of("demo.yaml");
    /** The fit summary, relative to the demo folder. */
    public static final Path SUMMARY = Path.of("fit-summary.txt");

    /** Seed of everything random in the demo. */
    public static final long SEED = 20261206L;
    /** Episodes that train the policy. */
    public static final List<String> TRAINING = List.of("dip-01", "dip-02", "dip-03");
    /** The held-out episode. */
    public static final String HELD_OUT = "dip-04";
    /** The episode with the faults. */
    public static final String FAULT = "dip-05-glitch";

    /** The joint whose measured position glitches in {@link #FAULT}. */
    public static final int GLITCH_JOINT = 1;
    /** When the glitch starts, seconds. */
    public static final double GLITCH_TIME = 3.0;
    /** Samples the glitch lasts (0.05 s, one query period). */
    public static final int GLITCH_SAMPLES = 5;
    /** What the glitch adds to the measured position, rad. */
    public static final double GLITCH_SIZE = 0.8;
    /** The first lost sample's time, seconds. */
    public static final double DROPOUT_TIME = 7.01;
    /** Samples lost (the row after 7.00 s is 7.13 s). */
    public static final int DROPOUT_SAMPLES = 12;

    /** What one build produced. */
    public record Result(List<Path> files, ChunkRegression.Fit fit, double[] heldOutRms, double[] holdPoseRms,
                         double[] trainingRms) {
    }

    private BuildDemo() {
    }

    public static void main(String[] args) throws IOException {
        Path root = args.length > 0 ? Path.of(args[0]) : Path.of(".");
        Result r = build(root.resolve(DEMO));
        long total = 0;
        for (Path f : r.files()) {
            long size = Files.size(f);
            total += size;
            System.out.println("wrote " + f + " (" + size + " bytes)");
        }
        System.out.println("total " + total + " bytes");
        System.out.print(summary(r));
    }

    /** The episode of that name as the recorder logs it, faults included. */
    public static Episode episode(String name) {
        Episode e = recorded(name);
        if (name.equals(FAULT)) {
            e = e.withPositionGlitch(GLITCH_JOINT, sample(GLITCH_TIME), GLITCH_SAMPLES, GLITCH_SIZE)
                    .withDropout(sample(DROPOUT_TIME), DROPOUT_SAMPLES);
        }
        return e;
    }

    /** The episode of that name before any fault is written into it. */
    static Episode recorded(String name) {
        int index = names().indexOf(name);
        if (index < 0) {
            throw new IllegalArgumentException("no demo episode is called " + name);
        }
        return EpisodeRecorder.record(name, ExpertScript.forEpisode(SEED + index + 1), SEED + 1000 + index + 1);
    }

    /** Every episode's name: training, held out, fault. */
    public static List<String> names() {
        List<String> all = new ArrayList<>(TRAINING);
        all.add(HELD_OUT);
        all.add(FAULT);
        return List.copyOf(all);
    }

    /** The expert's script of a demo episode. */
    public static ExpertScript script(String name) {
        int index = names().indexOf(name);
        if (index < 0) {
            throw new IllegalArgumentException("no demo episode is called " + name);
        }
        return ExpertScript.forEpisode(SEED + index + 1);
    }

    /** Writes every demo file under {@code demo} (created when missing). */
    public static Result build(Path demo) throws IOException {
        Path recordings = demo.resolve(RECORDINGS);
        Files.createDirectories(recordings);
        Files.createDirectories(demo.resolve(MODEL).getParent());
        List<Path> files = new ArrayList<>();
        for (String name : names()) {
            Path file = recordings.resolve(name + ".csv");
            RecordingCsv.write(episode(name), file);
            files.add(file);
        }
        List<Episode> training = new ArrayList<>();
        for (String name : TRAINING) {
            training.add(RecordingCsv.read(recordings.resolve(name + ".csv")));
        }
        Episode heldOut = RecordingCsv.read(recordings.resolve(HELD_OUT + ".csv"));
        ChunkRegression.Fit fit = ChunkRegression.fit(training, ChunkRegression.LAMBDA);
        Path model = demo.resolve(MODEL);
        Files.write(model, PolicyExport.toOnnx(fit));
        files.add(model);
        Path config = demo.resolve(CONFIG);
        Files.writeString(config, DemoConfig.yaml(MODEL.toString().replace('\\', '/')), StandardCharsets.UTF_8);
        files.add(config);
        double[] trainingRms = new double[DipCell.D];
        double rows = 0;
        for (Episode e : training) {
            double[] r = ChunkRegression.rmsError(fit, e);
            int n = ChunkRegression.rowCount(e);
            for (int k = 0; k < DipCell.D; k++) {
                trainingRms[k] += r[k] * r[k] * n;
            }
            rows += n;
        }
        for (int k = 0; k < DipCell.D; k++) {
            trainingRms[k] = Math.sqrt(trainingRms[k] / rows);
        }
        Result result = new Result(List.copyOf(files), fit, ChunkRegression.rmsError(fit, heldOut),
                ChunkRegression.holdPoseRmsError(heldOut), trainingRms);
        Path summary = demo.resolve(SUMMARY);
        Files.writeString(summary, summary(result), StandardCharsets.UTF_8);
        List<Path> all = new ArrayList<>(files);
        all.add(summary);
        return new Result(List.copyOf(all), fit, result.heldOutRms(), result.holdPoseRms(), trainingRms);
    }

    /** The fit summary's text. */
    static String summary(Result r) {
        StringBuilder b = new StringBuilder();
        b.append("dip-and-shelve policy: ridge regression of the change from holding the pose, ").append(ChunkRegression.FEATURES).append(" features (history of ")
                .append(ChunkRegression.HISTORY_DEPTH).append(" x ").append(ChunkRegression.OBSERVATION)
                .append(" observations and a 1) -> K = ").append(ChunkRegression.K).append(" actions x D = ")
                .append(DipCell.D).append(", step ").append(DemoConfig.num(ChunkRegression.POLICY_STEP))
                .append(" s, lambda = ").append(DemoConfig.num(r.fit().lambda())).append('\n');
        b.append("training rows: ").append(r.fit().rows()).append(" from ").append(String.join(", ", TRAINING)).append('\n');
        b.append("RMS error of the chunk's positions, rad, per joint (").append(String.join(", ", DipCell.jointNames()))
                .append(")\n");
        b.append("  training episodes:          ").append(row(r.trainingRms())).append('\n');
        b.append("  held-out ").append(HELD_OUT).append(":          ").append(row(r.heldOutRms())).append('\n');
        b.append("  hold-the-pose on ").append(HELD_OUT).append(":  ").append(row(r.holdPoseRms())).append('\n');
        return b.toString();
    }

    private static String row(double[] v) {
        StringBuilder b = new StringBuilder();
        for (int k = 0; k < v.length; k++) {
            if (k > 0) {
                b.append("  ");
            }
            b.append(new BigDecimal(v[k]).setScale(4, RoundingMode.HALF_EVEN).toPlainString());
        }
        return b.toString();
    }

    private static int sample(double t) {
        return (int) Math.round(t / DipCell.SAMPLE_PERIOD);
    }
}
