package dev.weft.filters;

/** The tolerances shared by the comparisons of optimised code against plain references and outside libraries. */
final class Tolerances {
    /** Absolute agreement required between a blender's position and {@link ReferenceBlender}. */
    static final double REFERENCE = 1e-12;

    /**
     * Agreement of a velocity or an acceleration, which can be much larger than the positions (a step
     * ratio below 1 multiplies a rate per step by 1/r and 1/r²): {@link #REFERENCE} per unit of magnitude.
     */
    static double reference(double expected) {
        return REFERENCE * Math.max(1.0, Math.abs(expected));
    }

    /**
     * Absolute agreement required between a derivative from {@code stateAt} and a sixth-order central
     * difference of the positions at unit spacing. Values are of order 1 and vary over 24 to 50 ticks; the
     * formula's truncation error on such curves (a cubic times a quintic weight, so degree 8) is below
     * 5e-8 there (it grows as the sixth power of the speed: about 3e-6 at half those time scales), four
     * orders of magnitude below the velocities (about 0.05 per tick) and the weight-rate terms checked.
     */
    static final double FINITE_DIFFERENCE = 1e-6;

    private Tolerances() {
    }
}
