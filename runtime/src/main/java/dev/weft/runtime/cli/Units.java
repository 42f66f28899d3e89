package dev.weft.runtime.cli;

import java.util.Locale;

/** Formats quantities for the command line. */
final class Units {

    private Units() {
    }

    /** Seconds in the unit that reads best: s, ms or µs. */
    static String seconds(double s) {
        double a = Math.abs(s);
        if (a >= 1) {
            return String.format(Locale.ROOT, "%.3f s", s);
        }
        if (a >= 1e-3) {
            return String.format(Locale.ROOT, "%.3f ms", s * 1e3);
        }
        return String.format(Locale.ROOT, "%.1f µs", s * 1e6);
    }
}
