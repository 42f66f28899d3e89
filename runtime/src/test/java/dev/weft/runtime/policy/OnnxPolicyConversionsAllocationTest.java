package dev.weft.runtime.policy;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.onnxkit.PolicyModels;
import java.lang.management.ManagementFactory;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The conversions allocate nothing per inference call: the normalised values go straight into
 * the preallocated input tensors and the chunk is converted in the caller's array. Measured with
 * the thread's allocated-bytes counter; like the loop's allocation test, the smallest of three
 * windows counts, so a one-off compiler allocation does not fail it.
 */
class OnnxPolicyConversionsAllocationTest {

    @TempDir
    Path dir;

    private static final com.sun.management.ThreadMXBean THREADS =
            (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();

    @Test
    void theArithmeticAllocatesNothing() {
        int k = 16;
        int d = 6;
        ValueScale obs = ValueScale.meanStd(new double[] {1, 2, 3, 4, 5, 6, 7, 8}, new double[] {1, 1, 2, 2, 3, 3, 4, 4}, "t");
        ValueScale act = ValueScale.minMax(new double[] {-1, -1, -1, -2, -2, -2}, new double[] {1, 1, 1, 2, 2, 2}, "t");
        Conversions conversions = new Conversions(obs, act, ActionRepresentation.FROM_PREVIOUS);
        double[] observation = new double[8];
        double[] chunk = new double[k * d];
        double sink = 0;
        long least = Long.MAX_VALUE;
        for (int window = 0; window < 4; window++) {
            long before = THREADS.getCurrentThreadAllocatedBytes();
            for (int call = 0; call < 50_000; call++) {
                for (int i = 0; i < observation.length; i++) {
                    sink += obs.normalise(i, observation[i] + call);
                }
                java.util.Arrays.fill(chunk, 0.25);
                conversions.toTargets(observation, chunk, k, d);
                ActionRepresentation.FROM_STATE.toAbsolute(observation, chunk, k, d);
                sink += chunk[k * d - 1];
            }
            long bytes = THREADS.getCurrentThreadAllocatedBytes() - before;
            if (window > 0) {
                least = Math.min(least, bytes);
            }
        }
        assertThat(sink).isFinite();
        assertThat(least).as("bytes allocated by 50 000 conversions").isZero();
    }

    @Test
    void anInferenceCallWithConversionsAllocatesNoMoreThanOneWithout() throws Exception {
        int obs = 6;
        Path model = Files.write(dir.resolve("p.onnx"), PolicyModels.chunkPolicy(obs, 16, 8, obs, 4).bytes());
        PolicySpec plain = PolicySpec.singleInput(model, obs, "obs",
                new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0));
        PolicySpec converted = PolicySpec.singleInput(model, obs, "obs",
                        new OutputSpec("actions", ChunkLayout.BATCH_STEPS_VALUES, 0, 0, ActionRepresentation.FROM_PREVIOUS))
                .withNormalisation(new NormalisationSpec(
                        ValueScale.meanStd(new double[] {0, 1, 2, 3, 4, 5}, new double[] {1, 2, 3, 4, 5, 6}, "t"),
                        ValueScale.minMax(new double[] {-1, -2, -3, -4, -5, -6}, new double[] {1, 2, 3, 4, 5, 6}, "t")));
        try (OnnxPolicy a = OnnxPolicy.load(plain); OnnxPolicy b = OnnxPolicy.load(converted)) {
            assertThat(b.actionRepresentation()).isEqualTo(ActionRepresentation.FROM_PREVIOUS);
            double plainBytes = perCall(a, obs);
            double convertedBytes = perCall(b, obs);
            // ONNX Runtime's own result wrapper is the same on both sides; one double[] of D values per
            // call made only when there is something to convert would add at least 16 + 8·6 = 64 bytes
            // (an allocation on every path is theArithmeticAllocatesNothing's to find)
            assertThat(convertedBytes - plainBytes).as("extra bytes per call (plain %.1f, converted %.1f)",
                    plainBytes, convertedBytes).isLessThan(8.0);
        }
    }

    /** The fewest bytes per call over three windows of 3 000 calls, after 3 000 calls of warm-up. */
    private static double perCall(Policy p, int obs) {
        double[] observation = new double[obs];
        double[] chunk = new double[p.chunkLength() * p.actionSize()];
        for (int i = 0; i < 3_000; i++) {
            observation[i % obs] = (i % 7) * 0.1;
            p.infer(observation, i, chunk);
        }
        double least = Double.MAX_VALUE;
        for (int window = 0; window < 3; window++) {
            long before = THREADS.getCurrentThreadAllocatedBytes();
            for (int i = 0; i < 3_000; i++) {
                observation[i % obs] = (i % 5) * 0.1;
                p.infer(observation, i, chunk);
            }
            least = Math.min(least, (THREADS.getCurrentThreadAllocatedBytes() - before) / 3_000.0);
        }
        return least;
    }
}
