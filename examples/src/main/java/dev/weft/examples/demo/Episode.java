package dev.weft.examples.demo;

import java.util.Arrays;

/**
 * One recorded episode of the dip cell: at every sample its time (seconds), the measured joint
 * positions {@code q} (rad) and velocities {@code dq} (rad/s), and the expert's commanded
 * positions {@code a} (rad), the action. Arrays are row-major, {@link DipCell#D} values per
 * sample. Immutable: accessors copy into caller-owned arrays.
 */
public final class Episode {

    private final String name;
    private final double[] times;
    private final double[] q;
    private final double[] dq;
    private final double[] a;

    /**
     * @throws IllegalArgumentException when the arrays disagree in length or the times do not
     *     start at 0 and increase strictly
     */
    public Episode(String name, double[] times, double[] q, double[] dq, double[] a) {
        int n = times.length;
        if (n < 1 || q.length != n * DipCell.D || dq.length != n * DipCell.D || a.length != n * DipCell.D) {
            throw new IllegalArgumentException(name + ": arrays do not hold " + n + " samples of " + DipCell.D + " joints");
        }
        if (times[0] != 0.0) {
            throw new IllegalArgumentException(name + ": the first time must be 0, got " + times[0]);
        }
        for (int i = 1; i < n; i++) {
            if (!(times[i] > times[i - 1])) {
                throw new IllegalArgumentException(name + ": time of sample " + i + " (" + times[i]
                        + ") does not follow " + times[i - 1]);
            }
        }
        this.name = name;
        this.times = times.clone();
        this.q = q.clone();
        this.dq = dq.clone();
        this.a = a.clone();
    }

    public String name() {
        return name;
    }

    /** Number of samples. */
    public int length() {
        return times.length;
    }

    /** Time of sample {@code i}, seconds. */
    public double time(int i) {
        return times[i];
    }

    /** Measured position of {@code joint} at sample {@code i}, rad. */
    public double q(int i, int joint) {
        return q[i * DipCell.D + joint];
    }

    /** Measured velocity of {@code joint} at sample {@code i}, rad/s. */
    public double dq(int i, int joint) {
        return dq[i * DipCell.D + joint];
    }

    /** Commanded position (the action) of {@code joint} at sample {@code i}, rad. */
    public double a(int i, int joint) {
        return a[i * DipCell.D + joint];
    }

    /**
     * Writes the policy's observation at sample {@code i} into {@code out} at {@code offset}:
     * the six positions, then the six velocities. {@code out} is modified.
     */
    public void observation(int i, double[] out, int offset) {
        System.arraycopy(q, i * DipCell.D, out, offset, DipCell.D);
        System.arraycopy(dq, i * DipCell.D, out, offset + DipCell.D, DipCell.D);
    }

    /** A copy with {@code by} added to the measured position of {@code joint} at samples {@code from .. from+count-1}. */
    Episode withPositionGlitch(int joint, int from, int count, double by) {
        double[] q2 = q.clone();
        for (int i = from; i < from + count; i++) {
            q2[i * DipCell.D + joint] += by;
        }
        return new Episode(name, times, q2, dq, a);
    }

    /** A copy without samples {@code from .. from+count-1}: the recorder lost them. */
    Episode withDropout(int from, int count) {
        int n = times.length - count;
        double[] t2 = new double[n];
        double[] q2 = new double[n * DipCell.D];
        double[] dq2 = new double[n * DipCell.D];
        double[] a2 = new double[n * DipCell.D];
        for (int i = 0, j = 0; i < times.length; i++) {
            if (i >= from && i < from + count) {
                continue;
            }
            t2[j] = times[i];
            System.arraycopy(q, i * DipCell.D, q2, j * DipCell.D, DipCell.D);
            System.arraycopy(dq, i * DipCell.D, dq2, j * DipCell.D, DipCell.D);
            System.arraycopy(a, i * DipCell.D, a2, j * DipCell.D, DipCell.D);
            j++;
        }
        return new Episode(name, t2, q2, dq2, a2);
    }

    /** The same samples under another name. */
    Episode renamed(String newName) {
        return new Episode(newName, times, q, dq, a);
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof Episode e && name.equals(e.name) && Arrays.equals(times, e.times) && Arrays.equals(q, e.q)
                && Arrays.equals(dq, e.dq) && Arrays.equals(a, e.a);
    }

    @Override
    public int hashCode() {
        return Arrays.hashCode(times) * 31 + name.hashCode();
    }
}
