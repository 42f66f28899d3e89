package dev.weft.runtime.report;

import java.util.Arrays;

/**
 * Thins a long series to what a plot of a given width can show: the samples falling in each pixel
 * column are replaced by the column's smallest and largest finite value, in time order, so a spike
 * one sample wide survives. Non-finite samples break the line. A series with at most two samples per
 * column is kept whole.
 */
final class MinMaxDecimator {

    /** Marks a break of the line in {@link #keep}'s answer. */
    static final int BREAK = -1;

    private MinMaxDecimator() {
    }

    /**
     * Indices of the samples to draw, in order, with {@link #BREAK} where the line must lift.
     *
     * @param time sample times, non-decreasing; not modified
     * @param value sample values, same length; not modified
     * @param start time at the left edge of the plot
     * @param end time at the right edge of the plot
     * @param columns pixel columns of the plot
     */
    static int[] keep(double[] time, double[] value, double start, double end, int columns) {
        int n = value.length;
        if (time.length != n) {
            throw new IllegalArgumentException("time has " + time.length + " samples, value has " + n);
        }
        if (columns < 1) {
            throw new IllegalArgumentException("columns must be positive, was " + columns);
        }
        int[] nonFiniteBefore = new int[n + 1];
        for (int i = 0; i < n; i++) {
            nonFiniteBefore[i + 1] = nonFiniteBefore[i] + (Double.isFinite(value[i]) ? 0 : 1);
        }
        int[] kept = new int[Math.min(n, 2 * columns) * 2 + 2];
        int count = 0;
        int last = -1;
        if (n <= 2 * columns) {
            for (int i = 0; i < n; i++) {
                if (Double.isFinite(value[i])) {
                    count = append(kept, count, last, i, nonFiniteBefore);
                    last = i;
                }
            }
            return Arrays.copyOf(kept, count);
        }
        double span = end > start ? end - start : 1;
        int i = 0;
        while (i < n) {
            int column = column(time[i], start, span, columns);
            int lowest = -1;
            int highest = -1;
            while (i < n && column(time[i], start, span, columns) == column) {
                double v = value[i];
                if (Double.isFinite(v)) {
                    if (lowest < 0 || v < value[lowest]) {
                        lowest = i;
                    }
                    if (highest < 0 || v > value[highest]) {
                        highest = i;
                    }
                }
                i++;
            }
            if (lowest < 0) {
                continue;
            }
            int first = Math.min(lowest, highest);
            int second = Math.max(lowest, highest);
            count = append(kept, count, last, first, nonFiniteBefore);
            last = first;
            if (second != first) {
                count = append(kept, count, last, second, nonFiniteBefore);
                last = second;
            }
        }
        return Arrays.copyOf(kept, count);
    }

    private static int append(int[] kept, int count, int last, int index, int[] nonFiniteBefore) {
        if (last >= 0 && nonFiniteBefore[index] - nonFiniteBefore[last + 1] > 0) {
            kept[count++] = BREAK;
        }
        kept[count++] = index;
        return count;
    }

    static int column(double t, double start, double span, int columns) {
        int c = (int) Math.floor((t - start) / span * columns);
        return Math.max(0, Math.min(columns - 1, c));
    }

    /**
     * SVG path data for the kept samples: "M" starts each unbroken piece, further points are implicit
     * line-tos, and a piece of one point gets a zero-length stroke so a round cap shows it as a dot.
     */
    static String pathData(int[] kept, double[] time, double[] value, Frame frame) {
        StringBuilder d = new StringBuilder(kept.length * 11 + 8);
        boolean penDown = false;
        int pieceLength = 0;
        String lastX = null;
        String lastY = null;
        for (int k : kept) {
            if (k == BREAK) {
                if (pieceLength == 1) {
                    d.append("h0");
                }
                penDown = false;
                pieceLength = 0;
                continue;
            }
            String x = Markup.coord(frame.x(time[k]));
            String y = Markup.coord(frame.y(value[k]));
            if (penDown && x.equals(lastX) && y.equals(lastY)) {
                continue;
            }
            d.append(penDown ? " " : "M").append(x).append(' ').append(y);
            penDown = true;
            pieceLength++;
            lastX = x;
            lastY = y;
        }
        if (pieceLength == 1) {
            d.append("h0");
        }
        return d.toString();
    }

    /** Maps data to pixels. */
    record Frame(double left, double width, double top, double height, double tStart, double tEnd,
                 double vMin, double vMax) {

        double x(double t) {
            double span = tEnd > tStart ? tEnd - tStart : 1;
            return left + (t - tStart) / span * width;
        }

        double y(double v) {
            double span = vMax > vMin ? vMax - vMin : 1;
            return top + (vMax - v) / span * height;
        }
    }
}
