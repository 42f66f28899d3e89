package dev.weft.filters;

import java.util.ArrayList;
import java.util.List;

/**
 * The plain way the methods are usually written: keep a copy of every chunk that took effect and
 * recompute each tick's action from scratch (weights {@code exp(−m·i)} computed and normalised anew,
 * interpolation evaluated from the raw points, crossfade applied recursively). No ring, no running sums.
 * It follows the same definitions as {@link ChunkBlender} (step j of a chunk is meant for tick
 * {@code origin + j·r}; a chunk covers the ticks from its arrival to its last executable step).
 */
final class ReferenceBlender {

    enum Kind { OLDEST_FIRST, NEWEST_FIRST, LATEST, CROSSFADE }

    private static final double EPS = 1e-9;

    private static final class Chunk {
        final double[] values;
        final int points;
        final long origin;
        final long arrival;

        Chunk(double[] values, int points, long origin, long arrival) {
            this.values = values;
            this.points = points;
            this.origin = origin;
            this.arrival = arrival;
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
    private final List<Chunk> chunks = new ArrayList<>();
    private long lastNow = Long.MIN_VALUE;
    private long newestOrigin = Long.MIN_VALUE;
    long stale;
    long expired;
    long superseded;
    long rejected;

    ReferenceBlender(Kind kind, int dims, int maxSteps, double r, Interpolation interpolation, double m,
            int executedSteps, int fadeSteps) {
        this.kind = kind;
        this.dims = dims;
        this.maxSteps = maxSteps;
        this.r = r;
        this.interpolation = interpolation;
        this.m = m;
        this.executedSteps = executedSteps;
        this.fadeTicks = (long) Math.ceil(fadeSteps * r - EPS);
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
        for (int j = 0; j < steps; j++) {
            if (j * r < (now - origin) - EPS) {
                stale++;
            }
        }
        int points = kind == Kind.LATEST ? Math.min(steps, executedSteps) : steps;
        Chunk c = new Chunk(java.util.Arrays.copyOf(chunk, steps * dims), points, origin, now);
        int covered = 0;
        for (long t = now; covers(c, t); t++) {
            covered++;
        }
        if (covered == 0) {
            expired++;
            return 0;
        }
        chunks.add(c);
        newestOrigin = Math.max(newestOrigin, origin);
        while (!chunks.isEmpty() && chunks.get(0).origin + (chunks.get(0).points - 1) * r + EPS < now) {
            chunks.remove(0);
        }
        return covered;
    }

    private boolean covers(Chunk c, long t) {
        return t >= c.arrival && (t - c.origin) <= (c.points - 1) * r + EPS;
    }

    /** Plain cubic Hermite / linear value of chunk c at tick t for joint d. */
    private double valueAt(Chunk c, long t, int d) {
        double u = (t - c.origin) / r;
        int n = c.points;
        if (n == 1) {
            return c.values[d];
        }
        int j = (int) Math.floor(u);
        if (j > n - 2) {
            j = n - 2;
        }
        double s = Math.min(1.0, Math.max(0.0, u - j));
        double pa = c.values[j * dims + d];
        double pb = c.values[(j + 1) * dims + d];
        if (s == 1.0) {
            return pb;
        }
        if (interpolation == Interpolation.LINEAR) {
            return pa + s * (pb - pa);
        }
        double ma = tangent(c, j, d);
        double mb = tangent(c, j + 1, d);
        double h00 = 2 * s * s * s - 3 * s * s + 1;
        double h10 = s * s * s - 2 * s * s + s;
        double h01 = -2 * s * s * s + 3 * s * s;
        double h11 = s * s * s - s * s;
        return h00 * pa + h10 * ma + h01 * pb + h11 * mb;
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

    boolean actionAt(long t, double[] out) {
        if (t < lastNow) {
            return false;
        }
        switch (kind) {
            case OLDEST_FIRST:
            case NEWEST_FIRST:
                return ensemble(t, out);
            case LATEST:
                if (chunks.isEmpty() || !covers(chunks.get(chunks.size() - 1), t)) {
                    return false;
                }
                for (int d = 0; d < dims; d++) {
                    out[d] = valueAt(chunks.get(chunks.size() - 1), t, d);
                }
                return true;
            default:
                return crossfade(chunks.size() - 1, t, out);
        }
    }

    private boolean ensemble(long t, double[] out) {
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
        double total = 0;
        for (int i = 0; i < count; i++) {
            int index = kind == Kind.OLDEST_FIRST ? i : count - 1 - i;
            w[i] = Math.exp(-m * index);
            total += w[i];
        }
        for (int d = 0; d < dims; d++) {
            double acc = 0;
            for (int i = 0; i < count; i++) {
                acc += (w[i] / total) * valueAt(covering.get(i), t, d);
            }
            out[d] = acc;
        }
        return true;
    }

    private boolean crossfade(int i, long t, double[] out) {
        if (i < 0 || !covers(chunks.get(i), t)) {
            return false;
        }
        Chunk c = chunks.get(i);
        double[] old = new double[dims];
        boolean hadOld = crossfade(i - 1, t, old);
        long q = t - c.arrival;
        for (int d = 0; d < dims; d++) {
            double fresh = valueAt(c, t, d);
            if (hadOld && q < fadeTicks) {
                double alpha = (q + 1.0) / (fadeTicks + 1.0);
                out[d] = (1 - alpha) * old[d] + alpha * fresh;
            } else {
                out[d] = fresh;
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
