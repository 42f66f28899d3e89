package dev.weft.bench;

import java.io.IOException;
import java.io.Writer;
import java.nio.file.Files;
import java.nio.file.Path;

/**
 * Writes the control-tick workload and weft's results for it, so that another implementation
 * (the NumPy one in {@code bench/numpy_tick.py}) can be fed the same input and checked against
 * the same output before it is timed.
 *
 * <pre>{@code java -cp bench/target/benchmarks.jar dev.weft.bench.TickExport JOINTS STEPS TICKS MOTION FILE}</pre>
 *
 * <p>The file is JSON: the parameters (joints, steps, window, weight rate, period, limits), the
 * accepted chunks (row-major K × D each), and for every tick the blended target, the command and
 * the commanded velocity. Numbers are written with {@link Double#toString}, the shortest text that
 * reads back as the same double.
 */
public final class TickExport {

    private TickExport() {
    }

    public static void main(String[] args) throws IOException {
        if (args.length != 5) {
            System.err.println("usage: TickExport JOINTS STEPS TICKS OSCILLATING|HOLDING FILE");
            System.exit(2);
        }
        int joints = Integer.parseInt(args[0]);
        int steps = Integer.parseInt(args[1]);
        int ticks = Integer.parseInt(args[2]);
        TickWorkload.Motion motion = TickWorkload.Motion.valueOf(args[3]);
        Path file = Path.of(args[4]);
        long periodNanos = 1_000_000L;
        TickWorkload w = new TickWorkload(joints, steps, periodNanos, motion);
        try (Writer out = Files.newBufferedWriter(file)) {
            out.write("{\n");
            out.write("\"joints\": " + joints + ",\n\"steps\": " + steps + ",\n\"window\": " + TickWorkload.WINDOW
                    + ",\n\"weight_rate\": " + TickWorkload.WEIGHT_RATE + ",\n\"period_s\": " + periodNanos * 1e-9
                    + ",\n\"motion\": \"" + motion + "\",\n");
            out.write("\"position_bound\": " + TickWorkload.POSITION_BOUND + ",\n\"velocity\": " + TickWorkload.VELOCITY
                    + ",\n\"acceleration\": " + TickWorkload.ACCELERATION + ",\n\"jerk\": " + TickWorkload.JERK + ",\n");
            out.write("\"chunks\": [\n");
            for (int c = 0; c < TickWorkload.CHUNKS; c++) {
                out.write(c == 0 ? "" : ",\n");
                writeArray(out, w.acceptedChunk(c), w.acceptedChunk(c).length);
            }
            out.write("],\n\"ticks\": [\n");
            double[] velocity = new double[joints];
            for (int n = 0; n < ticks; n++) {
                w.tick(n);
                for (int i = 0; i < joints; i++) {
                    velocity[i] = w.velocity(i);
                }
                out.write(n == 0 ? "[" : ",\n[");
                writeArray(out, w.target(), joints);
                out.write(", ");
                writeArray(out, w.command(), joints);
                out.write(", ");
                writeArray(out, velocity, joints);
                out.write("]");
            }
            out.write("]\n}\n");
        }
        System.out.println("wrote " + ticks + " ticks of D=" + joints + ", K=" + steps + " (" + motion + ") to " + file);
    }

    private static void writeArray(Writer out, double[] v, int n) throws IOException {
        out.write('[');
        for (int i = 0; i < n; i++) {
            if (i > 0) {
                out.write(", ");
            }
            if (!Double.isFinite(v[i])) {
                throw new IllegalStateException("non-finite value " + v[i] + " in the export");
            }
            out.write(Double.toString(v[i]));
        }
        out.write(']');
    }
}
