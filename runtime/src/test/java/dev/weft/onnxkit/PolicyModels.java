package dev.weft.onnxkit;

import dev.weft.onnxkit.OnnxGraph.Element;
import java.util.SplittableRandom;

/**
 * The ONNX policies the tests, examples and benchmarks share, built in code. Each factory
 * returns the model bytes together with the weights, so a test can recompute the forward pass
 * with a reference library.
 */
public final class PolicyModels {

    private PolicyModels() {
    }

    /**
     * A two-layer perceptron {@code y = tanh(x·W1 + b1)·W2 + b2}, weights row-major
     * ({@code w1} is {@code in × hidden}, {@code w2} is {@code hidden × out}).
     */
    public record Mlp(int in, int hidden, int out, float[] w1, float[] b1, float[] w2, float[] b2) {

        /** Seeded weights scaled like a common initialisation (uniform, ±1/√fan-in). */
        public static Mlp random(int in, int hidden, int out, long seed) {
            SplittableRandom r = new SplittableRandom(seed);
            return new Mlp(in, hidden, out,
                    uniform(r, in * hidden, 1.0 / Math.sqrt(in)), uniform(r, hidden, 0.1),
                    uniform(r, hidden * out, 1.0 / Math.sqrt(hidden)), uniform(r, out, 0.1));
        }

        /** Adds this MLP's layers to {@code g} over input {@code x} and returns the output's name. */
        String addTo(OnnxGraph g, String x, String prefix, Element type) {
            String w1n = weights(g, prefix + "w1", w1, type, in, hidden);
            String b1n = weights(g, prefix + "b1", b1, type, hidden);
            String w2n = weights(g, prefix + "w2", w2, type, hidden, out);
            String b2n = weights(g, prefix + "b2", b2, type, out);
            String h = g.tanh(g.add(g.matMul(x, w1n), b1n));
            return g.add(g.matMul(h, w2n), b2n);
        }

        private static String weights(OnnxGraph g, String name, float[] v, Element type, long... dims) {
            if (type == Element.DOUBLE) {
                double[] d = new double[v.length];
                for (int i = 0; i < v.length; i++) {
                    d[i] = v[i];
                }
                return g.doubles(name, d, dims);
            }
            return g.floats(name, v, dims);
        }

        private static float[] uniform(SplittableRandom r, int n, double scale) {
            float[] v = new float[n];
            for (int i = 0; i < n; i++) {
                v[i] = (float) ((r.nextDouble() * 2 - 1) * scale);
            }
            return v;
        }
    }

    /** Model bytes and the MLP inside them. */
    public record Built(byte[] bytes, Mlp mlp) {
    }

    /** Observation {@code obs [1, O]} → chunk {@code actions [1, K, D]}. */
    public static Built chunkPolicy(int obs, int hidden, int k, int d, long seed) {
        Mlp mlp = Mlp.random(obs, hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("chunk_mlp");
        String x = g.input("obs", Element.FLOAT, 1, obs);
        g.reshapeNamed("actions", mlp.addTo(g, x, "", Element.FLOAT), 1, k, d);
        g.output("actions", Element.FLOAT, 1, k, d);
        return new Built(g.toBytes(), mlp);
    }

    /**
     * A policy that always plans the same pose: {@code actions [1, K, D]} every action equal to
     * {@code goal}, whatever the observation {@code obs [1, O]} (the observation still flows
     * through the graph, multiplied by zero). For runs whose outcome must not depend on the
     * plant's noise.
     */
    public static byte[] goalPolicy(int obs, int k, double[] goal) {
        int d = goal.length;
        OnnxGraph g = OnnxGraph.named("goal_policy");
        String x = g.input("obs", Element.FLOAT, 1, obs);
        float[] bias = new float[k * d];
        for (int i = 0; i < bias.length; i++) {
            bias[i] = (float) goal[i % d];
        }
        String zero = g.floats("zero", new float[obs * k * d], obs, (long) k * d);
        String flat = g.add(g.matMul(x, zero), g.floats("goal", bias, 1, (long) k * d));
        g.reshapeNamed("actions", flat, 1, k, d);
        g.output("actions", Element.FLOAT, 1, k, d);
        return g.toBytes();
    }

    /**
     * A one-joint policy whose chunk is known in closed form: {@code obs [1, 1]} →
     * {@code actions [1, K, 1]} with action {@code j = obs + j·slope}. For hand-checked runs.
     */
    public static byte[] rampPolicy(int k, double slope) {
        OnnxGraph g = OnnxGraph.named("ramp_policy");
        String x = g.input("obs", Element.FLOAT, 1, 1);
        float[] ones = new float[k];
        float[] offsets = new float[k];
        for (int j = 0; j < k; j++) {
            ones[j] = 1f;
            offsets[j] = (float) (j * slope);
        }
        String row = g.add(g.matMul(x, g.floats("ones", ones, 1, k)), g.floats("offsets", offsets, 1, k));
        g.reshapeNamed("actions", row, 1, k, 1);
        g.output("actions", Element.FLOAT, 1, k, 1);
        return g.toBytes();
    }

    /** Observation {@code obs [1, O]} → flat chunk {@code actions [1, K·D]}. */
    public static Built flatChunkPolicy(int obs, int hidden, int k, int d, long seed) {
        Mlp mlp = Mlp.random(obs, hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("flat_chunk_mlp");
        String x = g.input("obs", Element.FLOAT, 1, obs);
        g.identityNamed("actions", mlp.addTo(g, x, "", Element.FLOAT));
        g.output("actions", Element.FLOAT, 1, k * d);
        return new Built(g.toBytes(), mlp);
    }

    /** Observation {@code obs [O]} (rank 1) → chunk {@code actions [K, D]}. */
    public static Built stepsByValuesPolicy(int obs, int hidden, int k, int d, long seed) {
        Mlp mlp = Mlp.random(obs, hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("kd_chunk_mlp");
        String x = g.input("obs", Element.FLOAT, obs);
        String row = g.reshape(x, 1, obs);
        g.reshapeNamed("actions", mlp.addTo(g, row, "", Element.FLOAT), k, d);
        g.output("actions", Element.FLOAT, k, d);
        return new Built(g.toBytes(), mlp);
    }

    /** A single-step actor: {@code obs [1, O]} → {@code action [1, D]}. */
    public static Built singleActionPolicy(int obs, int hidden, int d, long seed) {
        Mlp mlp = Mlp.random(obs, hidden, d, seed);
        OnnxGraph g = OnnxGraph.named("actor_mlp");
        String x = g.input("obs", Element.FLOAT, 1, obs);
        g.identityNamed("action", mlp.addTo(g, x, "", Element.FLOAT));
        g.output("action", Element.FLOAT, 1, d);
        return new Built(g.toBytes(), mlp);
    }

    /** A dynamic batch axis: {@code obs ["batch", O]} → {@code actions ["batch", K, D]}. */
    public static Built dynamicBatchPolicy(int obs, int hidden, int k, int d, long seed) {
        Mlp mlp = Mlp.random(obs, hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("batched_chunk_mlp");
        String x = g.input("obs", Element.FLOAT, "batch", obs);
        g.reshapeNamed("actions", mlp.addTo(g, x, "", Element.FLOAT), -1, k, d);
        g.output("actions", Element.FLOAT, "batch", k, d);
        return new Built(g.toBytes(), mlp);
    }

    /**
     * Two inputs: {@code state [1, S]} and {@code history [1, N, S]}; the history is flattened
     * and put after the state, so the MLP sees {@code [state, h_0 … h_{N-1}]} (oldest first).
     */
    public static Built stateAndHistoryPolicy(int state, int depth, int hidden, int k, int d, long seed) {
        Mlp mlp = Mlp.random(state * (depth + 1), hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("state_history_mlp");
        String s = g.input("state", Element.FLOAT, 1, state);
        String h = g.input("history", Element.FLOAT, 1, depth, state);
        String flat = g.reshape(h, 1, (long) depth * state);
        String x = g.concat(1, s, flat);
        g.reshapeNamed("actions", mlp.addTo(g, x, "", Element.FLOAT), 1, k, d);
        g.output("actions", Element.FLOAT, 1, k, d);
        return new Built(g.toBytes(), mlp);
    }

    /**
     * As {@link #stateAndHistoryPolicy} in float64 throughout: {@code state [1, S]} and
     * {@code history [1, N, S]} (oldest first) → {@code actions [1, K, D]}.
     */
    public static Built stateAndHistoryPolicy64(int state, int depth, int hidden, int k, int d, long seed) {
        Mlp mlp = Mlp.random(state * (depth + 1), hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("state_history_mlp_f64");
        String s = g.input("state", Element.DOUBLE, 1, state);
        String h = g.input("history", Element.DOUBLE, 1, depth, state);
        String flat = g.reshape(h, 1, (long) depth * state);
        String x = g.concat(1, s, flat);
        g.reshapeNamed("actions", mlp.addTo(g, x, "", Element.DOUBLE), 1, k, d);
        g.output("actions", Element.DOUBLE, 1, k, d);
        return new Built(g.toBytes(), mlp);
    }

    /**
     * A plan the arm can follow, in closed form: {@code obs [1, O]} (multiplied by zero) and an
     * int64 {@code step [1]} (the observation's control tick) → {@code actions [1, K, D]} with
     * action {@code j} of joint {@code d} at {@code amplitude·sin(ω·(step·Δc + j·Δp) + d·π/D)},
     * {@code ω = 2π·frequency}: every joint sweeps a sine, a phase apart, whatever the observation.
     * Its peak velocity {@code amplitude·ω} and acceleration {@code amplitude·ω²} are the caller's
     * to keep inside the limits.
     */
    public static byte[] sweepPolicy(int obs, int k, int d, double controlPeriod, double policyStep,
                                     double amplitude, double frequency) {
        OnnxGraph g = OnnxGraph.named("sweep_policy");
        String x = g.input("obs", Element.FLOAT, 1, obs);
        String step = g.input("step", Element.INT64, 1);
        String zero = g.matMul(x, g.floats("zero", new float[obs * k * d], obs, (long) k * d));
        double omega = 2 * Math.PI * frequency;
        double[] offsets = new double[k * d];
        for (int j = 0; j < k; j++) {
            for (int i = 0; i < d; i++) {
                offsets[j * d + i] = omega * j * policyStep + i * Math.PI / d;
            }
        }
        // the phase in float64: after ten minutes at 1 kHz it is hundreds of radians, where float32
        // would round it to 3e-5
        String time = g.mul(g.cast(step, Element.DOUBLE), g.doubles("omega_dc", new double[] {omega * controlPeriod}, 1));
        String phase = g.add(time, g.doubles("phase", offsets, 1, (long) k * d));
        String wave = g.mul(g.op("Sin", phase), g.doubles("amplitude", new double[] {amplitude}, 1));
        g.reshapeNamed("actions", g.add(g.cast(wave, Element.FLOAT), zero), 1, k, d);
        g.output("actions", Element.FLOAT, 1, k, d);
        return g.toBytes();
    }

    /** The chunk policy in float64 throughout. */
    public static Built float64ChunkPolicy(int obs, int hidden, int k, int d, long seed) {
        Mlp mlp = Mlp.random(obs, hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("chunk_mlp_f64");
        String x = g.input("obs", Element.DOUBLE, 1, obs);
        g.reshapeNamed("actions", mlp.addTo(g, x, "", Element.DOUBLE), 1, k, d);
        g.output("actions", Element.DOUBLE, 1, k, d);
        return new Built(g.toBytes(), mlp);
    }

    /**
     * A sampling-style policy with three inputs: {@code obs [1, O]}, {@code noise [1, K, D]} and
     * an int64 {@code step [1]}; {@code actions = mlp(obs) + noiseGain·noise + stepGain·step}.
     */
    public static Built noiseAndStepPolicy(int obs, int hidden, int k, int d, float noiseGain, float stepGain, long seed) {
        Mlp mlp = Mlp.random(obs, hidden, k * d, seed);
        OnnxGraph g = OnnxGraph.named("noise_step_mlp");
        String x = g.input("obs", Element.FLOAT, 1, obs);
        String noise = g.input("noise", Element.FLOAT, 1, k, d);
        String step = g.input("step", Element.INT64, 1);
        String mean = g.reshape(mlp.addTo(g, x, "", Element.FLOAT), 1, k, d);
        String scaledNoise = g.mul(noise, g.floats("noise_gain", new float[] {noiseGain}, 1));
        String stepTerm = g.mul(g.cast(step, Element.FLOAT), g.floats("step_gain", new float[] {stepGain}, 1));
        g.opNamed("Add", "actions", g.add(mean, scaledNoise), stepTerm);
        g.output("actions", Element.FLOAT, 1, k, d);
        return new Built(g.toBytes(), mlp);
    }
}
