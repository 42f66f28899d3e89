package dev.weft.runtime.udp;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.PortOptions;
import java.io.IOException;
import java.net.InetSocketAddress;
import java.nio.ByteBuffer;
import java.nio.channels.DatagramChannel;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The forged-datagram rows of issue 11's fault matrix, and the keyed link, over real sockets on
 * loopback. Every datagram is sent only after the one before it was judged, so counts are exact.
 */
@Timeout(60)
class UdpAuthenticatedLinkTest {

    private static final long MAX = 0xFFFF_FFFF_FFFF_FFFFL;
    private static final byte[] KEY = Loopback.key(0x30);
    private static final byte[] OTHER_KEY = Loopback.key(0x31);

    @TempDir
    Path dir;

    @BeforeEach
    void writeKey() throws IOException {
        Loopback.keyFile(dir, "link.key", KEY, "rw-------");
    }

    private UdpStateReceiver receiver(boolean keyed, Object... more) throws BadInputException {
        Map<String, Object> o = new HashMap<>();
        o.put("port", 0);
        o.put("size", 2);
        if (keyed) {
            o.put("key_file", "link.key");
        }
        for (int i = 0; i < more.length; i += 2) {
            o.put((String) more[i], more[i + 1]);
        }
        return UdpStateReceiver.create(new PortOptions("source.options", o, dir));
    }

    /** Sends one datagram and waits until the receiver has judged it. */
    private static void send(UdpStateReceiver r, DatagramChannel from, byte[] datagram) throws IOException {
        long before = r.accepted() + r.rejected();
        Loopback.send(from, datagram, r.localPort());
        assertThat(Loopback.await(() -> r.accepted() + r.rejected() == before + 1, 5_000)).as("datagram judged").isTrue();
    }

    private static byte[] keyed(byte[] key, long session, long sequence, double a, double b) {
        return ReferenceDatagrams.keyedState(key, session, sequence, sequence * 1_000, a, b);
    }

    private static double[] observation(UdpStateReceiver r) {
        double[] out = new double[2];
        assertThat(r.latest(out)).isPositive();
        return out;
    }

    /** Row "one forged UDP state datagram with sequence 2^64 − 1": now rejected, and the sender carries on. */
    @Test
    void aForgedMaximumSequenceNoLongerLocksTheSenderOut() throws Exception {
        try (UdpStateReceiver r = receiver(false); DatagramChannel robot = Loopback.bound("127.0.0.1");
                DatagramChannel forger = Loopback.bound("127.0.0.1")) {
            r.start();
            for (long s = 1; s <= 50; s++) {
                send(r, robot, ReferenceDatagrams.state(s, 0, s, -s));
            }
            send(r, forger, ReferenceDatagrams.state(MAX, 0, 1.5, 1.5));
            for (long s = 51; s <= 100; s++) {
                send(r, robot, ReferenceDatagrams.state(s, 0, s, -s));
            }
            assertThat(r.accepted()).isEqualTo(100);
            assertThat(r.count(DatagramStatus.OUT_OF_ORDER)).isEqualTo(1);
            assertThat(r.rejected()).isEqualTo(1);
            assertThat(r.missed()).isZero();
            assertThat(r.lastSequence()).isEqualTo(100);
            assertThat(observation(r)).containsExactly(100, -100);
        }
    }

    /** The same forgery as the first datagram ever seen: the real sender is back after the silence. */
    @Test
    void aForgedFirstDatagramHoldsTheSenderOffOnlyForTheSilence() throws Exception {
        // A silence of 1 s: the second datagram must arrive within it (it is sent as soon as the
        // first was judged), and the third after it (it is sent 1.2 s later).
        try (UdpStateReceiver r = receiver(false, "resync_silence_ms", 1_000); DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            send(r, robot, ReferenceDatagrams.state(MAX, 0, 1.5, 1.5));
            send(r, robot, ReferenceDatagrams.state(10_000, 0, 1, 1));
            assertThat(r.count(DatagramStatus.BEYOND_WINDOW)).isEqualTo(1);
            TimeUnit.MILLISECONDS.sleep(1_200);
            send(r, robot, ReferenceDatagrams.state(10_001, 0, 2, 2));
            send(r, robot, ReferenceDatagrams.state(10_002, 0, 3, 3));
            assertThat(r.accepted()).isEqualTo(3);
            assertThat(r.resyncs()).isEqualTo(1);
            assertThat(r.missed()).isZero();
            assertThat(observation(r)).containsExactly(3, 3);
        }
    }

    /** Row "a datagram from another local address with sequence + 10^6": rejected with a key, and without one. */
    @Test
    void aStrangerAMillionAheadIsRejected() throws Exception {
        for (boolean withKey : new boolean[] {false, true}) {
            try (UdpStateReceiver r = receiver(withKey, "allow", List.of("127.0.0.0/8"));
                    DatagramChannel robot = Loopback.bound("127.0.0.1");
                    DatagramChannel stranger = Loopback.bound("127.0.0.2")) {
                r.start();
                byte[] real = withKey ? keyed(KEY, 5, 1, 0.36, 0.1) : ReferenceDatagrams.state(1, 0, 0.36, 0.1);
                send(r, robot, real);
                send(r, stranger, ReferenceDatagrams.state(1_000_001, 0, 1.5, 1.5));
                if (withKey) {
                    send(r, stranger, keyed(OTHER_KEY, 5, 1_000_001, 1.5, 1.5));
                    assertThat(r.count(DatagramStatus.UNAUTHENTICATED)).isEqualTo(1);
                    assertThat(r.count(DatagramStatus.BAD_TAG)).isEqualTo(1);
                } else {
                    assertThat(r.count(DatagramStatus.BEYOND_WINDOW)).isEqualTo(1);
                }
                assertThat(r.accepted()).as("with key: %s", withKey).isEqualTo(1);
                assertThat(observation(r)).containsExactly(0.36, 0.1);
                assertThat(r.lastSequence()).isEqualTo(1);
            }
        }
    }

    /**
     * With a key, nothing but an authentic datagram changes the observation, its time or the
     * window. Everything is sent from the robot's own address, as a raw socket forging that
     * address would (issue 11's allowlist-bypass row): the allowlist passes it, the tag does not.
     */
    @Test
    void wronglyKeyedUnauthenticatedAndTruncatedDatagramsChangeNothing() throws Exception {
        try (UdpStateReceiver r = receiver(true); DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            send(r, robot, keyed(KEY, 77, 1, 0.25, -0.75));
            long[] senderTime = new long[1];
            double[] before = new double[2];
            long receivedAt = r.latest(before, senderTime);

            byte[] good = keyed(KEY, 77, 2, 9, 9);
            byte[] tampered = good.clone();
            tampered[40] ^= 0x40;
            send(r, robot, ReferenceDatagrams.state(2, 0, 9, 9));
            send(r, robot, keyed(OTHER_KEY, 77, 2, 9, 9));
            send(r, robot, tampered);
            send(r, robot, Arrays.copyOf(good, good.length - 5));
            send(r, robot, Arrays.copyOf(good, 40));
            send(r, robot, keyed(OTHER_KEY, 78, 1, 9, 9));

            assertThat(r.count(DatagramStatus.UNAUTHENTICATED)).isEqualTo(1);
            assertThat(r.count(DatagramStatus.BAD_TAG)).isEqualTo(3);
            assertThat(r.count(DatagramStatus.BAD_LENGTH)).isEqualTo(1);
            assertThat(r.count(DatagramStatus.TOO_SHORT)).isEqualTo(1);
            assertThat(r.accepted()).isEqualTo(1);
            double[] after = new double[2];
            long[] senderAfter = new long[1];
            assertThat(r.latest(after, senderAfter)).as("receipt time unchanged").isEqualTo(receivedAt);
            assertThat(after).containsExactly(0.25, -0.75);
            assertThat(senderAfter[0]).isEqualTo(1_000);
            assertThat(r.lastSequence()).isEqualTo(1);
            assertThat(r.session()).isEqualTo(77);
            assertThat(r.sessionChanges()).isZero();

            send(r, robot, good);
            assertThat(r.accepted()).as("the real sender's next datagram still gets in").isEqualTo(2);
            assertThat(observation(r)).containsExactly(9, 9);
            assertThat(r.describe()).contains(", HMAC-SHA-256 key from " + dir.resolve("link.key").toAbsolutePath())
                    .contains("1 unauthenticated", "3 bad tag");
        }
    }

    @Test
    void aReplayedAuthenticatedDatagramIsRejected() throws Exception {
        try (UdpStateReceiver r = receiver(true); DatagramChannel robot = Loopback.bound("127.0.0.1");
                DatagramChannel replayer = Loopback.bound("127.0.0.1")) {
            r.start();
            byte[][] sent = new byte[4][];
            for (int s = 1; s <= 3; s++) {
                sent[s] = keyed(KEY, 5, s, s, s);
                send(r, robot, sent[s]);
            }
            send(r, replayer, sent[2]);
            send(r, replayer, sent[3]);
            send(r, replayer, sent[1]);
            assertThat(r.accepted()).isEqualTo(3);
            assertThat(r.count(DatagramStatus.OUT_OF_ORDER)).isEqualTo(2);
            assertThat(r.count(DatagramStatus.DUPLICATE)).isEqualTo(1);
            assertThat(observation(r)).containsExactly(3, 3);
            assertThat(r.missed()).isZero();
        }
    }

    /** A restarted sender (new session id, sequence from 1) is taken once the old session fell silent. */
    @Test
    void aRestartedSenderResynchronisesWithItsNewSession() throws Exception {
        try (UdpStateReceiver r = receiver(true, "resync_silence_ms", 50); DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            for (int s = 1; s <= 5; s++) {
                send(r, robot, keyed(KEY, 0xA, 1_000 + s, s, s));
            }
            TimeUnit.MILLISECONDS.sleep(150);
            try (DatagramChannel restarted = Loopback.bound("127.0.0.1")) {
                for (int s = 1; s <= 3; s++) {
                    send(r, restarted, keyed(KEY, 0xB, s, -s, -s));
                }
            }
            assertThat(r.accepted()).isEqualTo(8);
            assertThat(r.rejected()).isZero();
            assertThat(r.sessionChanges()).isEqualTo(1);
            assertThat(r.session()).isEqualTo(0xB);
            assertThat(r.lastSequence()).isEqualTo(3);
            assertThat(r.missed()).isZero();
            assertThat(observation(r)).containsExactly(-3, -3);
        }
    }

    /** An old session's datagrams, replayed while the current sender is live, are rejected. */
    @Test
    void anotherSessionIsRejectedWhileTheCurrentOneSends() throws Exception {
        try (UdpStateReceiver r = receiver(true, "resync_silence_ms", 10_000); DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            send(r, robot, keyed(KEY, 0xB, 1, 1, 1));
            send(r, robot, keyed(KEY, 0xA, 900, 7, 7));
            send(r, robot, keyed(KEY, 0xB, 2, 2, 2));
            assertThat(r.count(DatagramStatus.OTHER_SESSION)).isEqualTo(1);
            assertThat(r.accepted()).isEqualTo(2);
            assertThat(observation(r)).containsExactly(2, 2);
        }
    }

    /**
     * Keyed datagrams cost the receiving thread the Mac's 48 bytes per tag and nothing else
     * (com.sun.management.ThreadMXBean#getThreadAllocatedBytes); docs/performance.md has the figure.
     */
    @Test
    void theKeyedReceiverAllocatesOnlyTheTagPerDatagram() throws Exception {
        try (UdpStateReceiver r = receiver(true); DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            long seq = 0;
            byte[][] datagrams = new byte[30_000][];
            for (int i = 0; i < datagrams.length; i++) {
                datagrams[i] = keyed(KEY, 1, ++seq, i, -i);
            }
            int warm = 10_000;
            for (int i = 0; i < warm; i++) {
                Loopback.send(robot, datagrams[i], r.localPort());
                awaitBehind(r, i + 1);
            }
            long before = Loopback.allocated(r.thread());
            for (int i = warm; i < datagrams.length; i++) {
                Loopback.send(robot, datagrams[i], r.localPort());
                awaitBehind(r, i + 1);
            }
            assertThat(Loopback.await(() -> r.accepted() == datagrams.length, 10_000)).isTrue();
            long bytes = Loopback.allocated(r.thread()) - before;
            int measured = datagrams.length - warm;
            System.out.printf("keyed udp state receiver: %d bytes on the receiving thread for %d datagrams (%.1f each)%n",
                    bytes, measured, (double) bytes / measured);
            assertThat(bytes).as("bytes for %d keyed datagrams", measured).isLessThanOrEqualTo(64L * measured);
            assertThat(r.rejected()).isZero();
        }
    }

    private static void awaitBehind(UdpStateReceiver r, long sent) {
        if (sent % 32 == 0) {
            long target = sent - 64;
            assertThat(Loopback.await(() -> r.accepted() >= target, 10_000)).isTrue();
        }
    }

    /** The port's datagrams carry its session and a tag only the key holder can make; the loop thread still allocates nothing. */
    @Test
    void theKeyedPortSendsTaggedCommands() throws Exception {
        int joints = 3;
        try (DatagramChannel robot = Loopback.bound("127.0.0.1");
                UdpCommandPort port = UdpCommandPort.create(new PortOptions("port.options",
                        Map.of("port", ((InetSocketAddress) robot.getLocalAddress()).getPort(), "key_file", "link.key",
                                "queue", 256), dir))) {
            port.open(joints);
            assertThat(port.session()).as("drawn at open").isNotZero();
            robot.configureBlocking(false);
            DatagramCodec robotCodec = DatagramCodec.keyed(new DatagramTag(KEY), 0);
            DatagramCodec wrongKey = DatagramCodec.keyed(new DatagramTag(OTHER_KEY), 0);
            ByteBuffer buf = ByteBuffer.allocate(1 << 16);
            CommandFrame f = new CommandFrame(joints);
            CommandFrame back = new CommandFrame(joints);
            Thread loop = Thread.currentThread();
            long loopBytes = 0;
            long senderBytes = 0;
            int batch = 100;
            for (int round = 0; round < 20; round++) {
                long before = Loopback.allocated(loop);
                long senderBefore = Loopback.allocated(port.senderThread());
                for (int i = 0; i < batch; i++) {
                    UdpCommandPortTest.fill(f, round * batch + i);
                    port.emit(f);
                }
                if (round >= 10) {
                    loopBytes += Loopback.allocated(loop) - before;
                }
                assertThat(port.dropped()).isZero();
                for (int i = 0; i < batch; i++) {
                    long tick = round * batch + i;
                    buf.clear();
                    long deadline = System.nanoTime() + 5_000_000_000L;
                    while (robot.receive(buf) == null) {
                        assertThat(System.nanoTime() < deadline).as("datagram %d arrives", tick).isTrue();
                        Thread.onSpinWait();
                    }
                    buf.flip();
                    UdpCommandPortTest.fill(f, tick);
                    assertThat(buf.remaining()).isEqualTo(DatagramCodec.commandLength(joints, true));
                    assertThat(wrongKey.decodeCommand(buf, back)).isEqualTo(DatagramStatus.BAD_TAG);
                    assertThat(robotCodec.decodeCommand(buf, back)).isEqualTo(DatagramStatus.ACCEPTED);
                    assertThat(robotCodec.session()).isEqualTo(port.session());
                    assertThat(robotCodec.sequence()).isEqualTo(tick + 1);
                    assertThat(back.tick).isEqualTo(tick);
                    assertThat(back.positions).containsExactly(f.positions);
                    assertThat(back.velocities).containsExactly(f.velocities);
                }
                if (round >= 10) {
                    senderBytes += Loopback.allocated(port.senderThread()) - senderBefore;
                }
            }
            System.out.printf("keyed udp command port: %d bytes on the loop thread, %d on the sender thread, 1000 frames%n",
                    loopBytes, senderBytes);
            assertThat(senderBytes).as("sender thread bytes for 1,000 keyed frames: the tag's 48 each").isLessThanOrEqualTo(64_000);
            // Only the emit batches are measured: 0 bytes measured on JDK 17 (the HMAC runs on the sender thread).
            assertThat(loopBytes).as("loop thread bytes for 1,000 keyed emits").isLessThan(1_024);
            assertThat(port.describe()).contains(", HMAC-SHA-256 key from ");
        }
    }

    @Test
    void aKeyedPortOpenedTwiceDrawsTwoSessions() throws Exception {
        Map<String, Object> o = Map.of("port", 9, "key_file", "link.key");
        try (UdpCommandPort a = UdpCommandPort.create(new PortOptions("port.options", o, dir));
                UdpCommandPort b = UdpCommandPort.create(new PortOptions("port.options", o, dir))) {
            a.open(1);
            b.open(1);
            assertThat(a.session()).isNotEqualTo(b.session());
        }
    }
}
