package dev.weft.bench;

import dev.weft.safety.JerkLimiter;
import java.io.IOException;
import java.io.Writer;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;

/**
 * Writes the control-tick workload and weft's results for it, so that another implementation
 * (the NumPy one in {@code bench/numpy_tick.py}) can be fed the same input and checked against
 * the same output before it is timed.
 *
 * <pre>{@code java -cp bench/target/benchmarks.jar dev.weft.bench.TickExport JOINTS STEPS TICKS MOTION FILE [PREVIEW]}</pre>
 *
 * <p>With {@code PREVIEW}, every tick is {@link TickWorkload#previewTick} (the plan's preview as
 * well, the receding-horizon law where the plan is beyond the bounds) and the file says so, with the
 * preview's run ends.
 *
 * <p>The file is JSON: the parameters (joints, steps, window, first plan tick, weight rate, taper,
 * interpolation, period, tick rate, limits, how far from the plan's first position each joint
 * starts), the accepted chunks (row-major K × D each, with the
 * origin and arrival tick of each), and for every tick, in the order {@code "fields"} names them:
 * the plan's position, velocity and acceleration as the limiter got them (units, units/s,
 * units/s²), the command, the velocity and acceleration of the commanded trajectory (the
 * limiter's state), and the limiter's flags per joint. Numbers are written with
 * {@link Double#toString}, and each is checked to read back as the same double.
 *
 * <p>It also prints, per flag, the share of joint-ticks that carried it, and how often the finite
 * differences of the commands came within 1 % of the jerk, acceleration and velocity bounds: the
 * figures {@link TickWorkload} quotes.
 */
public final class TickExport {

    /** What each tick row holds, in order. */
    static final String[] FIELDS = {"target", "target_velocity", "target_acceleration", "command",
        "command_velocity", "command_acceleration", "flags"};

    private TickExport() {
    }

    public static void main(String[] args) throws IOException {
        if (args.length != 5 && !(args.length == 6 && args[5].equals("PREVIEW"))) {
            System.err.println("usage: TickExport JOINTS STEPS TICKS OSCILLATING|HOLDING|HOLDING_ANY_POSE|CATCHING_UP FILE [PREVIEW]");
            System.exit(2);
        }
        boolean preview = args.length == 6;
        int joints = Integer.parseInt(args[0]);
        int steps = Integer.parseInt(args[1]);
        int ticks = Integer.parseInt(args[2]);
        TickWorkload.Motion motion = TickWorkload.Motion.valueOf(args[3]);
        Path file = Path.of(args[4]);
        long periodNanos = 1_000_000L;
        TickWorkload w = new TickWorkload(joints, steps, periodNanos, motion);
        double dt = periodNanos * 1e-9;
        double[][] commands = new double[ticks][];
        long[] flagCount = new long[7];
        long anyBound = 0;
        try (Writer out = Files.newBufferedWriter(file)) {
            out.write("{\n");
            out.write("\"joints\": " + joints + ",\n\"steps\": " + steps + ",\n\"window\": " + TickWorkload.WINDOW
                    + ",\n\"first_tick\": " + TickWorkload.FIRST_TICK
                    + ",\n\"weight_rate\": " + number(TickWorkload.WEIGHT_RATE)
                    + ",\n\"taper_steps\": " + number(TickWorkload.taperSteps(steps))
                    + ",\n\"interpolation\": \"CUBIC_SPLINE\",\n\"step_ratio\": 1.0"
                    + ",\n\"period_s\": " + number(dt) + ",\n\"tick_rate\": " + number(1e9 / periodNanos)
                    + ",\n\"motion\": \"" + motion + "\",\n\"preview\": " + preview + ",\n");
            int[] ends = w.previewRunEnds();
            out.write("\"preview_run_ends\": [");
            for (int b = 0; b < ends.length; b++) {
                out.write((b == 0 ? "" : ", ") + ends[b]);
            }
            out.write("],\n");
            out.write("\"position_bound\": " + number(TickWorkload.POSITION_BOUND)
                    + ",\n\"velocity\": " + number(TickWorkload.VELOCITY)
                    + ",\n\"acceleration\": " + number(TickWorkload.ACCELERATION)
                    + ",\n\"jerk\": " + number(TickWorkload.JERK) + ",\n");
            double[] offsets = new double[joints];
            for (int i = 0; i < joints; i++) {
                offsets[i] = TickWorkload.startOffset(motion, i);
            }
            out.write("\"start_offsets\": ");
            writeArray(out, offsets, joints);
            out.write(",\n\"fields\": [");
            for (int f = 0; f < FIELDS.length; f++) {
                out.write((f == 0 ? "\"" : ", \"") + FIELDS[f] + "\"");
            }
            out.write("],\n\"chunk_ticks\": [");
            for (int c = 0; c < TickWorkload.CHUNKS; c++) {
                // chunk c: observation of tick c, accepted at tick c (see TickWorkload)
                out.write((c == 0 ? "[" : ", [") + c + ", " + c + "]");
            }
            out.write("],\n\"chunks\": [\n");
            for (int c = 0; c < TickWorkload.CHUNKS; c++) {
                out.write(c == 0 ? "" : ",\n");
                writeArray(out, w.acceptedChunk(c), w.acceptedChunk(c).length);
            }
            out.write("],\n\"ticks\": [\n");
            double[] velocity = new double[joints];
            double[] acceleration = new double[joints];
            int[] flags = new int[joints];
            for (int n = 0; n < ticks; n++) {
                if (preview) {
                    w.previewTick(n);
                } else {
                    w.tick(n);
                }
                for (int i = 0; i < joints; i++) {
                    velocity[i] = w.velocity(i);
                    acceleration[i] = w.acceleration(i);
                    int f = w.flags(i);
                    flags[i] = f;
                    for (int b = 0; b < flagCount.length; b++) {
                        if ((f & (1 << b)) != 0) {
                            flagCount[b]++;
                        }
                    }
                    if ((f & (JerkLimiter.POSITION | JerkLimiter.VELOCITY | JerkLimiter.ACCELERATION
                            | JerkLimiter.JERK)) != 0) {
                        anyBound++;
                    }
                }
                commands[n] = w.command().clone();
                out.write(n == 0 ? "[" : ",\n[");
                writeArray(out, w.target(), joints);
                out.write(", ");
                writeArray(out, w.targetVelocity(), joints);
                out.write(", ");
                writeArray(out, w.targetAcceleration(), joints);
                out.write(", ");
                writeArray(out, w.command(), joints);
                out.write(", ");
                writeArray(out, velocity, joints);
                out.write(", ");
                writeArray(out, acceleration, joints);
                out.write(", ");
                writeInts(out, flags, joints);
                out.write("]");
            }
            out.write("]\n}\n");
        }
        System.out.println("wrote " + ticks + " ticks of D=" + joints + ", K=" + steps + " (" + motion + ") to " + file);
        double jointTicks = (double) ticks * joints;
        String[] names = {"POSITION", "VELOCITY", "ACCELERATION", "JERK", "NON_FINITE_TARGET", "NOT_VIABLE",
            "POSITION_CLAMPED"};
        StringBuilder b = new StringBuilder(String.format(Locale.ROOT,
                "limiter flags over %d joint-ticks: any bound flag %.1f %%", (long) jointTicks, 100 * anyBound / jointTicks));
        for (int i = 0; i < names.length; i++) {
            b.append(String.format(Locale.ROOT, ", %s %.1f %%", names[i], 100 * flagCount[i] / jointTicks));
        }
        System.out.println(b);
        printDifferences(commands, joints, dt);
    }

    /**
     * How often the finite differences of the commands (velocity, acceleration, jerk at dt, as the
     * design defines them) came within 1 % of their bounds, and their largest magnitudes.
     */
    private static void printDifferences(double[][] q, int joints, double dt) {
        long count = 0;
        long atJerk = 0;
        long atAcceleration = 0;
        long atVelocity = 0;
        double maxJ = 0;
        double maxA = 0;
        double maxV = 0;
        for (int n = 3; n < q.length; n++) {
            for (int i = 0; i < joints; i++) {
                double v = (q[n][i] - q[n - 1][i]) / dt;
                double v1 = (q[n - 1][i] - q[n - 2][i]) / dt;
                double v2 = (q[n - 2][i] - q[n - 3][i]) / dt;
                double a = (v - v1) / dt;
                double a1 = (v1 - v2) / dt;
                double j = (a - a1) / dt;
                count++;
                atJerk += Math.abs(j) >= 0.99 * TickWorkload.JERK ? 1 : 0;
                atAcceleration += Math.abs(a) >= 0.99 * TickWorkload.ACCELERATION ? 1 : 0;
                atVelocity += Math.abs(v) >= 0.99 * TickWorkload.VELOCITY ? 1 : 0;
                maxJ = Math.max(maxJ, Math.abs(j));
                maxA = Math.max(maxA, Math.abs(a));
                maxV = Math.max(maxV, Math.abs(v));
            }
        }
        if (count == 0) {
            return;
        }
        System.out.printf(Locale.ROOT, "command finite differences over %d joint-ticks: within 1 %% of the jerk bound %.1f %%,"
                + " of the acceleration bound %.1f %%, of the velocity bound %.1f %%; largest |jerk| %.3f, |acceleration| %.4f,"
                + " |velocity| %.5f%n", count, 100.0 * atJerk / count, 100.0 * atAcceleration / count,
                100.0 * atVelocity / count, maxJ, maxA, maxV);
    }

    private static String number(double v) {
        if (!Double.isFinite(v)) {
            throw new IllegalStateException("non-finite value " + v + " in the export");
        }
        String s = Double.toString(v);
        if (Double.doubleToRawLongBits(Double.parseDouble(s)) != Double.doubleToRawLongBits(v)) {
            throw new IllegalStateException(s + " does not read back as the double it was written from");
        }
        return s;
    }

    private static void writeArray(Writer out, double[] v, int n) throws IOException {
        out.write('[');
        for (int i = 0; i < n; i++) {
            if (i > 0) {
                out.write(", ");
            }
            out.write(number(v[i]));
        }
        out.write(']');
    }

    private static void writeInts(Writer out, int[] v, int n) throws IOException {
        out.write('[');
        for (int i = 0; i < n; i++) {
            if (i > 0) {
                out.write(", ");
            }
            out.write(Integer.toString(v[i]));
        }
        out.write(']');
    }
}
