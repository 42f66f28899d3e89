package dev.weft.runtime.udp;

import static dev.weft.runtime.udp.DatagramStatus.ACCEPTED;
import static dev.weft.runtime.udp.DatagramStatus.BEYOND_WINDOW;
import static dev.weft.runtime.udp.DatagramStatus.DUPLICATE;
import static dev.weft.runtime.udp.DatagramStatus.OTHER_SESSION;
import static dev.weft.runtime.udp.DatagramStatus.OUT_OF_ORDER;
import static org.assertj.core.api.Assertions.assertThat;

import org.junit.jupiter.api.Test;

/** The window's rules with explicit receipt times (no clock, no sockets). */
class SequenceWindowTest {

    private static final long MS = 1_000_000L;
    private static final long MAX = 0xFFFF_FFFF_FFFF_FFFFL;

    @Test
    void acceptsWithinTheWindowAndCountsWhatWasSkipped() {
        SequenceWindow w = new SequenceWindow(10, 100 * MS, false);
        assertThat(w.offer(0, 1, 0)).isEqualTo(ACCEPTED);
        assertThat(w.offer(0, 2, MS)).isEqualTo(ACCEPTED);
        assertThat(w.offer(0, 12, 2 * MS)).as("exactly the window ahead").isEqualTo(ACCEPTED);
        assertThat(w.missed()).isEqualTo(9);
        assertThat(w.offer(0, 23, 3 * MS)).as("one beyond").isEqualTo(BEYOND_WINDOW);
        assertThat(w.offer(0, 12, 3 * MS)).isEqualTo(DUPLICATE);
        assertThat(w.offer(0, 11, 3 * MS)).isEqualTo(OUT_OF_ORDER);
        assertThat(w.last()).isEqualTo(12);
        assertThat(w.missed()).isEqualTo(9);
    }

    /** The fault of issue 11: one forged 2^64 − 1 used to lock the sender out and drive missed negative. */
    @Test
    void aForgedMaximumSequenceCannotLockTheSenderOut() {
        SequenceWindow w = new SequenceWindow(256, 100 * MS, false);
        for (long s = 1; s <= 100; s++) {
            assertThat(w.offer(0, s, s * MS)).isEqualTo(ACCEPTED);
        }
        assertThat(w.offer(0, MAX, 100 * MS)).as("2^64 - 1 is far behind 100, modulo 2^64").isEqualTo(OUT_OF_ORDER);
        assertThat(w.offer(0, 101, 101 * MS)).isEqualTo(ACCEPTED);
        assertThat(w.missed()).isZero();
        assertThat(w.last()).isEqualTo(101);
    }

    @Test
    void aForgedFirstDatagramHoldsTheSenderOffForAtMostTheSilence() {
        SequenceWindow w = new SequenceWindow(256, 100 * MS, false);
        assertThat(w.offer(0, MAX, 0)).as("forged, and the first seen").isEqualTo(ACCEPTED);
        assertThat(w.offer(0, 5_000, 10 * MS)).isEqualTo(BEYOND_WINDOW);
        assertThat(w.offer(0, 5_001, 99 * MS)).isEqualTo(BEYOND_WINDOW);
        assertThat(w.offer(0, 5_002, 100 * MS)).as("100 ms since the last accepted one").isEqualTo(ACCEPTED);
        assertThat(w.resyncs()).isEqualTo(1);
        assertThat(w.offer(0, 5_003, 101 * MS)).isEqualTo(ACCEPTED);
        assertThat(w.missed()).as("nothing counted across the resync").isZero();
    }

    @Test
    void aForgedNumberInsideTheWindowDelaysTheSenderByAtMostTheWindow() {
        SequenceWindow w = new SequenceWindow(256, 100 * MS, false);
        w.offer(0, 1_000, 0);
        assertThat(w.offer(0, 1_256, 0)).as("forged, the most the window lets through").isEqualTo(ACCEPTED);
        int rejected = 0;
        long s = 1_001;
        while (w.offer(0, s, MS) != ACCEPTED) {
            rejected++;
            s++;
        }
        assertThat(rejected).as("real datagrams 1001..1256 rejected").isEqualTo(256);
        assertThat(s).isEqualTo(1_257);
        assertThat(w.missed()).isEqualTo(255);
    }

    @Test
    void aMillionAheadIsRejected() {
        SequenceWindow w = new SequenceWindow(256, 100 * MS, true);
        w.offer(7, 50, 0);
        assertThat(w.offer(7, 50 + 1_000_000, MS)).isEqualTo(BEYOND_WINDOW);
        assertThat(w.offer(7, 51, 2 * MS)).isEqualTo(ACCEPTED);
        assertThat(w.missed()).isZero();
    }

    @Test
    void anotherSessionIsAdoptedOnlyAfterTheSilence() {
        SequenceWindow w = new SequenceWindow(256, 100 * MS, true);
        assertThat(w.offer(0xA, 900, 0)).isEqualTo(ACCEPTED);
        assertThat(w.offer(0xB, 1, 50 * MS)).as("the old session is still sending").isEqualTo(OTHER_SESSION);
        assertThat(w.offer(0xA, 901, 60 * MS)).isEqualTo(ACCEPTED);
        assertThat(w.offer(0xB, 2, 160 * MS)).as("restarted sender, 100 ms after the old one fell silent")
                .isEqualTo(ACCEPTED);
        assertThat(w.sessionChanges()).isEqualTo(1);
        assertThat(w.session()).isEqualTo(0xB);
        assertThat(w.offer(0xB, 3, 161 * MS)).isEqualTo(ACCEPTED);
        assertThat(w.offer(0xA, 902, 170 * MS)).as("the old session, replayed, while the new one sends")
                .isEqualTo(OTHER_SESSION);
        assertThat(w.missed()).isZero();
    }

    @Test
    void aKeyedSessionNeverGoesBackEvenAfterTheSilence() {
        SequenceWindow w = new SequenceWindow(256, 100 * MS, true);
        w.offer(1, 500, 0);
        assertThat(w.offer(1, 400, 1_000 * MS)).as("a replay of the current session").isEqualTo(OUT_OF_ORDER);
        assertThat(w.offer(1, 500, 1_000 * MS)).isEqualTo(DUPLICATE);
        assertThat(w.offer(1, 5_000, 1_000 * MS)).as("ahead after a long outage").isEqualTo(ACCEPTED);
        assertThat(w.resyncs()).isEqualTo(1);
    }

    @Test
    void anUnkeyedSenderThatRestartsFromOneIsTakenBackAfterTheSilence() {
        SequenceWindow w = new SequenceWindow(256, 100 * MS, false);
        w.offer(0, 500, 0);
        assertThat(w.offer(0, 1, 50 * MS)).isEqualTo(OUT_OF_ORDER);
        assertThat(w.offer(0, 2, 100 * MS)).isEqualTo(ACCEPTED);
        assertThat(w.last()).isEqualTo(2);
    }

    @Test
    void missedNeverGoesNegativeWhateverArrives() {
        SequenceWindow w = new SequenceWindow(1_000, 100 * MS, false);
        java.util.Random rnd = new java.util.Random(8);
        long now = 0;
        for (int i = 0; i < 200_000; i++) {
            now += rnd.nextInt(3) * MS;
            long s = switch (rnd.nextInt(4)) {
                case 0 -> rnd.nextLong();
                case 1 -> w.last() + 1 + rnd.nextInt(2_000);
                case 2 -> w.last() - rnd.nextInt(10);
                default -> MAX - rnd.nextInt(3);
            };
            w.offer(0, s, now);
            assertThat(w.missed()).isNotNegative();
        }
    }
}
