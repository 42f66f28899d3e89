package dev.weft.safety;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;

/**
 * Per-joint motion bounds: position range (with an optional inner margin), velocity, acceleration
 * and jerk. Immutable; validated once when {@link Builder#build()} runs.
 *
 * <p>Units are the joint's own (rad or m, per second, per second squared, per second cubed). The
 * operating range of a joint is {@code [positionMin + innerMargin, positionMax - innerMargin]}: the
 * limiter never commands a position outside it.
 *
 * <pre>{@code
 * JointLimits limits = JointLimits.builder()
 *     .joint("shoulder", -2.8, 2.8, 2.0, 8.0, 80.0)
 *     .joint("elbow", -2.0, 2.0, 2.5, 10.0, 100.0, 0.05)
 *     .build();
 * }</pre>
 */
public final class JointLimits {

    private final String[] names;
    private final double[] positionMin;
    private final double[] positionMax;
    private final double[] innerMargin;
    private final double[] velocity;
    private final double[] acceleration;
    private final double[] jerk;

    private JointLimits(Builder b) {
        int n = b.names.size();
        names = b.names.toArray(new String[0]);
        positionMin = new double[n];
        positionMax = new double[n];
        innerMargin = new double[n];
        velocity = new double[n];
        acceleration = new double[n];
        jerk = new double[n];
        for (int i = 0; i < n; i++) {
            double[] r = b.rows.get(i);
            positionMin[i] = r[0];
            positionMax[i] = r[1];
            velocity[i] = r[2];
            acceleration[i] = r[3];
            jerk[i] = r[4];
            innerMargin[i] = r[5];
        }
    }

    /** Starts an empty set of limits; add joints in order with {@code joint(...)}. */
    public static Builder builder() {
        return new Builder();
    }

    /** Number of joints. */
    public int count() {
        return names.length;
    }

    /** Name of joint {@code i}. */
    public String name(int i) {
        return names[i];
    }

    /** Lower position bound of joint {@code i} (before the inner margin). */
    public double positionMin(int i) {
        return positionMin[i];
    }

    /** Upper position bound of joint {@code i} (before the inner margin). */
    public double positionMax(int i) {
        return positionMax[i];
    }

    /** Inner margin of joint {@code i}; 0 when none was given. */
    public double innerMargin(int i) {
        return innerMargin[i];
    }

    /** Lowest position the limiter may command for joint {@code i}: {@code positionMin + innerMargin}. */
    public double operatingMin(int i) {
        return positionMin[i] + innerMargin[i];
    }

    /** Highest position the limiter may command for joint {@code i}: {@code positionMax - innerMargin}. */
    public double operatingMax(int i) {
        return positionMax[i] - innerMargin[i];
    }

    /** Velocity bound (magnitude) of joint {@code i}. */
    public double velocity(int i) {
        return velocity[i];
    }

    /** Acceleration bound (magnitude) of joint {@code i}. */
    public double acceleration(int i) {
        return acceleration[i];
    }

    /** Jerk bound (magnitude) of joint {@code i}. */
    public double jerk(int i) {
        return jerk[i];
    }

    /**
     * Returns limits with the same position ranges and the velocity, acceleration and jerk bounds
     * multiplied by the given factors (each in (0, 1]). Used for the soft start while arming.
     *
     * @throws IllegalArgumentException when a factor is not in (0, 1]
     */
    public JointLimits scaled(double velocityFactor, double accelerationFactor, double jerkFactor) {
        checkFactor("velocity factor", velocityFactor);
        checkFactor("acceleration factor", accelerationFactor);
        checkFactor("jerk factor", jerkFactor);
        Builder b = builder();
        for (int i = 0; i < count(); i++) {
            b.joint(names[i], positionMin[i], positionMax[i], velocity[i] * velocityFactor,
                    acceleration[i] * accelerationFactor, jerk[i] * jerkFactor, innerMargin[i]);
        }
        return b.build();
    }

    private static void checkFactor(String what, double f) {
        if (!(f > 0.0 && f <= 1.0)) {
            throw new IllegalArgumentException(what + " must be in (0, 1], was " + f);
        }
    }

    /** Collects joints in order; {@link #build()} validates them all. Not thread-safe. */
    public static final class Builder {
        private final List<String> names = new ArrayList<>();
        private final List<double[]> rows = new ArrayList<>();

        private Builder() {
        }

        /** Adds a joint without inner margin. See {@link #joint(String, double, double, double, double, double, double)}. */
        public Builder joint(String name, double positionMin, double positionMax,
                             double velocity, double acceleration, double jerk) {
            return joint(name, positionMin, positionMax, velocity, acceleration, jerk, 0.0);
        }

        /**
         * Adds the next joint. Nothing is checked until {@link #build()}.
         *
         * @param name         non-empty, unique
         * @param positionMin  lower position bound, finite, below {@code positionMax}
         * @param positionMax  upper position bound, finite
         * @param velocity     velocity bound, finite and &gt; 0
         * @param acceleration acceleration bound, finite and &gt; 0
         * @param jerk         jerk bound, finite and &gt; 0
         * @param innerMargin  distance kept from each position bound, finite, &gt;= 0 and less than
         *                     half the range
         */
        public Builder joint(String name, double positionMin, double positionMax, double velocity,
                             double acceleration, double jerk, double innerMargin) {
            names.add(name);
            rows.add(new double[] {positionMin, positionMax, velocity, acceleration, jerk, innerMargin});
            return this;
        }

        /**
         * Validates every joint and returns the limits.
         *
         * @throws IllegalArgumentException naming the first offending joint (index and name) and field
         */
        public JointLimits build() {
            if (names.isEmpty()) {
                throw new IllegalArgumentException("joint limits: at least one joint is required");
            }
            Set<String> seen = new HashSet<>();
            for (int i = 0; i < names.size(); i++) {
                String name = names.get(i);
                if (name == null || name.isBlank()) {
                    throw new IllegalArgumentException("joint " + i + ": name must not be empty");
                }
                if (!seen.add(name)) {
                    throw new IllegalArgumentException(where(i, name) + ": name is used by an earlier joint");
                }
                double[] r = rows.get(i);
                finite(i, name, "position min", r[0]);
                finite(i, name, "position max", r[1]);
                if (!(r[0] < r[1])) {
                    throw new IllegalArgumentException(where(i, name) + ": position min " + r[0]
                            + " must be below position max " + r[1]);
                }
                positive(i, name, "velocity bound", r[2]);
                positive(i, name, "acceleration bound", r[3]);
                positive(i, name, "jerk bound", r[4]);
                finite(i, name, "inner margin", r[5]);
                if (r[5] < 0.0) {
                    throw new IllegalArgumentException(where(i, name) + ": inner margin must be >= 0, was " + r[5]);
                }
                if (!(2.0 * r[5] < r[1] - r[0])) {
                    throw new IllegalArgumentException(where(i, name) + ": inner margin " + r[5]
                            + " leaves no operating range inside [" + r[0] + ", " + r[1] + "]");
                }
            }
            return new JointLimits(this);
        }

        private static void finite(int i, String name, String field, double x) {
            if (!Double.isFinite(x)) {
                throw new IllegalArgumentException(where(i, name) + ": " + field + " must be finite, was " + x);
            }
        }

        private static void positive(int i, String name, String field, double x) {
            if (!Double.isFinite(x) || !(x > 0.0)) {
                throw new IllegalArgumentException(where(i, name) + ": " + field
                        + " must be finite and > 0, was " + x);
            }
        }
    }

    static String where(int i, String name) {
        return "joint " + i + " '" + name + "'";
    }
}
