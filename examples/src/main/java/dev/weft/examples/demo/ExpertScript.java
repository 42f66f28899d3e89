package dev.weft.examples.demo;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

/**
 * The scripted expert of the dip-and-shelve task: a rest-to-rest path through the task's poses
 * (home, above the rack, the tile's slot, above the rack, above the bath, the dip, above the bath,
 * the wrist flick, the shelf slot, home),
 * each move a coordinated minimum-jerk segment that keeps every joint inside
 * {@link DipCell#EXPERT_SHARE} of its velocity, acceleration and jerk bounds, with dwells between
 * moves. The poses and dwells vary per episode, drawn from a seeded generator, so every episode
 * differs a little and regenerates exactly.
 *
 * <h2>Segments</h2>
 * A move from {@code p0} to {@code p1} over {@code T} seconds follows the minimum-jerk
 * polynomial {@code p(s) = p0 + (p1 - p0)(10 s^3 - 15 s^4 + 6 s^5)}, {@code s = t / T}
 * (Flash and Hogan, "The coordination of arm movements", J. Neuroscience 5(7), 1985). Its peak
 * speed, acceleration and jerk are {@code 15/8 · Δ/T}, {@code 10/√3 · Δ/T²} and
 * {@code 60 · Δ/T³} (from memory; the limit test recomputes them by finite differences), so the
 * shortest admissible {@code T} is the largest of the three inverses over all joints. Durations
 * are rounded up to whole sample periods, so every pose is held on a sample.
 *
 * <p>Immutable after {@link #forEpisode}; {@link #command} allocates nothing.
 */
public final class ExpertScript {

    /** Peak speed of the minimum-jerk segment per unit of {@code Δ/T}. */
    static final double PEAK_SPEED = 15.0 / 8.0;
    /** Peak acceleration per unit of {@code Δ/T²}: the polynomial's value at {@code s = (3 - √3)/6}. */
    static final double PEAK_ACCELERATION = 10.0 / Math.sqrt(3.0);
    /** Peak jerk per unit of {@code Δ/T³}, at {@code s = 0} and {@code s = 1}. */
    static final double PEAK_JERK = 60.0;
    /** Shortest move, seconds. */
    static final double MIN_MOVE = 0.3;

    private final double[] starts;
    private final double[] durations;
    private final double[][] from;
    private final double[][] to;
    private final double end;

    private ExpertScript(List<double[]> poses, List<Double> dwells) {
        List<Double> s = new ArrayList<>();
        List<Double> d = new ArrayList<>();
        List<double[]> f = new ArrayList<>();
        List<double[]> t = new ArrayList<>();
        double clock = 0;
        for (int i = 0; i < poses.size(); i++) {
            double[] here = poses.get(i);
            double dwell = dwells.get(i);
            if (dwell > 0) {
                s.add(clock);
                d.add(dwell);
                f.add(here);
                t.add(here);
                clock = onGrid(clock + dwell);
            }
            if (i + 1 < poses.size()) {
                double[] next = poses.get(i + 1);
                double move = moveTime(here, next);
                s.add(clock);
                d.add(move);
                f.add(here);
                t.add(next);
                clock = onGrid(clock + move);
            }
        }
        int n = s.size();
        starts = new double[n];
        durations = new double[n];
        from = new double[n][];
        to = new double[n][];
        for (int i = 0; i < n; i++) {
            starts[i] = s.get(i);
            durations[i] = d.get(i);
            from[i] = f.get(i);
            to[i] = t.get(i);
        }
        end = clock;
    }

    /**
     * The script of one episode: home, rack, bath, flick, shelf and home again, with the tile's
     * rack slot, the dip depth, the shelf slot, the dwells and the start pose drawn from
     * {@code seed}.
     */
    public static ExpertScript forEpisode(long seed) {
        SplittableRandom r = new SplittableRandom(seed);
        double[] start = DipCell.HOME.clone();
        for (int k = 0; k < DipCell.D; k++) {
            start[k] += uniform(r, 0.03);
        }
        double rackSlew = uniform(r, 0.12);
        double rackLift = uniform(r, 0.04);
        double[] rackAbove = shifted(DipCell.RACK_ABOVE, 0, rackSlew);
        double[] rackGrip = shifted(shifted(DipCell.RACK_GRIP, 0, rackSlew), 1, rackLift);
        double[] dip = shifted(DipCell.BATH_DIP, 1, uniform(r, 0.05));
        int slot = r.nextInt(DipCell.SHELF_SLOTS);
        double[] shelf = shifted(DipCell.SHELF, 0, slot * DipCell.SHELF_SLOT_STEP);
        List<double[]> poses = List.of(start, rackAbove, rackGrip, rackAbove, DipCell.BATH_ABOVE, dip,
                DipCell.BATH_ABOVE, DipCell.FLICK, shelf, DipCell.HOME);
        List<Double> dwells = List.of(dwell(r, 0.3), 0.0, dwell(r, 0.3), 0.0, 0.0, dwell(r, 0.4), dwell(r, 0.1), 0.0,
                dwell(r, 0.3), 0.3);
        return new ExpertScript(poses, dwells);
    }

    /** A script through {@code poses}, dwelling {@code dwells.get(i)} seconds at pose {@code i} (0 for none). */
    static ExpertScript through(List<double[]> poses, List<Double> dwells) {
        if (poses.size() != dwells.size() || poses.isEmpty()) {
            throw new IllegalArgumentException("one dwell per pose, at least one pose");
        }
        return new ExpertScript(poses, dwells);
    }

    /** Length of the script, seconds: the last pose is held from then on. */
    public double duration() {
        return end;
    }

    /**
     * Writes the commanded position at {@code t} seconds into {@code out} (length
     * {@link DipCell#D}; modified). Before 0 the first pose, after {@link #duration()} the last.
     */
    public void command(double t, double[] out) {
        int i = segmentAt(t);
        double s = Math.min(1.0, Math.max(0.0, (t - starts[i]) / durations[i]));
        double shape = s * s * s * (10 - 15 * s + 6 * s * s);
        double[] a = from[i];
        double[] b = to[i];
        for (int k = 0; k < DipCell.D; k++) {
            out[k] = a[k] + (b[k] - a[k]) * shape;
        }
    }

    /** Number of segments (moves and dwells). */
    int segments() {
        return starts.length;
    }

    private int segmentAt(double t) {
        int i = 0;
        while (i + 1 < starts.length && t >= starts[i + 1]) {
            i++;
        }
        return i;
    }

    /** The shortest coordinated move time within the expert's share of every bound, on the sample grid. */
    static double moveTime(double[] p0, double[] p1) {
        double t = MIN_MOVE;
        for (int k = 0; k < DipCell.D; k++) {
            DipCell.Joint j = DipCell.JOINTS.get(k);
            double delta = Math.abs(p1[k] - p0[k]);
            double v = DipCell.EXPERT_SHARE * j.velocity();
            double a = DipCell.EXPERT_SHARE * j.acceleration();
            double jerk = DipCell.EXPERT_SHARE * j.jerk();
            t = Math.max(t, PEAK_SPEED * delta / v);
            t = Math.max(t, StrictMath.sqrt(PEAK_ACCELERATION * delta / a));
            t = Math.max(t, StrictMath.cbrt(PEAK_JERK * delta / jerk));
        }
        return Math.ceil(t / DipCell.SAMPLE_PERIOD - 1e-9) * DipCell.SAMPLE_PERIOD;
    }

    private static double onGrid(double t) {
        return Math.round(t / DipCell.SAMPLE_PERIOD) * DipCell.SAMPLE_PERIOD;
    }

    private static double dwell(SplittableRandom r, double mean) {
        return onGrid(mean + uniform(r, 0.1));
    }

    private static double uniform(SplittableRandom r, double halfWidth) {
        return (r.nextDouble() * 2 - 1) * halfWidth;
    }

    private static double[] shifted(double[] pose, int joint, double by) {
        double[] p = pose.clone();
        p[joint] += by;
        return p;
    }
}
