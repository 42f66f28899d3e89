package dev.weft.runtime.report;

/**
 * Counts of samples in equal bins whose width is a round number (1, 2 or 5 times a power of ten).
 * Bin {@code i} holds {@code start + i·width <= x < start + (i+1)·width}; the last bin also holds
 * its right edge. Non-finite samples are counted apart and belong to no bin.
 *
 * @param start left edge of the first bin
 * @param width bin width
 * @param counts samples per bin
 * @param nonFinite samples that were NaN or infinite
 */
record Histogram(double start, double width, long[] counts, long nonFinite) {

    /**
     * Bins over the finite samples' range, about {@code bins} of them.
     *
     * @param samples the values; not modified
     * @param fromZero start the first bin at zero when every sample is positive (latencies)
     * @param bins the number of bins wanted; the round width makes it a little more or less
     */
    static Histogram of(double[] samples, boolean fromZero, int bins) {
        if (bins < 1) {
            throw new IllegalArgumentException("bins must be positive, was " + bins);
        }
        double lo = Double.POSITIVE_INFINITY;
        double hi = Double.NEGATIVE_INFINITY;
        long nonFinite = 0;
        for (double s : samples) {
            if (Double.isFinite(s)) {
                lo = Math.min(lo, s);
                hi = Math.max(hi, s);
            } else {
                nonFinite++;
            }
        }
        if (lo > hi) {
            return new Histogram(0, 1, new long[0], nonFinite);
        }
        if (fromZero && lo >= 0) {
            lo = 0;
        }
        double width;
        if (hi - lo <= Math.max(Math.abs(lo), Math.abs(hi)) * 1e-12) {
            width = NiceScale.niceNumber(Math.max(Math.abs(hi), 1e-3) / bins, true);
        } else {
            width = NiceScale.niceNumber((hi - lo) / bins, true);
        }
        double start = Math.floor(lo / width) * width;
        int count = (int) Math.max(1, Math.ceil((hi - start) / width - 1e-9));
        if (start + count * width < hi) {
            count++;
        }
        long[] counts = new long[count];
        for (double s : samples) {
            if (Double.isFinite(s)) {
                int bin = (int) Math.floor((s - start) / width);
                counts[Math.max(0, Math.min(count - 1, bin))]++;
            }
        }
        return new Histogram(start, width, counts, nonFinite);
    }

    /** Right edge of the last bin. */
    double end() {
        return start + counts.length * width;
    }

    /** Samples in all bins. */
    long total() {
        long t = 0;
        for (long c : counts) {
            t += c;
        }
        return t;
    }

    /** The largest bin count. */
    long peak() {
        long p = 0;
        for (long c : counts) {
            p = Math.max(p, c);
        }
        return p;
    }
}
