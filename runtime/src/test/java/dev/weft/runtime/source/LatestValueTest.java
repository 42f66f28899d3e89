package dev.weft.runtime.source;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.lang.management.ManagementFactory;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicReference;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

@Timeout(60)
class LatestValueTest {

    @Test
    void readsNothingBeforeTheFirstPublish() {
        LatestValue v = new LatestValue(3);
        double[] out = {7, 7, 7};
        assertThat(v.read(out)).isEqualTo(-1);
        assertThat(out).containsExactly(7, 7, 7);
        assertThat(v.published()).isZero();
    }

    @Test
    void readsTheNewestPublishWithItsTimeAndTag() {
        LatestValue v = new LatestValue(2);
        v.publish(100, 5, new double[] {1, 2, 99});
        v.publish(200, 6, new double[] {3, 4});
        double[] out = new double[2];
        long[] tag = new long[1];
        assertThat(v.read(out, tag)).isEqualTo(200);
        assertThat(out).containsExactly(3, 4);
        assertThat(tag[0]).isEqualTo(6);
        assertThat(v.published()).isEqualTo(2);
        v.publish(300, new double[] {5, 6});
        assertThat(v.read(out, tag)).isEqualTo(300);
        assertThat(tag[0]).isZero();
    }

    @Test
    void rejectsBadSizesWithExactMessages() {
        assertThatThrownBy(() -> new LatestValue(0)).hasMessage("a latest value needs at least one value, got 0");
        LatestValue v = new LatestValue(3);
        assertThatThrownBy(() -> v.publish(1, new double[2])).hasMessage("expected at least 3 values, got 2");
        assertThatThrownBy(() -> v.read(new double[1])).hasMessage("expected room for 3 values, got 1");
    }

    /**
     * One writer publishes arrays whose values all equal a counter, with time and tag equal to it too;
     * a reader on the other core checks every read is whole (all values equal, time and tag match) and
     * that the counter never goes backwards. A single-copy seqlock without the version recheck, or with
     * the copy chosen wrongly, fails this within a few thousand reads.
     */
    @Test
    void concurrentReadsAreNeverTorn() throws InterruptedException {
        int size = 32;
        int reads = 4_000_000;
        int races = 100_000;
        LatestValue v = new LatestValue(size);
        AtomicBoolean stop = new AtomicBoolean();
        Thread writer = new Thread(() -> {
            double[] values = new double[size];
            long n = 0;
            while (!stop.get()) {
                n++;
                java.util.Arrays.fill(values, n);
                v.publish(n, n, values);
            }
        }, "latest-value-writer");
        AtomicReference<String> failure = new AtomicReference<>();
        long[] seen = new long[2];
        Thread reader = new Thread(() -> {
            double[] out = new double[size];
            long[] tag = new long[1];
            long last = -1;
            long changes = 0;
            long deadline = System.nanoTime() + 30_000_000_000L;
            // At least `reads` reads and `races` observed changes (the writer must really have run
            // alongside), bounded by the deadline in case the cores are busy elsewhere.
            for (long i = 0; (i < reads || changes < races) && failure.get() == null
                    && ((i & 0xFFFF) != 0 || System.nanoTime() < deadline); i++) {
                long time = v.read(out, tag);
                if (time == -1) {
                    continue;
                }
                for (int k = 0; k < size; k++) {
                    if (out[k] != time) {
                        failure.set("read " + i + ": value " + k + " is " + out[k] + " but time is " + time);
                    }
                }
                if (tag[0] != time) {
                    failure.set("read " + i + ": tag " + tag[0] + " but time " + time);
                }
                if (time < last) {
                    failure.set("read " + i + ": went back from " + last + " to " + time);
                }
                if (time != last) {
                    changes++;
                }
                last = time;
            }
            seen[0] = changes;
            seen[1] = last;
        }, "latest-value-reader");
        writer.start();
        while (v.published() == 0 && writer.isAlive()) {
            Thread.onSpinWait();
        }
        reader.start();
        reader.join(50_000);
        stop.set(true);
        writer.join(5_000);
        assertThat(reader.isAlive()).isFalse();
        assertThat(failure.get()).isNull();
        assertThat(seen[0]).as("distinct observations the reader saw (the writer must have raced it)").isGreaterThanOrEqualTo(races);
        assertThat(v.published()).isGreaterThanOrEqualTo(seen[1]);
    }

    @Test
    void publishAndReadAllocateNothing() {
        com.sun.management.ThreadMXBean threads = (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        long id = Thread.currentThread().getId();
        LatestValue v = new LatestValue(16);
        double[] in = new double[16];
        double[] out = new double[16];
        long[] tag = new long[1];
        long sink = 0;
        for (int round = 0; round < 3; round++) {
            long before = threads.getThreadAllocatedBytes(id);
            for (int i = 0; i < 100_000; i++) {
                in[i & 15] = i;
                v.publish(i, i, in);
                sink += v.read(out, tag) + tag[0];
            }
            long bytes = threads.getThreadAllocatedBytes(id) - before;
            if (round > 0) {
                // The counter's own call costs a few dozen bytes at most; 100,000 rounds of one byte each would show.
                assertThat(bytes).as("bytes allocated by 100,000 publish+read pairs, round %d", round).isLessThan(1_000);
            }
        }
        assertThat(sink).isPositive();
    }
}
