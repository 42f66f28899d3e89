package dev.weft.safety;

/** A {@link PlanPreview} over an array laid out joint-major ({@code means[joint * runs + b]}); reused, not thread-safe. */
final class ArrayPreview implements PlanPreview {

    private final int runs;
    double[] means;

    ArrayPreview(int runs) {
        this.runs = runs;
    }

    @Override
    public boolean runMeans(int joint, double[] out) {
        System.arraycopy(means, joint * runs, out, 0, runs);
        return true;
    }
}
