package dev.weft.filters;

/** The one tolerance shared by every comparison of optimised code against a plain reference. */
final class Tolerances {
    /** Absolute agreement required between a blender and {@link ReferenceBlender}. */
    static final double REFERENCE = 1e-12;

    private Tolerances() {
    }
}
