package dev.weft.safety;

/**
 * The limiter's response to a hold pose with a sinusoidal wiggle on top, the plan's velocity and
 * acceleration given exactly: the measurement behind the never-amplifies test and the gain plot
 * of docs/safety.md ({@link GainPlot}).
 */
final class WiggleResponse {

    /** Seconds of settling before the measured window. */
    static final double SETTLE_SECONDS = 2.0;
    /** Length of the measured window, s (a whole number of periods of every frequency used). */
    static final double WINDOW_SECONDS = 2.0;
    static final double HOLD = 0.3;
    /** The wiggle's amplitude rises from 0 over this time, s. */
    static final double FADE_IN_SECONDS = 1.0;

    /** Peak-to-peak of the command's deviation from the hold pose over the window, divided by the target's. */
    final double gain;
    /** Largest DFT amplitude of the command at a frequency neither the wiggle's nor a multiple of it, over the wiggle's amplitude. */
    final double otherFrequencies;
    /** Share of the window's ticks with the jerk flag set. */
    final double jerkFlagged;
    /** Largest |command - target| over the window. */
    final double largestError;

    /** Largest DFT amplitude at a multiple of the wiggle's frequency (a harmonic), over the wiggle's amplitude. */
    final double harmonics;

    private WiggleResponse(double gain, double otherFrequencies, double jerkFlagged, double largestError, double harmonics) {
        this.harmonics = harmonics;
        this.gain = gain;
        this.otherFrequencies = otherFrequencies;
        this.jerkFlagged = jerkFlagged;
        this.largestError = largestError;
    }

    /** The lift joint of the demo arm: the tightest bounds of the demo (1.4 rad/s, 5 rad/s^2, 50 rad/s^3). */
    static JointLimits liftJoint() {
        return JointLimits.builder().joint("lift", -1.8, 1.8, 1.4, 5, 50, 0.05).build();
    }

    static WiggleResponse measure(JointLimits limits, double dt, double amplitude, double hertz) {
        return measure(limits, dt, amplitude, hertz, false);
    }

    /**
     * As {@link #measure(JointLimits, double, double, double)}; with {@code preview}, the limiter
     * also gets the plan's preview, the means of the target over the runs ahead that the limiter
     * asks for, summed afresh from the target at each tick.
     */
    static WiggleResponse measure(JointLimits limits, double dt, double amplitude, double hertz, boolean preview) {
        JerkLimiter l = JerkLimiter.create(limits, dt);
        int[] ends = l.previewRunEnds();
        double[] ahead = preview ? new double[ends.length] : null;
        PlanPreview source = preview ? Previews.over(ahead, ends.length) : null;
        if (!l.reset(new double[] {HOLD})) {
            throw new IllegalStateException("hold pose not accepted");
        }
        double[] p = new double[1];
        double[] pv = new double[1];
        double[] pa = new double[1];
        double[] c = new double[1];
        int settle = (int) Math.round(SETTLE_SECONDS / dt);
        int window = (int) Math.round(WINDOW_SECONDS / dt);
        double[] dev = new double[window];
        double lo = Double.POSITIVE_INFINITY;
        double hi = Double.NEGATIVE_INFINITY;
        double tlo = Double.POSITIVE_INFINITY;
        double thi = Double.NEGATIVE_INFINITY;
        int flagged = 0;
        double largestError = 0;
        double w = 2 * Math.PI * hertz;
        double[] track = new double[settle + window + 2 + ends[ends.length - 1]];
        for (int k = 1; k < track.length; k++) {
            track[k] = target(k * dt, amplitude, w);
        }
        for (int k = 1; k <= settle + window; k++) {
            double t = k * dt;
            if (ahead != null) {
                int from = 0;
                for (int b = 0; b < ends.length; b++) {
                    double sum = 0;
                    for (int i = from; i < ends[b]; i++) {
                        sum += track[k + i];
                    }
                    ahead[b] = sum / (ends[b] - from);
                    from = ends[b];
                }
            }
            // the wiggle fades in over the first second along a quintic smooth step, so a feasible
            // one starts without a mismatch between the held state and the plan
            double s = Math.min(1.0, t / FADE_IN_SECONDS);
            double e = s * s * s * (10 - 15 * s + 6 * s * s);
            double e1 = s < 1 ? 30 * s * s * (1 - s) * (1 - s) / FADE_IN_SECONDS : 0;
            double e2 = s < 1 ? 60 * s * (1 - s) * (1 - 2 * s) / (FADE_IN_SECONDS * FADE_IN_SECONDS) : 0;
            double sin = Math.sin(w * t);
            double cos = Math.cos(w * t);
            p[0] = HOLD + amplitude * e * sin;
            pv[0] = amplitude * (e1 * sin + e * w * cos);
            pa[0] = amplitude * (e2 * sin + 2 * e1 * w * cos - e * w * w * sin);
            int flags = l.apply(p, pv, pa, source, c);
            if (k > settle) {
                double d = c[0] - HOLD;
                dev[k - settle - 1] = d;
                lo = Math.min(lo, d);
                hi = Math.max(hi, d);
                tlo = Math.min(tlo, p[0] - HOLD);
                thi = Math.max(thi, p[0] - HOLD);
                largestError = Math.max(largestError, Math.abs(c[0] - p[0]));
                if ((flags & JerkLimiter.JERK) != 0) {
                    flagged++;
                }
            }
        }
        return spectrum(dev, window, hertz, amplitude, hi - lo, thi - tlo, flagged, largestError);
    }

    /** The wiggle's position at time t (the fade-in times the sine, on the hold pose). */
    private static double target(double t, double amplitude, double w) {
        double s = Math.min(1.0, t / FADE_IN_SECONDS);
        double e = s * s * s * (10 - 15 * s + 6 * s * s);
        return HOLD + amplitude * e * Math.sin(w * t);
    }

    private static WiggleResponse spectrum(double[] dev, int window, double hertz, double amplitude, double span,
                                           double targetSpan, int flagged, double largestError) {
        // plain DFT over the window; the wiggle's own bin is the one at 'hertz', its harmonics the
        // multiples of it
        int own = (int) Math.round(hertz * WINDOW_SECONDS);
        double other = 0;
        double harmonic = 0;
        for (int b = 1; b < window / 2; b++) {
            if (b == own) {
                continue;
            }
            double re = 0;
            double im = 0;
            for (int i = 0; i < window; i++) {
                double angle = 2 * Math.PI * b * (double) i / window;
                re += dev[i] * Math.cos(angle);
                im += dev[i] * Math.sin(angle);
            }
            double amp = 2 * Math.hypot(re, im) / window;
            if (b % own == 0) {
                harmonic = Math.max(harmonic, amp);
            } else {
                other = Math.max(other, amp);
            }
        }
        return new WiggleResponse(span / targetSpan, other / amplitude, flagged / (double) window, largestError, harmonic / amplitude);
    }
}
