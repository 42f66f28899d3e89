package dev.weft.filters;

import java.util.ArrayList;
import java.util.List;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;

/**
 * The plain way the methods are usually written: keep a copy of every chunk that took effect and
 * recompute each tick's plan from scratch (weights {@code exp(−m·i)·τ} computed and normalised anew,
 * interpolation evaluated from the raw points, crossfade applied recursively). No ring, no running sums.
 * It follows the same definitions as {@link ChunkBlender} (step j of a chunk is meant for tick
 * {@code origin + j·r}; a chunk covers the ticks from its arrival to its last executable step).
 *
 * <p>The derivatives are computed the plain way too: each curve's textbook derivative, and for the
 * ensemble the derivatives of the normalised weights {@code w_i/W} (not the quotient rule on running sums
 * that the blender uses). The natural spline's second derivatives come from a dense solve by EJML (a
 * general-purpose linear-algebra library), not from the Thomas algorithm.
 */
final class ReferenceBlender {

    enum Kind { OLDEST_FIRST, NEWEST_FIRST, LATEST, CROSSFADE }

    private static final double EPS = 1e-9;

    private static final class Chunk {
        final double[] values;
        final int points;
        final long origin;
        final long arrival;
        final long last;
        /** Spline second derivatives per point and joint (points × dims), else null. */
        final double[] curvature;

        Chunk(double[] values, int points, long origin, long arrival, long last, double[] curvature) {
            this.values = values;
            this.points = points;
            this.origin = origin;
            this.arrival = arrival;
            this.last = last;
            this.curvature = curvature;
        }
    }

    private final Kind kind;
    private final int dims;
    private final int maxSteps;
    private final double r;
    private final Interpolation interpolation;
    private final double m;
    private final int executedSteps;
    private final long fadeTicks;
    private final long taperTicks;
    private final List<Chunk> chunks = new ArrayList<>();
    private long lastNow = Long.MIN_VALUE;
    private long newestOrigin = Long.MIN_VALUE;
    long stale;
    long expired;
    long superseded;
    long rejected;

    ReferenceBlender(Kind kind, int dims, int maxSteps, double r, Interpolation interpolation, double m,
            int executedSteps, int fadeSteps) {
        this(kind, dims, maxSteps, r, interpolation, m, executedSteps, fadeSteps, 0.0);
    }

    ReferenceBlender(Kind kind, int dims, int maxSteps, double r, Interpolation interpolation, double m,
            int executedSteps, int fadeSteps, double taperSteps) {
        this.kind = kind;
        this.dims = dims;
        this.maxSteps = maxSteps;
        this.r = r;
        this.interpolation = interpolation;
        this.m = m;
        this.executedSteps = executedSteps;
        this.fadeTicks = (long) Math.ceil(fadeSteps * r - EPS);
        this.taperTicks = taperSteps == 0 ? 0 : (long) Math.ceil(taperSteps * r - EPS);
    }

    int accept(double[] chunk, int steps, long origin, long now) {
        if (chunk == null || steps < 1 || steps > maxSteps || steps * dims > chunk.length) {
            rejected++;
            return ChunkBlender.REJECTED_SHAPE;
        }
        if (origin < 0 || now < origin || now < lastNow) {
            rejected++;
            return ChunkBlender.REJECTED_TICKS;
        }
        for (int i = 0; i < steps * dims; i++) {
            if (Double.isNaN(chunk[i]) || Double.isInfinite(chunk[i])) {
                rejected++;
                return ChunkBlender.REJECTED_NON_FINITE;
            }
        }
        boolean replaces = kind == Kind.LATEST || kind == Kind.CROSSFADE;
        lastNow = now;
        if (replaces && origin < newestOrigin) {
            superseded++;
            return ChunkBlender.SUPERSEDED;
        }
        int points = kind == Kind.LATEST ? Math.min(steps, executedSteps) : steps;
        // Only steps that would be executed at all can be stale.
        for (int j = 0; j < points; j++) {
            if (j * r < (now - origin) - EPS) {
                stale++;
            }
        }
        long last = now - 1;
        while ((last + 1 - origin) <= (points - 1) * r + EPS) {
            last++;
        }
        int covered = (int) (last - now + 1);
        if (covered <= 0) {
            expired++;
            return 0;
        }
        double[] values = java.util.Arrays.copyOf(chunk, steps * dims);
        chunks.add(new Chunk(values, points, origin, now, last, splineCurvature(values, points)));
        newestOrigin = Math.max(newestOrigin, origin);
        while (!chunks.isEmpty() && chunks.get(0).last < now) {
            chunks.remove(0);
        }
        return covered;
    }

    /** Natural spline second derivatives, solved densely by EJML; null unless the interpolation is the spline. */
    private double[] splineCurvature(double[] values, int n) {
        if (interpolation != Interpolation.CUBIC_SPLINE) {
            return null;
        }
        double[] curvature = new double[n * dims];
        if (n < 3) {
            return curvature;
        }
        int unknowns = n - 2;
        DMatrixRMaj a = new DMatrixRMaj(unknowns, unknowns);
        DMatrixRMaj rhs = new DMatrixRMaj(unknowns, dims);
        for (int i = 0; i < unknowns; i++) {
            a.set(i, i, 4.0);
            if (i > 0) {
                a.set(i, i - 1, 1.0);
            }
            if (i < unknowns - 1) {
                a.set(i, i + 1, 1.0);
            }
            int j = i + 1;
            for (int d = 0; d < dims; d++) {
                rhs.set(i, d, 6.0 * (values[(j + 1) * dims + d] - 2.0 * values[j * dims + d] + values[(j - 1) * dims + d]));
            }
        }
        DMatrixRMaj solution = new DMatrixRMaj(unknowns, dims);
        if (!CommonOps_DDRM.solve(a, rhs, solution)) {
            throw new IllegalStateException("natural spline system is singular");
        }
        for (int i = 0; i < unknowns; i++) {
            for (int d = 0; d < dims; d++) {
                curvature[(i + 1) * dims + d] = solution.get(i, d);
            }
        }
        return curvature;
    }

    private static boolean covers(Chunk c, long t) {
        return t >= c.arrival && t <= c.last;
    }

    /** Plain value, and derivatives per tick and tick², of chunk c at tick t for joint d: {p, p', p''}. */
    private double[] curveAt(Chunk c, long t, int d) {
        double u = (t - c.origin) / r;
        int n = c.points;
        if (n == 1) {
            return new double[] {c.values[d], 0, 0};
        }
        int j = (int) Math.floor(u);
        if (j > n - 2) {
            j = n - 2;
        }
        if (j < 0) {
            j = 0;
        }
        double s = Math.min(1.0, Math.max(0.0, u - j));
        double pa = c.values[j * dims + d];
        double pb = c.values[(j + 1) * dims + d];
        double value;
        double du;
        double duu;
        if (interpolation == Interpolation.LINEAR) {
            value = pa + s * (pb - pa);
            du = pb - pa;
            duu = 0;
        } else if (interpolation == Interpolation.CUBIC_HERMITE) {
            double ma = tangent(c, j, d);
            double mb = tangent(c, j + 1, d);
            double h00 = 2 * s * s * s - 3 * s * s + 1;
            double h10 = s * s * s - 2 * s * s + s;
            double h01 = -2 * s * s * s + 3 * s * s;
            double h11 = s * s * s - s * s;
            value = h00 * pa + h10 * ma + h01 * pb + h11 * mb;
            du = (6 * s * s - 6 * s) * pa + (3 * s * s - 4 * s + 1) * ma + (-6 * s * s + 6 * s) * pb + (3 * s * s - 2 * s) * mb;
            duu = (12 * s - 6) * pa + (6 * s - 4) * ma + (-12 * s + 6) * pb + (6 * s - 2) * mb;
        } else {
            double ma = c.curvature[j * dims + d];
            double mb = c.curvature[(j + 1) * dims + d];
            double q = 1 - s;
            value = q * pa + s * pb + (q * q * q - q) * ma / 6 + (s * s * s - s) * mb / 6;
            du = pb - pa + (1 - 3 * q * q) * ma / 6 + (3 * s * s - 1) * mb / 6;
            duu = q * ma + s * mb;
        }
        if (s == 1.0) {
            value = pb;
        } else if (s == 0.0) {
            value = pa;
        }
        return new double[] {value, du / r, duu / (r * r)};
    }

    /** Fritsch–Butland tangent at point j: harmonic mean of same-sign secants, one-sided at the ends. */
    private double tangent(Chunk c, int j, int d) {
        int n = c.points;
        if (j == 0) {
            return c.values[dims + d] - c.values[d];
        }
        if (j == n - 1) {
            return c.values[j * dims + d] - c.values[(j - 1) * dims + d];
        }
        double left = c.values[j * dims + d] - c.values[(j - 1) * dims + d];
        double right = c.values[(j + 1) * dims + d] - c.values[j * dims + d];
        if (left > 0 && right > 0 || left < 0 && right < 0) {
            return 2.0 / (1.0 / left + 1.0 / right);
        }
        return 0.0;
    }

    /** 6x⁵ − 15x⁴ + 10x³ and its two derivatives, written out, clamped to [0, 1]. */
    private static double[] smoothStep(double x) {
        if (x <= 0) {
            return new double[] {0, 0, 0};
        }
        if (x >= 1) {
            return new double[] {1, 0, 0};
        }
        return new double[] {
            6 * Math.pow(x, 5) - 15 * Math.pow(x, 4) + 10 * Math.pow(x, 3),
            30 * Math.pow(x, 4) - 60 * Math.pow(x, 3) + 30 * x * x,
            120 * Math.pow(x, 3) - 180 * x * x + 60 * x};
    }

    /** The chunk's taper at t and its derivatives per tick: the product of a rising and a falling ramp. */
    private double[] taper(Chunk c, long t) {
        long covered = c.last - c.arrival + 1;
        long ramp = Math.min(taperTicks, (covered + 1) / 2);
        if (ramp == 0) {
            return new double[] {1, 0, 0};
        }
        double[] in = smoothStep((t - (c.arrival - 1)) / (double) ramp);
        double[] out = smoothStep(((c.last + 1) - t) / (double) ramp);
        double inRate = in[1] / ramp;
        double inBend = in[2] / ((double) ramp * ramp);
        double outRate = -out[1] / ramp;
        double outBend = out[2] / ((double) ramp * ramp);
        return new double[] {
            in[0] * out[0],
            inRate * out[0] + in[0] * outRate,
            inBend * out[0] + 2 * inRate * outRate + in[0] * outBend};
    }

    boolean actionAt(long t, double[] out) {
        double[] v = new double[dims];
        double[] a = new double[dims];
        return stateAt(t, out, v, a);
    }

    boolean stateAt(long t, double[] out, double[] velocity, double[] acceleration) {
        if (t < lastNow) {
            return false;
        }
        switch (kind) {
            case OLDEST_FIRST:
            case NEWEST_FIRST:
                return ensemble(t, out, velocity, acceleration);
            case LATEST:
                if (chunks.isEmpty() || !covers(chunks.get(chunks.size() - 1), t)) {
                    return false;
                }
                for (int d = 0; d < dims; d++) {
                    double[] p = curveAt(chunks.get(chunks.size() - 1), t, d);
                    out[d] = p[0];
                    velocity[d] = p[1];
                    acceleration[d] = p[2];
                }
                return true;
            default:
                return crossfade(chunks.size() - 1, t, out, velocity, acceleration);
        }
    }

    private boolean ensemble(long t, double[] out, double[] velocity, double[] acceleration) {
        List<Chunk> covering = new ArrayList<>();
        for (Chunk c : chunks) {
            if (covers(c, t)) {
                covering.add(c);
            }
        }
        if (covering.isEmpty()) {
            return false;
        }
        int count = covering.size();
        double[] w = new double[count];
        double[] w1 = new double[count];
        double[] w2 = new double[count];
        double total = 0;
        double total1 = 0;
        double total2 = 0;
        for (int i = 0; i < count; i++) {
            int index = kind == Kind.OLDEST_FIRST ? i : count - 1 - i;
            double[] tau = taper(covering.get(i), t);
            double e = Math.exp(-m * index);
            w[i] = e * tau[0];
            w1[i] = e * tau[1];
            w2[i] = e * tau[2];
            total += w[i];
            total1 += w1[i];
            total2 += w2[i];
        }
        for (int d = 0; d < dims; d++) {
            double p = 0;
            double v = 0;
            double a = 0;
            for (int i = 0; i < count; i++) {
                // Normalised weight n = w/W and its derivatives.
                double n = w[i] / total;
                double n1 = w1[i] / total - w[i] * total1 / (total * total);
                double n2 = w2[i] / total - 2 * w1[i] * total1 / (total * total) - w[i] * total2 / (total * total)
                        + 2 * w[i] * total1 * total1 / (total * total * total);
                double[] c = curveAt(covering.get(i), t, d);
                p += n * c[0];
                v += n1 * c[0] + n * c[1];
                a += n2 * c[0] + 2 * n1 * c[1] + n * c[2];
            }
            out[d] = p;
            velocity[d] = v;
            acceleration[d] = a;
        }
        return true;
    }

    private boolean crossfade(int i, long t, double[] out, double[] velocity, double[] acceleration) {
        if (i < 0 || !covers(chunks.get(i), t)) {
            return false;
        }
        Chunk c = chunks.get(i);
        double[] old = new double[dims];
        double[] oldV = new double[dims];
        double[] oldA = new double[dims];
        boolean hadOld = crossfade(i - 1, t, old, oldV, oldA);
        long q = t - c.arrival;
        double[] alpha = smoothStep((q + 1.0) / (fadeTicks + 1.0));
        double span = fadeTicks + 1.0;
        for (int d = 0; d < dims; d++) {
            double[] fresh = curveAt(c, t, d);
            if (hadOld && q < fadeTicks) {
                double al = alpha[0];
                double al1 = alpha[1] / span;
                double al2 = alpha[2] / (span * span);
                out[d] = (1 - al) * old[d] + al * fresh[0];
                velocity[d] = -al1 * old[d] + (1 - al) * oldV[d] + al1 * fresh[0] + al * fresh[1];
                acceleration[d] = -al2 * old[d] - 2 * al1 * oldV[d] + (1 - al) * oldA[d]
                        + al2 * fresh[0] + 2 * al1 * fresh[1] + al * fresh[2];
            } else {
                out[d] = fresh[0];
                velocity[d] = fresh[1];
                acceleration[d] = fresh[2];
            }
        }
        return true;
    }

    long ticksRemaining(long t) {
        if (t < lastNow) {
            return 0;
        }
        long n = 0;
        while (coveredAt(t + n)) {
            n++;
        }
        return n;
    }

    private boolean coveredAt(long t) {
        if (chunks.isEmpty()) {
            return false;
        }
        if (kind == Kind.OLDEST_FIRST || kind == Kind.NEWEST_FIRST) {
            for (Chunk c : chunks) {
                if (covers(c, t)) {
                    return true;
                }
            }
            return false;
        }
        return covers(chunks.get(chunks.size() - 1), t);
    }
}
