package dev.weft.runtime.config;

/**
 * One joint of the robot, as {@code robot.joints[i]} gives it. Units are the joint's own: radians for
 * a revolute joint, metres for a prismatic one, and per second, per second squared, per second cubed
 * for the bounds.
 *
 * @param name unique among the robot's joints
 * @param min lower position bound
 * @param max upper position bound, {@code > min}
 * @param margin inner margin kept inside both bounds, {@code >= 0} and below half the range
 * @param velocity velocity bound, {@code > 0}
 * @param acceleration acceleration bound, {@code > 0}
 * @param jerk jerk bound, {@code > 0}
 */
public record JointConfig(String name, double min, double max, double margin, double velocity, double acceleration,
                          double jerk) {

    public JointConfig {
        if (name == null) {
            throw new IllegalArgumentException("a joint needs a name");
        }
    }

    /** The lowest position ever commanded: {@code min + margin}. */
    public double operatingMin() {
        return min + margin;
    }

    /** The highest position ever commanded: {@code max - margin}. */
    public double operatingMax() {
        return max - margin;
    }
}
