package dev.weft.examples.demo;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.policy.ChunkLayout;
import dev.weft.runtime.policy.InputBinding;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.OutputSpec;
import dev.weft.runtime.policy.PolicyInput;
import dev.weft.runtime.policy.PolicySpec;
import dev.weft.runtime.policy.SessionSettings;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The shipped ONNX policy, run through weft's {@link OnnxPolicy} on real ONNX Runtime, against
 * the fitted matrix product; and what the policy does on the held-out and the fault episodes.
 */
class PolicyDemoTest {

    /** Unit roundoff of float32, 2^-24. */
    static final double FLOAT_UNIT_ROUNDOFF = 0x1p-24;

    static ChunkRegression.Fit fit;
    static OnnxPolicy policy;

    @BeforeAll
    static void fitAndLoad() throws Exception {
        List<Episode> training = new ArrayList<>();
        for (String name : BuildDemo.TRAINING) {
            training.add(RecordingCsv.read(recording(name)));
        }
        fit = ChunkRegression.fit(training, ChunkRegression.LAMBDA);
        Path model = Path.of("..").resolve(BuildDemo.DEMO).resolve(BuildDemo.MODEL);
        PolicySpec spec = new PolicySpec(model, ChunkRegression.OBSERVATION,
                Map.of(PolicyExport.INPUT, new InputBinding.History(ChunkRegression.HISTORY_DEPTH,
                        Math.round(ChunkRegression.HISTORY_SPACING * 1e9), true, false)),
                new OutputSpec(PolicyExport.OUTPUT, ChunkLayout.BATCH_STEPS_VALUES, ChunkRegression.K, DipCell.D),
                SessionSettings.DEFAULTS.withWarmupRuns(2));
        policy = OnnxPolicy.load(spec);
    }

    @AfterAll
    static void close() {
        if (policy != null) {
            policy.close();
        }
    }

    static Path recording(String name) {
        return Path.of("..").resolve(BuildDemo.DEMO).resolve(BuildDemo.RECORDINGS).resolve(name + ".csv");
    }

    /**
     * Error bound of the float32 model against the double product {@code x·W}: with {@code n}
     * terms, each of {@code x} and {@code W} rounded once to float32 and the sum formed in
     * float32 in any order, {@code |fl(x·w) - x·w| <= γ(n+2)·Σ|x_i||w_i|}, {@code γ(m) = m·u/(1 - m·u)},
     * {@code u = 2^-24} (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM 2002,
     * Section 3.1, eq. 3.5, with the two input roundings counted as extra factors; one more for the
     * separate bias Add).
     */
    static double bound(double[] x, int target) {
        int m = ChunkRegression.FEATURES + 3;
        double gamma = m * FLOAT_UNIT_ROUNDOFF / (1 - m * FLOAT_UNIT_ROUNDOFF);
        double s = 0;
        for (int f = 0; f < ChunkRegression.FEATURES; f++) {
            s += Math.abs(x[f]) * Math.abs(fit.weight(f, target));
        }
        return gamma * s;
    }

    @Test
    void theOnnxModelComputesTheFittedProductWithinFloat32Rounding() throws Exception {
        // Fed as weft's loop feeds it, the history input on its grid (0.05 s apart, oldest first, the
        // current observation last, a point before the first sample taking the first sample), the
        // model must compute the training rows' product.
        Episode e = RecordingCsv.read(recording(BuildDemo.HELD_OUT));
        PolicyInput in = PolicyInput.forPolicy(policy);
        double[] obs = new double[ChunkRegression.OBSERVATION];
        double[] x = new double[ChunkRegression.FEATURES];
        double[] want = new double[ChunkRegression.TARGETS];
        double[] got = new double[ChunkRegression.TARGETS];
        double worst = 0;
        double worstBound = 0;
        int calls = 0;
        for (int i = 0; i < ChunkRegression.rowCount(e); i += ChunkRegression.QUERY_SAMPLES, calls++) {
            e.observation(i, in.observation(), 0);
            for (int slot = 0; slot < ChunkRegression.HISTORY_DEPTH; slot++) {
                int sample = Math.max(0, i - (ChunkRegression.HISTORY_DEPTH - 1 - slot) * ChunkRegression.QUERY_SAMPLES);
                e.observation(sample, obs, 0);
                System.arraycopy(obs, 0, in.history(0), slot * ChunkRegression.OBSERVATION, ChunkRegression.OBSERVATION);
            }
            in.stamp(i * 5L, 0);
            policy.infer(in, got);
            ChunkRegression.features(e, i, x);
            fit.predict(x, want);
            for (int t = 0; t < ChunkRegression.TARGETS; t++) {
                double err = Math.abs(got[t] - want[t]);
                double b = bound(x, t);
                assertThat(err).as("call %d (sample %d), value %d", calls, i, t).isLessThanOrEqualTo(b);
                worst = Math.max(worst, err);
                worstBound = Math.max(worstBound, b);
            }
        }
        assertThat(calls).isGreaterThan(200);
        // the bound itself is small: every value within 1e-4 rad of the double product
        assertThat(worstBound).isLessThan(1e-4);
        assertThat(worst).isGreaterThan(0.0); // float32 really ran (a double copy would match exactly)
    }

    @Test
    void theFirstChunkOfEveryEpisodeStartsCloseEnoughToTheRestingPoseForWeftToArm() throws Exception {
        // As weft starts: a fresh policy whose history input is filled with the first observation.
        // Arming refuses a first target farther than pose_distance_max from the measured pose; every
        // action of the first chunk (the target at the arming tick lies between two of them) must stay
        // within half of it, so noise in the resting pose cannot tip it over.
        Path file = Path.of("..").resolve(BuildDemo.DEMO).resolve(BuildDemo.CONFIG);
        WeftConfig c = WeftConfig.parse(Files.readString(file), file.getParent(), file.toString());
        double bound = c.arming().poseDistanceMax();
        assertThat(bound).isEqualTo(DemoConfig.POSE_DISTANCE_MAX);
        double[] obs = new double[ChunkRegression.OBSERVATION];
        double[] chunk = new double[ChunkRegression.TARGETS];
        for (String name : BuildDemo.names()) {
            Episode e = RecordingCsv.read(recording(name));
            e.observation(0, obs, 0);
            double worst = 0;
            try (OnnxPolicy fresh = OnnxPolicy.load(c.policy())) {
                fresh.infer(obs, 0, chunk);
            }
            for (int t = 0; t < ChunkRegression.TARGETS; t++) {
                double d = Math.abs(chunk[t] - e.q(0, t % DipCell.D));
                assertThat(d).as("%s: action %d, %s", name, t / DipCell.D, DipCell.JOINTS.get(t % DipCell.D).name())
                        .isLessThanOrEqualTo(bound / 2);
                worst = Math.max(worst, d);
            }
            // the policy does plan a move (it is not merely holding the pose)
            assertThat(worst).as(name).isGreaterThan(1e-3);
        }
    }

    @Test
    void onTheHeldOutEpisodeThePolicyTracksTheExpertFarBetterThanHoldingThePose() throws Exception {
        Episode e = RecordingCsv.read(recording(BuildDemo.HELD_OUT));
        double[] learned = ChunkRegression.rmsError(fit, e);
        double[] hold = ChunkRegression.holdPoseRmsError(e);
        for (int k = 0; k < DipCell.D; k++) {
            String joint = DipCell.JOINTS.get(k).name();
            // sanity bounds: 0.02 rad RMS at most (the fit gives about 0.01), and a third of the hold-the-pose
            // baseline; the fit summary reports the figures themselves
            assertThat(learned[k]).as("%s RMS, rad", joint).isLessThan(0.02);
            assertThat(learned[k]).as("%s RMS against holding the pose", joint).isLessThan(hold[k] / 3);
        }
    }

    @Test
    void inTheFaultEpisodeThePolicyFollowsTheGlitchedReadingFasterThanTheLiftMayMove() throws Exception {
        Episode e = RecordingCsv.read(recording(BuildDemo.FAULT));
        Episode clean = BuildDemo.recorded(BuildDemo.FAULT);
        int lift = BuildDemo.GLITCH_JOINT;
        int glitch = (int) Math.round(BuildDemo.GLITCH_TIME / DipCell.SAMPLE_PERIOD);
        int q = ChunkRegression.QUERY_SAMPLES;
        double[] x = new double[ChunkRegression.FEATURES];
        double[] faulty = new double[ChunkRegression.TARGETS];
        double[] calm = new double[ChunkRegression.TARGETS];
        for (int i = glitch - 10 * q; i <= glitch + 10 * q; i += q) {
            ChunkRegression.features(e, i, x);
            fit.predict(x, faulty);
            ChunkRegression.features(clean, i, x);
            fit.predict(x, calm);
            double shift = 0;
            for (int j = 0; j < ChunkRegression.K; j++) {
                shift = Math.max(shift, Math.abs(faulty[j * DipCell.D + lift] - calm[j * DipCell.D + lift]));
            }
            if (i == glitch) {
                // the glitched reading is the current observation: the residual policy plans from the
                // pose it is told, so it takes over nearly all of the false offset
                assertThat(faulty[lift] - calm[lift]).as("query at sample %d", i)
                        .isGreaterThan(0.9 * BuildDemo.GLITCH_SIZE);
            } else if (i > glitch && i <= glitch + (ChunkRegression.HISTORY_DEPTH - 1) * q) {
                // the glitch is in an older slot of the history: it weighs little there
                assertThat(shift).as("query at sample %d", i).isGreaterThan(1e-3).isLessThan(0.1 * BuildDemo.GLITCH_SIZE);
            } else {
                assertThat(shift).as("query at sample %d", i).isLessThan(1e-3);
            }
        }
        // a jump of that size from one query to the next asks for several times the lift's
        // velocity bound, so the limiter has to shape the command
        ChunkRegression.features(e, glitch, x);
        fit.predict(x, faulty);
        ChunkRegression.features(clean, glitch, x);
        fit.predict(x, calm);
        double asked = (faulty[lift] - calm[lift]) / (q * DipCell.SAMPLE_PERIOD);
        assertThat(asked).isGreaterThan(3 * DipCell.JOINTS.get(lift).velocity());
    }
}
