package dev.weft.runtime.report;

/**
 * An axis range with tick marks on round numbers (1, 2 or 5 times a power of ten), by the "loose
 * labelling" method of P. S. Heckbert, "Nice numbers for graph labels", Graphics Gems (1990): the
 * range is widened outward to whole steps so that the first and last tick are the axis ends.
 *
 * @param min the axis start, the first tick
 * @param max the axis end, the last tick
 * @param step distance between ticks
 * @param decimals decimals that print every tick exactly
 */
record NiceScale(double min, double max, double step, int decimals) {

    /**
     * A scale covering {@code [lo, hi]} with about {@code ticks} ticks. An empty or non-finite range
     * is widened to something drawable (a single value v becomes v ± 1, or ±10 % of v).
     */
    static NiceScale of(double lo, double hi, int ticks) {
        if (ticks < 2) {
            throw new IllegalArgumentException("ticks must be at least 2, was " + ticks);
        }
        if (!Double.isFinite(lo) || !Double.isFinite(hi)) {
            lo = 0;
            hi = 1;
        }
        if (lo > hi) {
            double t = lo;
            lo = hi;
            hi = t;
        }
        if (hi - lo <= Math.max(Math.abs(lo), Math.abs(hi)) * 1e-12) {
            double pad = lo == 0 ? 1 : Math.abs(lo) * 0.1;
            lo -= pad;
            hi += pad;
        }
        double range = niceNumber(hi - lo, false);
        double step = niceNumber(range / (ticks - 1), true);
        double first = Math.floor(lo / step) * step;
        double last = Math.ceil(hi / step) * step;
        int decimals = Math.max(0, (int) -Math.floor(Math.log10(step)));
        return new NiceScale(first, last, step, decimals);
    }

    /**
     * Heckbert's nice number near {@code x}: 1, 2, 5 or 10 times a power of ten; rounded to the
     * nearest when {@code round}, else the smallest not below {@code x}.
     */
    static double niceNumber(double x, boolean round) {
        double exponent = Math.floor(Math.log10(x));
        double power = Math.pow(10, exponent);
        double fraction = x / power;
        double nice;
        if (round) {
            nice = fraction < 1.5 ? 1 : fraction < 3 ? 2 : fraction < 7 ? 5 : 10;
        } else {
            nice = fraction <= 1 ? 1 : fraction <= 2 ? 2 : fraction <= 5 ? 5 : 10;
        }
        return nice * power;
    }

    /** The tick values from {@link #min} to {@link #max}, computed as integer multiples of the step. */
    double[] tickValues() {
        long firstIndex = Math.round(min / step);
        long lastIndex = Math.round(max / step);
        double[] values = new double[(int) (lastIndex - firstIndex + 1)];
        for (int i = 0; i < values.length; i++) {
            values[i] = (firstIndex + i) * step;
        }
        return values;
    }

    /** A tick value as printed on the axis. */
    String label(double value) {
        return Markup.fixed(value, decimals);
    }
}
