package dev.weft.runtime.udp;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.weft.runtime.port.CommandFrame;
import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.Random;
import java.util.zip.CRC32C;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

class DatagramCodecTest {

    private final DatagramCodec codec = new DatagramCodec();

    private static int jdkCrc32c(byte[] data) {
        CRC32C c = new CRC32C();
        c.update(data);
        return (int) c.getValue();
    }

    @Test
    void crc32cMatchesTheStandardCheckValue() {
        // Check value of CRC-32/ISCSI (CRC-32C) over the ASCII digits "123456789": 0xE3069283, as listed
        // in G. Cook's "Catalogue of parametrised CRC algorithms" (reveng.sourceforge.net, CRC-32/ISCSI).
        byte[] digits = "123456789".getBytes(StandardCharsets.US_ASCII);
        assertThat(jdkCrc32c(digits)).isEqualTo(0xE3069283);
        assertThat(ReferenceDatagrams.crc32c(digits, 0, digits.length)).isEqualTo(0xE3069283);
    }

    @Test
    void crc32cMatchesTheIscsiExamples() {
        // RFC 3720, appendix B.4 "CRC Examples": 32 bytes of zeros, of 0xFF, ascending 0..31, descending 31..0.
        // The RFC prints each CRC as the bytes sent, least significant first (e.g. "aa 36 91 8a" = 0x8A9136AA).
        byte[] zeros = new byte[32];
        byte[] ones = new byte[32];
        byte[] up = new byte[32];
        byte[] down = new byte[32];
        for (int i = 0; i < 32; i++) {
            ones[i] = (byte) 0xFF;
            up[i] = (byte) i;
            down[i] = (byte) (31 - i);
        }
        assertThat(jdkCrc32c(zeros)).isEqualTo(0x8A9136AA);
        assertThat(jdkCrc32c(ones)).isEqualTo(0x62A8AB43);
        assertThat(jdkCrc32c(up)).isEqualTo(0x46DD794E);
        assertThat(jdkCrc32c(down)).isEqualTo(0x113FDB5C);
        assertThat(ReferenceDatagrams.crc32c(up, 0, 32)).isEqualTo(0x46DD794E);
    }

    @Test
    void lengthsFollowTheTables() {
        assertThat(DatagramCodec.stateLength(1)).isEqualTo(36);
        assertThat(DatagramCodec.stateLength(7)).isEqualTo(84);
        assertThat(DatagramCodec.commandLength(7)).isEqualTo(156);
        assertThat(DatagramCodec.stateLength(DatagramCodec.MAX_STATE_VALUES)).isLessThanOrEqualTo(65_507);
        assertThat(DatagramCodec.commandLength(DatagramCodec.MAX_COMMAND_JOINTS)).isLessThanOrEqualTo(65_507);
        assertThatThrownBy(() -> DatagramCodec.stateLength(0))
                .hasMessage("a state datagram carries 1 to 8184 values, got 0");
        assertThatThrownBy(() -> DatagramCodec.commandLength(4092))
                .hasMessage("a command datagram carries 1 to 4091 joints, got 4092");
    }

    @Test
    void stateDatagramHasTheDocumentedBytes() {
        ByteBuffer buf = ByteBuffer.allocate(64);
        int n = codec.encodeState(buf, 0x0102030405060708L, -2L, new double[] {1.0}, 1);
        assertThat(n).isEqualTo(36);
        byte[] bytes = new byte[n];
        buf.get(0, bytes);
        // magic "wfts", version 1, length 36, sequence LE, time -2 LE, 1.0 = 0x3FF0000000000000 LE.
        assertThat(hex(bytes, 0, 32)).isEqualTo(
                "77667473" + "0100" + "2400" + "0807060504030201" + "feffffffffffffff" + "000000000000f03f");
        assertThat(bytes).isEqualTo(ReferenceDatagrams.state(0x0102030405060708L, -2L, 1.0));
    }

    @Test
    void stateRoundTripsAndMatchesTheReferenceWriter() {
        Random rnd = new Random(11);
        ByteBuffer direct = ByteBuffer.allocateDirect(1 << 16);
        for (int round = 0; round < 200; round++) {
            int count = 1 + rnd.nextInt(40);
            double[] values = new double[count];
            for (int i = 0; i < count; i++) {
                values[i] = rnd.nextGaussian() * Math.pow(10, rnd.nextInt(20) - 10);
            }
            long seq = rnd.nextLong();
            long time = rnd.nextLong();
            int n = codec.encodeState(direct, seq, time, values, count);
            byte[] bytes = new byte[n];
            direct.get(0, bytes);
            assertThat(bytes).isEqualTo(ReferenceDatagrams.state(seq, time, values));

            double[] out = new double[count];
            assertThat(codec.decodeState(direct, count, out)).isEqualTo(DatagramStatus.ACCEPTED);
            assertThat(out).containsExactly(values);
            assertThat(codec.sequence()).isEqualTo(seq);
            assertThat(codec.time()).isEqualTo(time);
        }
    }

    @Test
    void commandRoundTripsAndMatchesTheReferenceWriter() {
        Random rnd = new Random(12);
        ByteBuffer heap = ByteBuffer.allocate(1 << 12);
        for (int round = 0; round < 200; round++) {
            int joints = 1 + rnd.nextInt(12);
            CommandFrame f = new CommandFrame(joints);
            f.tick = rnd.nextInt(1_000_000);
            f.timeNanos = rnd.nextLong();
            f.state = (byte) rnd.nextInt(5);
            f.stopCategory = (byte) rnd.nextInt(3);
            f.removePower = rnd.nextBoolean();
            f.limiterFlags = rnd.nextInt();
            for (int i = 0; i < joints; i++) {
                f.positions[i] = rnd.nextGaussian();
                f.velocities[i] = rnd.nextGaussian() * 3;
            }
            long seq = round + 1L;
            int n = codec.encodeCommand(heap, seq, f);
            assertThat(n).isEqualTo(DatagramCodec.commandLength(joints));
            byte[] bytes = new byte[n];
            heap.get(0, bytes);
            assertThat(bytes).isEqualTo(ReferenceDatagrams.command(seq, f.timeNanos, f.tick, f.state, f.stopCategory,
                    f.removePower ? 1 : 0, 0, f.limiterFlags, f.positions, f.velocities));

            CommandFrame back = new CommandFrame(joints);
            assertThat(codec.decodeCommand(heap, back)).isEqualTo(DatagramStatus.ACCEPTED);
            assertThat(codec.sequence()).isEqualTo(seq);
            assertThat(back.tick).isEqualTo(f.tick);
            assertThat(back.timeNanos).isEqualTo(f.timeNanos);
            assertThat(back.state).isEqualTo(f.state);
            assertThat(back.stopCategory).isEqualTo(f.stopCategory);
            assertThat(back.removePower).isEqualTo(f.removePower);
            assertThat(back.limiterFlags).isEqualTo(f.limiterFlags);
            assertThat(back.positions).containsExactly(f.positions);
            assertThat(back.velocities).containsExactly(f.velocities);
        }
    }

    @Test
    void decodingReadsFromThePositionAndLeavesTheBufferAsItWas() {
        byte[] d = ReferenceDatagrams.state(9, 99, 1.5, -2.5);
        ByteBuffer buf = ByteBuffer.allocate(100);
        buf.position(10);
        buf.put(d);
        buf.limit(10 + d.length).position(10);
        double[] out = new double[2];
        assertThat(codec.decodeState(buf, 2, out)).isEqualTo(DatagramStatus.ACCEPTED);
        assertThat(out).containsExactly(1.5, -2.5);
        assertThat(buf.position()).isEqualTo(10);
        assertThat(buf.limit()).isEqualTo(10 + d.length);
    }

    @Test
    void encodingRefusesNonFiniteValues() {
        ByteBuffer buf = ByteBuffer.allocate(256);
        assertThat(codec.encodeState(buf, 1, 0, new double[] {1, Double.NaN}, 2)).isZero();
        assertThat(buf.remaining()).isZero();
        CommandFrame f = new CommandFrame(2);
        f.velocities[1] = Double.NEGATIVE_INFINITY;
        assertThat(codec.encodeCommand(buf, 1, f)).isZero();
        assertThat(buf.remaining()).isZero();
        assertThatThrownBy(() -> codec.encodeCommand(ByteBuffer.allocate(50), 1, new CommandFrame(2)))
                .hasMessage("the buffer holds 50 bytes, the datagram needs 76");
    }

    private DatagramStatus state(byte[] datagram, int expected) {
        double[] out = new double[Math.max(expected, 1)];
        Arrays.fill(out, 42);
        DatagramStatus s = codec.decodeState(ByteBuffer.wrap(datagram), expected, out);
        if (s != DatagramStatus.ACCEPTED) {
            assertThat(out).as("values are written only when accepted").containsOnly(42.0);
        }
        return s;
    }

    @Test
    void everyStateRejectReason() {
        byte[] good = ReferenceDatagrams.state(5, 6, 1, 2, 3);
        assertThat(state(good, 3)).isEqualTo(DatagramStatus.ACCEPTED);

        assertThat(state(new byte[0], 3)).isEqualTo(DatagramStatus.TOO_SHORT);
        assertThat(state(Arrays.copyOf(good, 27), 3)).isEqualTo(DatagramStatus.TOO_SHORT);

        byte[] magic = good.clone();
        magic[3] = 'c';
        assertThat(state(ReferenceDatagrams.seal(magic), 3)).isEqualTo(DatagramStatus.BAD_MAGIC);
        assertThat(state(ReferenceDatagrams.command(1, 0, 0, 0, 0, 0, 0, 0, new double[1], new double[1]), 1))
                .as("a command datagram is not a state datagram").isEqualTo(DatagramStatus.BAD_MAGIC);

        byte[] version = good.clone();
        version[4] = 3;
        assertThat(state(ReferenceDatagrams.seal(version), 3)).isEqualTo(DatagramStatus.BAD_VERSION);
        version[4] = 2;
        assertThat(state(ReferenceDatagrams.seal(version), 3)).as("version 2 is the keyed layout; this codec has no key")
                .isEqualTo(DatagramStatus.TAG_NOT_EXPECTED);

        byte[] longer = good.clone();
        ReferenceDatagrams.put(longer, 6, longer.length + 8, 2);
        assertThat(state(ReferenceDatagrams.seal(longer), 3)).as("length field above the bytes received")
                .isEqualTo(DatagramStatus.BAD_LENGTH);
        byte[] padded = ReferenceDatagrams.seal(Arrays.copyOf(good, good.length + 3));
        ReferenceDatagrams.put(padded, 6, padded.length, 2);
        assertThat(state(ReferenceDatagrams.seal(padded), 3)).as("not a whole number of values")
                .isEqualTo(DatagramStatus.BAD_LENGTH);

        byte[] crc = good.clone();
        crc[30] ^= 0x01;
        assertThat(state(crc, 3)).isEqualTo(DatagramStatus.BAD_CRC);
        byte[] crcField = good.clone();
        crcField[crcField.length - 1] ^= (byte) 0x80;
        assertThat(state(crcField, 3)).isEqualTo(DatagramStatus.BAD_CRC);

        assertThat(state(good, 4)).isEqualTo(DatagramStatus.WRONG_COUNT);
        assertThat(state(ReferenceDatagrams.state(5, 6), 1)).as("no values at all").isEqualTo(DatagramStatus.WRONG_COUNT);

        assertThat(state(ReferenceDatagrams.state(5, 6, 1, Double.NaN, 3), 3)).isEqualTo(DatagramStatus.NON_FINITE);
        assertThat(state(ReferenceDatagrams.state(5, 6, Double.POSITIVE_INFINITY, 2, 3), 3)).isEqualTo(DatagramStatus.NON_FINITE);
        assertThat(state(ReferenceDatagrams.state(5, 6, 1, 2, Double.NEGATIVE_INFINITY), 3)).isEqualTo(DatagramStatus.NON_FINITE);
    }

    private DatagramStatus command(int state, int stop, int power, int reserved, double p, double v) {
        byte[] d = ReferenceDatagrams.command(3, 4, 5, state, stop, power, reserved, 0, new double[] {0.5, p}, new double[] {0.1, v});
        CommandFrame out = new CommandFrame(2);
        out.tick = -7;
        DatagramStatus s = codec.decodeCommand(ByteBuffer.wrap(d), out);
        if (s != DatagramStatus.ACCEPTED) {
            assertThat(out.tick).as("the frame is written only when accepted").isEqualTo(-7);
        }
        return s;
    }

    @ParameterizedTest
    @ValueSource(ints = {0, 1, 2, 3, 4})
    void everyKnownStateIsAccepted(int state) {
        assertThat(command(state, 0, 0, 0, 1, 1)).isEqualTo(DatagramStatus.ACCEPTED);
    }

    @Test
    void everyCommandRejectReason() {
        assertThat(command(2, 1, 1, 0, 1, 1)).isEqualTo(DatagramStatus.ACCEPTED);
        assertThat(command(5, 0, 0, 0, 1, 1)).as("unknown state").isEqualTo(DatagramStatus.BAD_FIELD);
        assertThat(command(-1, 0, 0, 0, 1, 1)).as("negative state").isEqualTo(DatagramStatus.BAD_FIELD);
        assertThat(command(2, 3, 0, 0, 1, 1)).as("unknown stop category").isEqualTo(DatagramStatus.BAD_FIELD);
        assertThat(command(2, 0, 2, 0, 1, 1)).as("power flag not 0 or 1").isEqualTo(DatagramStatus.BAD_FIELD);
        assertThat(command(2, 0, 0, 1, 1, 1)).as("reserved byte set").isEqualTo(DatagramStatus.BAD_FIELD);
        assertThat(command(2, 0, 0, 0, Double.NaN, 1)).isEqualTo(DatagramStatus.NON_FINITE);
        assertThat(command(2, 0, 0, 0, 1, Double.POSITIVE_INFINITY)).isEqualTo(DatagramStatus.NON_FINITE);

        byte[] three = ReferenceDatagrams.command(1, 0, 0, 0, 0, 0, 0, 0, new double[3], new double[3]);
        assertThat(codec.decodeCommand(ByteBuffer.wrap(three), new CommandFrame(2))).isEqualTo(DatagramStatus.WRONG_COUNT);
        assertThat(codec.decodeCommand(ByteBuffer.wrap(Arrays.copyOf(three, 43)), new CommandFrame(3)))
                .as("43 bytes, below the 44 of the smallest command datagram").isEqualTo(DatagramStatus.TOO_SHORT);
        assertThat(codec.decodeCommand(ByteBuffer.wrap(Arrays.copyOf(three, 7)), new CommandFrame(3)))
                .as("not even magic, version and length").isEqualTo(DatagramStatus.TOO_SHORT);
        byte[] state = ReferenceDatagrams.state(1, 1, 1, 2, 3, 4, 5);
        assertThat(codec.decodeCommand(ByteBuffer.wrap(state), new CommandFrame(2))).isEqualTo(DatagramStatus.BAD_MAGIC);
        byte[] crc = three.clone();
        crc[36] ^= 0x10;
        assertThat(codec.decodeCommand(ByteBuffer.wrap(crc), new CommandFrame(3))).isEqualTo(DatagramStatus.BAD_CRC);
    }

    private static String hex(byte[] b, int from, int to) {
        StringBuilder s = new StringBuilder();
        for (int i = from; i < to; i++) {
            s.append(String.format("%02x", b[i] & 0xFF));
        }
        return s.toString();
    }
}
