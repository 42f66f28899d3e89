package dev.weft.runtime.config;

import java.util.List;

/**
 * The robot: its name and its joints in action order (value {@code i} of every action drives
 * {@code joints.get(i)}).
 *
 * @param name the robot's name, as reports show it
 * @param joints at least one, names unique
 */
public record RobotConfig(String name, List<JointConfig> joints) {

    public RobotConfig {
        if (name == null || joints == null || joints.isEmpty()) {
            throw new IllegalArgumentException("a robot needs a name and at least one joint");
        }
        joints = List.copyOf(joints);
    }

    /** The number of joints, which is also the number of values D of every action. */
    public int jointCount() {
        return joints.size();
    }
}
