package dev.weft.runtime.source;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import java.nio.ByteBuffer;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

/**
 * Frames offered on one thread and read on another through the shared-memory layout: a seeded
 * stress harness (the writer rushes frames into a two-slot ring while the reader copies them), every
 * frame read checked byte for byte, and nothing allocated per offer.
 */
class FrameRingTest {

    private static void fill(ByteBuffer frame, int bytes, long k) {
        int r = (int) (k % 251);
        for (int i = 0; i < bytes; i++) {
            frame.put(i, (byte) r);
            r = r == 250 ? 0 : r + 1;
        }
    }

    private static boolean whole(ByteBuffer frame, int bytes, long k) {
        int r = (int) (k % 251);
        for (int i = 0; i < bytes; i++) {
            if ((frame.get(i) & 0xFF) != r) {
                return false;
            }
            r = r == 250 ? 0 : r + 1;
        }
        return true;
    }

    @Test
    @Timeout(120)
    void framesRushedThroughATwoSlotRingAreNeverReadTorn() throws Exception {
        for (long seed = 1; seed <= 3; seed++) {
            FrameRing ring = new FrameRing("wrist", 2, 24, 32, 3, SharedFrameReader.RGB8);
            int bytes = ring.frameBytes();
            AtomicBoolean done = new AtomicBoolean();
            AtomicLong corrupt = new AtomicLong();
            AtomicLong read = new AtomicLong();
            AtomicLong backwards = new AtomicLong();
            Thread reader = new Thread(() -> {
                SharedFrameReader r = ring.reader();
                ByteBuffer out = ByteBuffer.allocateDirect(bytes);
                long last = 0;
                while (!done.get() || r.lastFrameNumber() < ring.written()) {
                    if (r.latest(out) >= 0) {
                        long k = r.lastFrameNumber();
                        if (!whole(out, bytes, k)) {
                            corrupt.incrementAndGet();
                        }
                        if (k <= last) {
                            backwards.incrementAndGet();
                        }
                        last = k;
                        read.incrementAndGet();
                    }
                }
            }, "frame-reader");
            reader.start();
            SplittableRandom rnd = new SplittableRandom(seed);
            ByteBuffer frame = ByteBuffer.allocateDirect(bytes);
            long stamp = System.nanoTime();
            for (long k = 1; k <= 20_000; k++) {
                fill(frame, bytes, k);
                stamp += 1 + rnd.nextInt(1000);
                assertThat(ring.offer(stamp, frame, 0)).isTrue();
                for (int spin = rnd.nextInt(2_000); spin > 0; spin--) {
                    Thread.onSpinWait();
                }
            }
            done.set(true);
            reader.join(TimeUnit.SECONDS.toMillis(30));
            assertThat(reader.isAlive()).isFalse();
            assertThat(corrupt.get()).as("seed %d: frames read torn", seed).isZero();
            assertThat(backwards.get()).as("seed %d: a frame read after a newer one", seed).isZero();
            // the reader did read along (how many depends on how the two threads are scheduled)
            assertThat(read.get()).as("seed %d: frames read", seed).isGreaterThan(10);
        }
    }

    @Test
    void offeringAllocatesNothingAndAStaleStampIsRefused() {
        FrameRing ring = new FrameRing("top", 3, 48, 64, 3, SharedFrameReader.BGR8);
        ByteBuffer frame = ByteBuffer.allocateDirect(ring.frameBytes());
        com.sun.management.ThreadMXBean mx =
                (com.sun.management.ThreadMXBean) java.lang.management.ManagementFactory.getThreadMXBean();
        long stamp = 1_000;
        for (int i = 0; i < 2_000; i++) {
            ring.offer(stamp += 10, frame, 0);
        }
        // up to three windows of 2,000 offers: an allocation of offer itself shows in every window, a
        // one-off of the JIT's own in one at most
        long[] windows = new long[3];
        boolean clean = false;
        for (int w = 0; w < windows.length && !clean; w++) {
            long before = mx.getCurrentThreadAllocatedBytes();
            for (int i = 0; i < 2_000; i++) {
                ring.offer(stamp += 10, frame, 0);
            }
            windows[w] = mx.getCurrentThreadAllocatedBytes() - before;
            clean = windows[w] < 256;
        }
        assertThat(clean).as("a window of 2,000 offers allocating under 256 bytes; windows %s",
                java.util.Arrays.toString(windows)).isTrue();
        assertThat(ring.offer(stamp, frame, 0)).as("the same stamp again").isFalse();
        long offered = ring.written();
        assertThat(offered).isBetween(4_000L, 8_000L);
        SharedFrameReader r = ring.reader();
        ByteBuffer out = ByteBuffer.allocateDirect(ring.frameBytes());
        assertThat(r.latest(out)).isEqualTo(stamp);
        assertThat(r.lastFrameNumber()).isEqualTo(offered);
        assertThat(r.pixelFormat()).isEqualTo(SharedFrameReader.BGR8);
        // nothing new since: no copy
        assertThat(r.latest(out)).isEqualTo(-1);
        long next = stamp + 10;
        assertThatThrownBy(() -> ring.offer(next, ByteBuffer.allocate(100), 0))
                .hasMessage("top: a frame is 9216 bytes; the buffer holds 100 from index 0, asked from 0");
        assertThatThrownBy(() -> new FrameRing("top", 1, 48, 64, 3, SharedFrameReader.RGB8))
                .hasMessage("top: a frame ring needs 2 to 1024 slots, got 1");
        assertThatThrownBy(() -> new FrameRing("top", 2, 48, 64, 3, SharedFrameReader.GREY8))
                .hasMessage("top: pixel format 2 does not fit 3 channels");
    }

    @Test
    void aCopyAtOrBeforeATimeTakesTheNewestFrameStampedNoLaterThanItWhileTheRingStillHoldsIt() {
        FrameRing ring = new FrameRing("overhead", 4, 2, 3, 3, SharedFrameReader.RGB8);
        int bytes = ring.frameBytes();
        ByteBuffer in = ByteBuffer.allocate(bytes);
        SharedFrameReader watch = ring.reader();
        SharedFrameReader copier = watch.sibling();
        ByteBuffer out = ByteBuffer.allocate(bytes);
        assertThat(copier.copyAtOrBefore(Long.MAX_VALUE, out)).as("no frame yet").isEqualTo(-1);
        for (long k = 1; k <= 10; k++) {
            fill(in, bytes, k);
            ring.offer(1_000L * k, in, 0);
        }
        // frames 7 to 10 are in the four slots; 1 to 6 were overwritten
        assertThat(copier.copyAtOrBefore(8_500, out)).isEqualTo(8_000);
        assertThat(whole(out, bytes, 8)).isTrue();
        assertThat(copier.copyAtOrBefore(7_000, out)).as("exactly at a stamp").isEqualTo(7_000);
        assertThat(whole(out, bytes, 7)).isTrue();
        assertThat(copier.copyAtOrBefore(Long.MAX_VALUE, out)).isEqualTo(10_000);
        assertThat(whole(out, bytes, 10)).isTrue();
        assertThat(copier.copyAtOrBefore(6_999, out)).as("frame 6 is gone from the ring").isEqualTo(-1);
        assertThat(copier.frames()).isEqualTo(3);
        // the sibling's copies leave the watching reader's state alone
        assertThat(watch.frames()).isZero();
        assertThat(watch.latestStamp()).isEqualTo(10_000);
        assertThat(watch.lastFrameNumber()).isZero();
    }
}
