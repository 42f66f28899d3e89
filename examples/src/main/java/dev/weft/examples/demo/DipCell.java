package dev.weft.examples.demo;

import java.util.List;

/**
 * The demo scenario, invented for weft: the <b>glaze dip cell</b>. A six-joint arm called
 * {@code dipper-six} runs the <b>dip-and-shelve</b> task: it takes a tile from the rack, dips it
 * into the glaze bath, flicks the excess off with its wrist and sets the tile on a drying shelf,
 * then returns home. Nothing here describes a real machine, product or data set; the numbers are
 * chosen to make a readable demo.
 *
 * <p>The joints, base to tool: {@code slew} (turns the column), {@code lift} (raises the upper
 * arm), {@code reach} (bends the forearm), {@code pitch}, {@code roll} and {@code twist} (the
 * wrist). All revolute, in radians.
 *
 * <p>This class holds the limits, the task's named poses and the sampling constants every other
 * part of the demo shares. Immutable.
 */
public final class DipCell {

    /** The robot's name in the configuration. */
    public static final String ROBOT = "dipper-six";

    /** Recording sample period, seconds (100 Hz). */
    public static final double SAMPLE_PERIOD = 0.01;

    /** Control period the demo configuration runs at, seconds (500 Hz). */
    public static final double CONTROL_PERIOD = 0.002;

    /** Share of each velocity, acceleration and jerk bound the scripted expert uses. */
    public static final double EXPERT_SHARE = 0.8;

    /** One joint's limits, as the configuration states them. */
    public record Joint(String name, double min, double max, double margin, double velocity, double acceleration,
                        double jerk) {

        /** Lowest position ever commanded. */
        public double lower() {
            return min + margin;
        }

        /** Highest position ever commanded. */
        public double upper() {
            return max - margin;
        }
    }

    /** The six joints in action order. */
    public static final List<Joint> JOINTS = List.of(
            new Joint("slew", -2.9, 2.9, 0.05, 1.6, 6.0, 60.0),
            new Joint("lift", -1.8, 1.8, 0.05, 1.4, 5.0, 50.0),
            new Joint("reach", -2.4, 2.4, 0.05, 1.6, 6.0, 60.0),
            new Joint("pitch", -2.9, 2.9, 0.05, 2.2, 9.0, 90.0),
            new Joint("roll", -2.9, 2.9, 0.05, 2.2, 9.0, 90.0),
            new Joint("twist", -3.0, 3.0, 0.05, 2.6, 10.0, 100.0));

    /** Number of joints (D). */
    public static final int D = 6;

    /** The arm's rest pose between cycles. */
    static final double[] HOME = {0.0, -0.6, 1.2, -0.6, 0.0, 0.0};
    /** Above the tile rack. */
    static final double[] RACK_ABOVE = {-0.85, -0.25, 0.95, -0.7, 0.0, 0.3};
    /** Gripping a tile in the rack (the slew and lift of the tile's slot vary per episode). */
    static final double[] RACK_GRIP = {-0.85, 0.1, 0.8, -0.9, 0.0, 0.3};
    /** Above the glaze bath. */
    static final double[] BATH_ABOVE = {0.3, -0.3, 1.1, -0.8, 0.0, -0.4};
    /** The tile under the glaze (the depth varies per episode). */
    static final double[] BATH_DIP = {0.3, 0.15, 0.95, -1.1, 0.0, -0.4};
    /** The wrist flick that sheds excess glaze: {@link #BATH_ABOVE} with the twist and roll turned. */
    static final double[] FLICK = {0.3, -0.3, 1.1, -0.8, 0.35, 0.5};
    /** The first drying-shelf slot; later slots turn the slew further. */
    static final double[] SHELF = {1.05, 0.0, 0.75, -0.75, 0.0, 1.0};
    /** Slew between two neighbouring shelf slots, rad. */
    static final double SHELF_SLOT_STEP = 0.1;
    /** Number of shelf slots. */
    static final int SHELF_SLOTS = 4;

    private DipCell() {
    }

    /** Joint names in action order. */
    public static List<String> jointNames() {
        return JOINTS.stream().map(Joint::name).toList();
    }
}
