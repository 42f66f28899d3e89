package dev.weft.safety;

/** The plan ahead from an array the test fills in full each tick. */
final class Previews {

    private Previews() {
    }

    /** A {@link PlanPreview} reading {@code means} joint-major: joint {@code d}'s run {@code b} at {@code means[d * runs + b]}. */
    static PlanPreview over(double[] means, int runs) {
        return (joint, out) -> {
            System.arraycopy(means, joint * runs, out, 0, runs);
            return true;
        };
    }
}
