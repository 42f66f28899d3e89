package dev.weft.runtime.source;

import static org.assertj.core.api.Assertions.assertThat;

import java.util.SplittableRandom;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.atomic.AtomicReference;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * A seeded stress harness for the observation seqlock (in place of jcstress, whose result
 * generator is not available here): one writer and two readers race for many publishes, with the
 * writer's and each reader's pauses drawn from a seeded generator so that each seed gives a
 * different mix of interleavings, and every read is checked against what the writer had finished
 * when the read began.
 *
 * <p>Publish {@code p} writes {@code p} into every value, {@code 10 p} as the time and {@code -p}
 * as the tag. Every read must be whole (one {@code p} throughout: values, time and tag), never go
 * back for one reader, and never be older than the last publish that had returned before the read
 * began (the read is at least as fresh as a lock would give). A seed that fails is printed, and
 * the run repeats with that seed.
 */
class LatestValueStressTest {

    static final int SIZE = 7;
    static final int PUBLISHES = 200_000;

    @ParameterizedTest(name = "seed {0}")
    @ValueSource(longs = {1, 2, 3, 0x5eed, 0xdecafL, 271828, 314159, 1_000_003})
    @Timeout(120)
    void everyReadIsWholeMonotonicAndAtLeastAsFreshAsTheLastFinishedPublish(long seed) throws Exception {
        LatestValue lv = new LatestValue(SIZE);
        AtomicLong finished = new AtomicLong();
        AtomicReference<String> failure = new AtomicReference<>();
        long[] readsDone = new long[2];

        Thread writer = new Thread(() -> {
            SplittableRandom r = new SplittableRandom(seed);
            double[] v = new double[SIZE];
            for (int p = 1; p <= PUBLISHES; p++) {
                java.util.Arrays.fill(v, p);
                lv.publish(10L * p, -p, v);
                finished.set(p);
                pause(r);
            }
        }, "stress-writer");
        Thread[] readers = new Thread[2];
        for (int k = 0; k < readers.length; k++) {
            int id = k;
            readers[k] = new Thread(() -> {
                SplittableRandom r = new SplittableRandom(seed * 31 + id);
                double[] out = new double[SIZE];
                long[] tag = new long[1];
                long last = 0;
                long reads = 0;
                while (failure.get() == null) {
                    long before = finished.get();
                    long time = lv.read(out, tag);
                    reads++;
                    if (time == -1) {
                        if (before > 0) {
                            failure.compareAndSet(null, "read nothing after publish " + before + " had returned");
                        }
                    } else {
                        long p = (long) out[0];
                        for (int i = 0; i < SIZE; i++) {
                            if (out[i] != p) {
                                failure.compareAndSet(null, "torn read: value " + i + " is " + out[i] + ", value 0 is " + p);
                            }
                        }
                        if (time != 10 * p || tag[0] != -p) {
                            failure.compareAndSet(null, "torn read: values " + p + ", time " + time + ", tag " + tag[0]);
                        }
                        if (p < last) {
                            failure.compareAndSet(null, "went back from " + last + " to " + p);
                        }
                        if (p < before) {
                            failure.compareAndSet(null, "stale read: " + p + " after publish " + before + " had returned");
                        }
                        last = p;
                        if (p == PUBLISHES) {
                            break;
                        }
                    }
                    pause(r);
                }
                readsDone[id] = reads;
            }, "stress-reader-" + k);
        }
        for (Thread t : readers) {
            t.start();
        }
        writer.start();
        writer.join();
        for (Thread t : readers) {
            t.join(60_000);
        }
        assertThat(failure.get()).as("seed " + seed).isNull();
        assertThat(lv.published()).isEqualTo(PUBLISHES);
        // the readers really raced the writer: each read many times, not once at the end
        assertThat(readsDone[0]).as("reads by reader 0").isGreaterThan(1000);
        assertThat(readsDone[1]).as("reads by reader 1").isGreaterThan(1000);
    }

    /** Mostly no pause, sometimes a short spin, rarely a yield: the seeded mix of interleavings. */
    static void pause(SplittableRandom r) {
        int x = r.nextInt(100);
        if (x < 70) {
            return;
        }
        if (x < 98) {
            for (int i = r.nextInt(64); i > 0; i--) {
                Thread.onSpinWait();
            }
        } else {
            Thread.yield();
        }
    }
}
