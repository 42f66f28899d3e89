package dev.weft.runtime.udp;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import java.io.IOException;
import java.nio.channels.DatagramChannel;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;

@Timeout(60)
class UdpStateReceiverTest {

    private static UdpStateReceiver receiver(Map<String, ?> options) throws BadInputException {
        return UdpStateReceiver.create(Loopback.options("source.options", options));
    }

    private static List<String> problems(Map<String, ?> options) {
        try {
            receiver(options);
        } catch (BadInputException e) {
            return e.problems().stream().map(Problem::toString).toList();
        }
        throw new AssertionError("expected bad options: " + options);
    }

    @Test
    void reportsEveryBadOptionByKeyPath() {
        assertThat(problems(Map.of())).containsExactly(
                "source.options.port: is required",
                "source.options.size: is required");
        assertThat(problems(Map.of("port", 70_000, "size", 3))).containsExactly(
                "source.options.port: must be in [0, 65535], got 70000");
        assertThat(problems(Map.of("port", 9000, "size", 0))).containsExactly(
                "source.options.size: must be in [1, 8184], got 0");
        assertThat(problems(Map.of("port", 9000, "size", 3, "prot", 1))).containsExactly(
                "source.options.prot: unknown option");
        assertThat(problems(Map.of("port", 9000, "size", 3, "bind", "robot.local"))).containsExactly(
                "source.options.bind: must be a literal IP address such as 127.0.0.1, got \"robot.local\"");
        assertThat(problems(Map.of("port", 9000, "size", 3, "allow", List.of("127.0.0.1", "10.0.0.0/33", "localhost", 5))))
                .containsExactly(
                        "source.options.allow[3]: must be text, got 5",
                        "source.options.allow[1]: prefix length must be 0 to 32, got \"33\"",
                        "source.options.allow[2]: must be an IP address or address/prefix such as 127.0.0.0/8, got \"localhost\"");
        assertThat(problems(Map.of("port", 9000, "size", 3, "allow", List.of()))).containsExactly(
                "source.options.allow: must name at least one address (an empty list would reject every datagram)");
        assertThat(problems(Map.of("port", 9000, "size", 3, "allow", List.of("::1")))).containsExactly(
                "source.options.allow: has no IPv4 entry, but bind is \"127.0.0.1\": every datagram would be rejected");
    }

    @Test
    void acceptsAStateDatagramAndStampsItOnArrival() throws Exception {
        try (UdpStateReceiver r = receiver(Map.of("port", 0, "size", 3));
                DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            double[] out = new double[3];
            assertThat(r.latest(out)).isEqualTo(-1);
            r.start();
            assertThat(r.localPort()).isPositive();
            long before = System.nanoTime();
            Loopback.send(robot, ReferenceDatagrams.state(1, 123_456, 0.5, -1.25, 3.0), r.localPort());
            assertThat(Loopback.await(() -> r.accepted() == 1, 5_000)).isTrue();
            long after = System.nanoTime();
            long[] senderTime = new long[1];
            long t = r.latest(out, senderTime);
            assertThat(t).isBetween(before, after);
            assertThat(out).containsExactly(0.5, -1.25, 3.0);
            assertThat(senderTime[0]).isEqualTo(123_456);
            assertThat(r.rejected()).isZero();
            assertThat(r.lastSequence()).isEqualTo(1);
            assertThat(r.describe()).isEqualTo("udp state on 127.0.0.1:" + r.localPort()
                    + ", 3 values, allow [127.0.0.0/8, ::1]: 1 accepted, 0 rejected, 0 missed");
        }
    }

    @Test
    void rejectsDuplicateAndOutOfOrderSequenceNumbers() throws Exception {
        try (UdpStateReceiver r = receiver(Map.of("port", 0, "size", 1));
                DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            long[] sequence = {1, 2, 2, 1, 5, 4, 5, 6};
            for (long s : sequence) {
                Loopback.send(robot, ReferenceDatagrams.state(s, 0, s * 10.0), r.localPort());
            }
            assertThat(Loopback.await(() -> r.accepted() + r.rejected() == sequence.length, 5_000)).isTrue();
            assertThat(r.accepted()).isEqualTo(4);
            assertThat(r.count(DatagramStatus.DUPLICATE)).isEqualTo(2);
            assertThat(r.count(DatagramStatus.OUT_OF_ORDER)).isEqualTo(2);
            assertThat(r.missed()).as("3 and 4 never arrived in order").isEqualTo(2);
            double[] out = new double[1];
            assertThat(r.latest(out)).isPositive();
            assertThat(out[0]).isEqualTo(60.0);
            assertThat(r.describe()).endsWith(": 4 accepted, 4 rejected (2 duplicate sequence, 2 out of order), 2 missed");
        }
    }

    @Test
    void rejectsSourcesOffTheAllowlist() throws Exception {
        // 127.0.0.2 is loopback too (Linux routes all of 127.0.0.0/8 to lo), but not on this list.
        try (UdpStateReceiver r = receiver(Map.of("port", 0, "size", 2, "allow", List.of("127.0.0.1")));
                DatagramChannel stranger = Loopback.bound("127.0.0.2");
                DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            Loopback.send(stranger, ReferenceDatagrams.state(1, 0, 9, 9), r.localPort());
            Loopback.send(stranger, ReferenceDatagrams.state(2, 0, 9, 9), r.localPort());
            Loopback.send(robot, ReferenceDatagrams.state(3, 0, 1, 2), r.localPort());
            Loopback.send(stranger, ReferenceDatagrams.state(4, 0, 9, 9), r.localPort());
            assertThat(Loopback.await(() -> r.accepted() + r.rejected() == 4, 5_000)).isTrue();
            assertThat(r.count(DatagramStatus.NOT_ALLOWED)).isEqualTo(3);
            assertThat(r.accepted()).isEqualTo(1);
            double[] out = new double[2];
            r.latest(out);
            assertThat(out).containsExactly(1, 2);
        }
    }

    @Test
    void aPrefixEntryAdmitsTheWholeRange() throws Exception {
        try (UdpStateReceiver r = receiver(Map.of("port", 0, "size", 1, "allow", List.of("127.0.0.0/30")));
                DatagramChannel two = Loopback.bound("127.0.0.2");
                DatagramChannel four = Loopback.bound("127.0.0.4")) {
            r.start();
            Loopback.send(two, ReferenceDatagrams.state(1, 0, 1), r.localPort());
            Loopback.send(four, ReferenceDatagrams.state(2, 0, 2), r.localPort());
            assertThat(Loopback.await(() -> r.accepted() + r.rejected() == 2, 5_000)).isTrue();
            assertThat(r.accepted()).isEqualTo(1);
            assertThat(r.count(DatagramStatus.NOT_ALLOWED)).isEqualTo(1);
        }
    }

    /** One junk datagram of each malformed kind, all with the right CRC unless the CRC is the fault. */
    private static List<byte[]> junk(Random rnd) {
        List<byte[]> kinds = new ArrayList<>();
        byte[] good = ReferenceDatagrams.state(1, 0, 1, 2, 3, 4);
        byte[] magic = good.clone();
        magic[0] = 'W';
        kinds.add(ReferenceDatagrams.seal(magic));
        byte[] version = good.clone();
        version[5] = 1;
        kinds.add(ReferenceDatagrams.seal(version));
        byte[] length = good.clone();
        length[6] = 10;
        kinds.add(ReferenceDatagrams.seal(length));
        byte[] crc = good.clone();
        crc[25] ^= 4;
        kinds.add(crc);
        kinds.add(ReferenceDatagrams.state(1, 0, 1, 2, 3));
        kinds.add(ReferenceDatagrams.state(1, 0, 1, Double.NaN, 3, 4));
        kinds.add(new byte[] {1, 2, 3});
        byte[] noise = new byte[60];
        rnd.nextBytes(noise);
        kinds.add(noise);
        return kinds;
    }

    private static final DatagramStatus[] JUNK_STATUS = {
        DatagramStatus.BAD_MAGIC, DatagramStatus.BAD_VERSION, DatagramStatus.BAD_LENGTH, DatagramStatus.BAD_CRC,
        DatagramStatus.WRONG_COUNT, DatagramStatus.NON_FINITE, DatagramStatus.TOO_SHORT, DatagramStatus.BAD_MAGIC};

    /**
     * 100,000 malformed datagrams, every kind, from one source: each is rejected and counted under
     * its reason, and the receiving thread allocates nothing per datagram (its allocation counter,
     * com.sun.management.ThreadMXBean#getThreadAllocatedBytes, read before and after). The sender is
     * paced by the test so the kernel drops nothing and the counts are exact.
     */
    @Test
    void aMalformedStormIsCountedAndAllocatesNothingPerDatagram() throws Exception {
        Random rnd = new Random(5);
        List<byte[]> kinds = junk(rnd);
        try (UdpStateReceiver r = receiver(Map.of("port", 0, "size", 4));
                DatagramChannel robot = Loopback.bound("127.0.0.1")) {
            r.start();
            // Warm up: the first datagrams decode the source address once and compile the paths.
            long seq = 0;
            seq = sendPaced(r, robot, kinds, 20_000, seq);
            long[] before = new long[DatagramStatus.values().length];
            for (DatagramStatus s : DatagramStatus.values()) {
                before[s.ordinal()] = r.count(s);
            }
            Thread receiving = r.thread();
            long allocatedBefore = Loopback.allocated(receiving);
            int storm = 100_000;
            seq = sendPaced(r, robot, kinds, storm, seq);
            long allocated = Loopback.allocated(receiving) - allocatedBefore;

            int[] expected = new int[DatagramStatus.values().length];
            for (int i = 0; i < storm; i++) {
                int kind = i % (kinds.size() + 1);
                expected[kind == kinds.size() ? 0 : JUNK_STATUS[kind].ordinal()]++;
            }
            for (DatagramStatus s : DatagramStatus.values()) {
                assertThat(r.count(s) - before[s.ordinal()]).as("%s during the storm", s).isEqualTo(expected[s.ordinal()]);
            }
            // Measured on JDK 17: 0 bytes for 100,000 datagrams. The bound leaves room for a stray
            // safepoint or deoptimisation, and is still far below one byte per datagram.
            assertThat(allocated).as("bytes the receiving thread allocated for %d datagrams", storm).isLessThan(16_384);
            System.out.printf("udp state receiver: %d bytes allocated on the receiving thread for %d datagrams%n", allocated, storm);
        }
    }

    /**
     * Sends {@code count} datagrams cycling through the junk kinds and one valid datagram with a
     * fresh sequence number, waiting whenever the receiver falls 64 behind.
     */
    private static long sendPaced(UdpStateReceiver r, DatagramChannel robot, List<byte[]> kinds, int count, long seq)
            throws IOException {
        long start = r.accepted() + r.rejected();
        for (int i = 0; i < count; i++) {
            int kind = i % (kinds.size() + 1);
            byte[] d = kind == kinds.size() ? ReferenceDatagrams.state(++seq, i, 1, 2, 3, 4) : kinds.get(kind);
            Loopback.send(robot, d, r.localPort());
            int sent = i + 1;
            if (sent % 32 == 0 || sent == count) {
                long target = start + sent - (sent == count ? 0 : 64);
                assertThat(Loopback.await(() -> r.accepted() + r.rejected() >= target, 10_000))
                        .as("receiver keeps up (%d sent)", sent).isTrue();
            }
        }
        return seq;
    }

    @Test
    void startAndCloseFollowTheLifecycle() throws Exception {
        UdpStateReceiver r = receiver(Map.of("port", 0, "size", 1));
        r.start();
        Thread t = r.thread();
        assertThat(t.isAlive()).isTrue();
        assertThatThrownBy(r::start).isInstanceOf(IllegalStateException.class)
                .hasMessage("the UDP state receiver was already started or closed");
        r.close();
        assertThat(t.isAlive()).isFalse();
        r.close();
        UdpStateReceiver never = receiver(Map.of("port", 0, "size", 1));
        never.close();
        assertThatThrownBy(never::start).isInstanceOf(IllegalStateException.class);
    }

    @Test
    void aTakenPortFailsToStartWithTheOptionNamed() throws Exception {
        try (DatagramChannel taken = Loopback.bound("127.0.0.1")) {
            int port = ((java.net.InetSocketAddress) taken.getLocalAddress()).getPort();
            Map<String, Object> o = new LinkedHashMap<>();
            o.put("port", port);
            o.put("size", 1);
            UdpStateReceiver r = receiver(o);
            assertThatThrownBy(r::start).isInstanceOf(IOException.class)
                    .hasMessageStartingWith("cannot receive on source.options.bind = 127.0.0.1, port " + port + ": ");
            assertThat(r.thread()).isNull();
            r.close();
        }
    }
}
