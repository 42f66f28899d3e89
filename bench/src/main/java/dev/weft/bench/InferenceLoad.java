package dev.weft.bench;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.policy.OnnxPolicy;
import dev.weft.runtime.policy.OutputSpec;
import dev.weft.runtime.policy.PolicySpec;

/**
 * Keeps one core busy with inference for a while, as the inference worker does in a live run:
 * {@code OnnxPolicy.infer} back to back on one thread. {@code bench/compare} runs it beside
 * {@code cyclictest}, so the operating system's floor is also measured with inference running.
 *
 * <pre>{@code java -cp bench/target/benchmarks.jar dev.weft.bench.InferenceLoad SECONDS [MODEL]}</pre>
 *
 * MODEL is {@code mlp1m} (default), {@code example} or a path (see {@link BenchModels}).
 */
public final class InferenceLoad {

    private InferenceLoad() {
    }

    public static void main(String[] args) throws BadInputException {
        if (args.length < 1 || args.length > 2) {
            System.err.println("usage: InferenceLoad SECONDS [MODEL]");
            System.exit(2);
        }
        double seconds = Double.parseDouble(args[0]);
        BenchModels.Model m = BenchModels.resolve(args.length == 2 ? args[1] : "mlp1m");
        try (OnnxPolicy policy = OnnxPolicy.load(PolicySpec.singleInput(m.file(), m.observationSize(), m.input(),
                new OutputSpec(null, m.layout(), 0, 0)))) {
            double[] observation = new double[m.observationSize()];
            double[] chunk = new double[policy.chunkLength() * policy.actionSize()];
            System.out.println("inference load running");
            System.out.flush();
            long end = System.nanoTime() + (long) (seconds * 1e9);
            long runs = 0;
            while (System.nanoTime() < end) {
                observation[(int) (runs % observation.length)] = (runs % 17) * 0.01;
                policy.infer(observation, runs, chunk);
                runs++;
            }
            System.out.printf("inference load: %d inferences in %.1f s%n", runs, seconds);
        }
    }
}
