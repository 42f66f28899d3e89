package dev.weft.runtime.loop;

import dev.weft.runtime.policy.InputBinding;

/**
 * The observation stream's recent samples, kept by the control loop once per tick (a sample is
 * kept when its time stamp is newer than the newest kept), and read on a history grid when a
 * query is made. Because the samples are kept per tick from the stream, never per inference call,
 * the history a query sees depends only on the stream and the query's observation time, not on
 * when queries happen or how long they take.
 *
 * <p>Capacity: a ring of {@code capacity} samples. At most one sample is kept per tick, so a ring
 * of {@code ceil((span + lateness)/Δc) + 4} samples still holds the latest sample at or before the
 * grid's oldest point when the query's observation is at most {@code lateness} old (see
 * {@link #capacityFor}).
 *
 * <p>A sample is kept only when its stamp is newer than the newest kept: a source must stamp
 * new values with a new time.
 *
 * <p>Threading: the control loop thread only; allocation-free after construction.
 */
final class SampleHistory {

    private final int size;
    private final int capacity;
    private final long[] times;
    private final double[] values;
    /** Ring index of the oldest sample. */
    private int head;
    private int count;

    /**
     * @param size values per sample
     * @param capacity samples kept, ≥ 2
     */
    SampleHistory(int size, int capacity) {
        if (capacity < 2) {
            throw new IllegalArgumentException("a sample history needs room for 2 samples, got " + capacity);
        }
        this.size = size;
        this.capacity = capacity;
        this.times = new long[capacity];
        this.values = new double[Math.multiplyExact(capacity, size)];
    }

    /**
     * The ring size for grids spanning {@code spanNanos} at control period {@code periodNanos},
     * when a queried observation may be up to {@code latenessNanos} old.
     */
    static int capacityFor(long spanNanos, long latenessNanos, long periodNanos) {
        long ticks = (spanNanos + latenessNanos + periodNanos - 1) / periodNanos + 4;
        if (ticks > Integer.MAX_VALUE) {
            throw new IllegalArgumentException("a history of " + spanNanos + " ns at a period of " + periodNanos
                    + " ns needs " + ticks + " samples");
        }
        return (int) ticks;
    }

    /** Samples kept now. */
    int count() {
        return count;
    }

    /** Keeps {@code sample} stamped {@code timeNanos} if it is newer than the newest kept; true if kept. */
    boolean keep(long timeNanos, double[] sample) {
        if (count > 0 && timeNanos <= times[index(count - 1)]) {
            return false;
        }
        int at;
        if (count < capacity) {
            at = index(count);
            count++;
        } else {
            at = head;
            head = head + 1 == capacity ? 0 : head + 1;
        }
        times[at] = timeNanos;
        System.arraycopy(sample, 0, values, at * size, size);
        return true;
    }

    /**
     * Writes {@code grid} sampled for observation time {@code t} into {@code out}, oldest point
     * first, {@code size} values per point. Nothing is written when no sample is kept.
     *
     * @param lateNanos how late a sample's stamp may be and still stand for a grid point (latest
     *     mode): a stream whose period equals the grid's spacing stamps its samples with some
     *     jitter, and a sample stamped a little after its grid point is still that point's sample
     * @return false when no sample is kept
     */
    boolean gather(InputBinding.History grid, long t, long lateNanos, double[] out) {
        if (count == 0) {
            return false;
        }
        for (int i = 0; i < grid.depth(); i++) {
            long p = grid.pointTime(t, i);
            int k = latestAtOrBefore(grid.linear() ? p : Math.min(t, p + lateNanos));
            int o = i * size;
            if (k < 0) {
                // before the first sample kept: that sample stands for the time before it
                System.arraycopy(values, index(0) * size, out, o, size);
            } else if (!grid.linear() || k == count - 1) {
                System.arraycopy(values, index(k) * size, out, o, size);
            } else {
                int a = index(k) * size;
                int b = index(k + 1) * size;
                long ta = times[index(k)];
                double w = (double) (p - ta) / (double) (times[index(k + 1)] - ta);
                for (int j = 0; j < size; j++) {
                    double va = values[a + j];
                    out[o + j] = va + w * (values[b + j] - va);
                }
            }
        }
        return true;
    }

    /** Logical index (0 = oldest) of the latest sample stamped at or before {@code p}, or −1. */
    private int latestAtOrBefore(long p) {
        int lo = 0;
        int hi = count - 1;
        int found = -1;
        while (lo <= hi) {
            int mid = (lo + hi) >>> 1;
            if (times[index(mid)] <= p) {
                found = mid;
                lo = mid + 1;
            } else {
                hi = mid - 1;
            }
        }
        return found;
    }

    private int index(int logical) {
        int i = head + logical;
        return i >= capacity ? i - capacity : i;
    }

    @Override
    public String toString() {
        return "SampleHistory[" + count + " of " + capacity + " samples of " + size + " values]";
    }
}
