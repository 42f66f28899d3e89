package dev.weft.runtime.udp;

import dev.weft.runtime.port.CommandFrame;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.zip.CRC32C;

/**
 * Encodes and decodes weft's two datagram types (layouts in {@code docs/ports.md}); every field is
 * little-endian, values are IEEE 754 binary64, and the last four bytes are the CRC-32C
 * (Castagnoli, as {@link CRC32C} computes it) of every byte before them.
 *
 * <p><b>State datagram</b> (robot to weft), {@code 28 + 8n} bytes for {@code n} values:
 * <pre>
 *  offset  size  field
 *       0     4  magic: the bytes 'w' 'f' 't' 's' (0x77 0x66 0x74 0x73)
 *       4     2  version, unsigned, 1
 *       6     2  length of the whole datagram in bytes, unsigned
 *       8     8  sequence number, unsigned, grows by one per datagram
 *      16     8  sender's timestamp, nanoseconds on the sender's own clock, signed
 *      24    8n  values, float64
 *  24+8n     4  CRC-32C of bytes [0, 24+8n)
 * </pre>
 *
 * <p><b>Command datagram</b> (weft to robot), {@code 44 + 16n} bytes for {@code n} joints:
 * <pre>
 *  offset  size  field
 *       0     4  magic: the bytes 'w' 'f' 't' 'c' (0x77 0x66 0x74 0x63)
 *       4     2  version, unsigned, 1
 *       6     2  length of the whole datagram in bytes, unsigned
 *       8     8  sequence number, unsigned, grows by one per frame
 *      16     8  the tick's deadline, nanoseconds on weft's loop clock, signed
 *      24     8  tick number, signed
 *      32     1  state (0 disarmed, 1 arming, 2 armed, 3 stopping, 4 faulted)
 *      33     1  stop category (0 none, 1 category 1, 2 category 2)
 *      34     1  remove power (0 or 1)
 *      35     1  reserved, 0
 *      36     4  limiter flags, bit set
 *      40    8n  positions, float64
 *   40+8n    8n  velocities, float64
 *  40+16n     4  CRC-32C of bytes [0, 40+16n)
 * </pre>
 *
 * <p>Decoding checks, in this order, and reports the first failure as a {@link DatagramStatus}:
 * at least the smallest datagram's bytes ({@code TOO_SHORT}), magic, version, length field equal
 * to the bytes received and of the form above ({@code BAD_LENGTH}), CRC, value count as expected
 * ({@code WRONG_COUNT}), the command's code fields ({@code BAD_FIELD}), every value finite
 * ({@code NON_FINITE}).
 *
 * <p>Threading: one codec per thread (it keeps a {@link CRC32C} and the fields of the last decoded
 * datagram). Allocation: none, on any path, for direct buffers and writable heap buffers (the
 * JDK's {@code CRC32C.update(ByteBuffer)} copies through a temporary array only for read-only
 * heap buffers).
 */
public final class DatagramCodec {

    /** Format version this build writes and reads. */
    public static final int VERSION = 1;

    /** The state magic as a little-endian int: bytes 'w' 'f' 't' 's'. */
    public static final int STATE_MAGIC = 0x73746677;
    /** The command magic as a little-endian int: bytes 'w' 'f' 't' 'c'. */
    public static final int COMMAND_MAGIC = 0x63746677;

    /** Bytes of a state datagram besides its values (24 of header, 4 of CRC). */
    public static final int STATE_OVERHEAD = 28;
    /** Bytes of a command datagram besides its positions and velocities (40 of header, 4 of CRC). */
    public static final int COMMAND_OVERHEAD = 44;

    /** The largest UDP payload over IPv4 (65,535 minus the 20-byte IP and 8-byte UDP headers). */
    public static final int MAX_DATAGRAM = 65_507;
    /** Most values a state datagram can carry. */
    public static final int MAX_STATE_VALUES = (MAX_DATAGRAM - STATE_OVERHEAD) / 8;
    /** Most joints a command datagram can carry. */
    public static final int MAX_COMMAND_JOINTS = (MAX_DATAGRAM - COMMAND_OVERHEAD) / 16;

    static final int AT_MAGIC = 0;
    static final int AT_VERSION = 4;
    static final int AT_LENGTH = 6;
    static final int AT_SEQUENCE = 8;
    static final int AT_TIME = 16;
    static final int AT_STATE_VALUES = 24;
    static final int AT_TICK = 24;
    static final int AT_STATE = 32;
    static final int AT_STOP = 33;
    static final int AT_POWER = 34;
    static final int AT_RESERVED = 35;
    static final int AT_FLAGS = 36;
    static final int AT_POSITIONS = 40;

    private final CRC32C crc = new CRC32C();
    private long sequence;
    private long time;

    /** Bytes of a state datagram with {@code values} values. */
    public static int stateLength(int values) {
        if (values < 1 || values > MAX_STATE_VALUES) {
            throw new IllegalArgumentException("a state datagram carries 1 to " + MAX_STATE_VALUES + " values, got " + values);
        }
        return STATE_OVERHEAD + 8 * values;
    }

    /** Bytes of a command datagram for {@code joints} joints. */
    public static int commandLength(int joints) {
        if (joints < 1 || joints > MAX_COMMAND_JOINTS) {
            throw new IllegalArgumentException("a command datagram carries 1 to " + MAX_COMMAND_JOINTS + " joints, got " + joints);
        }
        return COMMAND_OVERHEAD + 16 * joints;
    }

    /**
     * Writes one state datagram.
     *
     * @param dst modified: cleared, set to little-endian, filled from index 0, then left with
     *     position 0 and limit at the datagram's end, ready to send
     * @param sequence the datagram's sequence number
     * @param senderNanos the sender's timestamp
     * @param values read, not modified: the first {@code count} are written
     * @param count how many values, 1 to {@link #MAX_STATE_VALUES}
     * @return the datagram's length in bytes, or 0 when a value is not finite (nothing to send;
     *     {@code dst} then holds no datagram)
     * @throws IllegalArgumentException when {@code dst} is too small or {@code count} is out of range
     */
    public int encodeState(ByteBuffer dst, long sequence, long senderNanos, double[] values, int count) {
        int length = stateLength(count);
        prepare(dst, length);
        for (int i = 0; i < count; i++) {
            double v = values[i];
            if (!Double.isFinite(v)) {
                dst.limit(0);
                return 0;
            }
            dst.putDouble(AT_STATE_VALUES + 8 * i, v);
        }
        dst.putInt(AT_MAGIC, STATE_MAGIC);
        dst.putShort(AT_VERSION, (short) VERSION);
        dst.putShort(AT_LENGTH, (short) length);
        dst.putLong(AT_SEQUENCE, sequence);
        dst.putLong(AT_TIME, senderNanos);
        seal(dst, length);
        return length;
    }

    /**
     * Writes one command datagram from {@code frame}.
     *
     * @param dst modified: cleared, set to little-endian, filled from index 0, then left with
     *     position 0 and limit at the datagram's end, ready to send
     * @param sequence the datagram's sequence number
     * @param frame read, not modified, not kept
     * @return the datagram's length in bytes, or 0 when a position or velocity is not finite
     *     (nothing to send; {@code dst} then holds no datagram)
     * @throws IllegalArgumentException when {@code dst} is too small for the frame's joints
     */
    public int encodeCommand(ByteBuffer dst, long sequence, CommandFrame frame) {
        int n = frame.joints();
        int length = commandLength(n);
        prepare(dst, length);
        double[] p = frame.positions;
        double[] v = frame.velocities;
        int atVelocities = AT_POSITIONS + 8 * n;
        for (int i = 0; i < n; i++) {
            if (!Double.isFinite(p[i]) || !Double.isFinite(v[i])) {
                dst.limit(0);
                return 0;
            }
            dst.putDouble(AT_POSITIONS + 8 * i, p[i]);
            dst.putDouble(atVelocities + 8 * i, v[i]);
        }
        dst.putInt(AT_MAGIC, COMMAND_MAGIC);
        dst.putShort(AT_VERSION, (short) VERSION);
        dst.putShort(AT_LENGTH, (short) length);
        dst.putLong(AT_SEQUENCE, sequence);
        dst.putLong(AT_TIME, frame.timeNanos);
        dst.putLong(AT_TICK, frame.tick);
        dst.put(AT_STATE, frame.state);
        dst.put(AT_STOP, frame.stopCategory);
        dst.put(AT_POWER, (byte) (frame.removePower ? 1 : 0));
        dst.put(AT_RESERVED, (byte) 0);
        dst.putInt(AT_FLAGS, frame.limiterFlags);
        seal(dst, length);
        return length;
    }

    /**
     * Reads one state datagram: the bytes from {@code src}'s position to its limit.
     *
     * @param src read; its byte order is set to little-endian, its position and limit are restored
     * @param expected how many values the datagram must carry
     * @param out modified only when the result is {@link DatagramStatus#ACCEPTED}: the values
     * @return {@code ACCEPTED} (then {@link #sequence()} and {@link #time()} hold the datagram's
     *     sequence number and sender's timestamp), or the first reason to reject it
     */
    public DatagramStatus decodeState(ByteBuffer src, int expected, double[] out) {
        int base = src.position();
        int received = src.limit() - base;
        src.order(ByteOrder.LITTLE_ENDIAN);
        DatagramStatus shape = checkShape(src, base, received, STATE_MAGIC, STATE_OVERHEAD, 8);
        if (shape != DatagramStatus.ACCEPTED) {
            return shape;
        }
        int count = (received - STATE_OVERHEAD) / 8;
        if (count != expected) {
            return DatagramStatus.WRONG_COUNT;
        }
        int at = base + AT_STATE_VALUES;
        for (int i = 0; i < count; i++) {
            if (!Double.isFinite(src.getDouble(at + 8 * i))) {
                return DatagramStatus.NON_FINITE;
            }
        }
        for (int i = 0; i < count; i++) {
            out[i] = src.getDouble(at + 8 * i);
        }
        sequence = src.getLong(base + AT_SEQUENCE);
        time = src.getLong(base + AT_TIME);
        return DatagramStatus.ACCEPTED;
    }

    /**
     * Reads one command datagram (the robot's side of the link, and weft's own tests): the bytes
     * from {@code src}'s position to its limit.
     *
     * @param src read; its byte order is set to little-endian, its position and limit are restored
     * @param out modified only when the result is {@link DatagramStatus#ACCEPTED}: every field;
     *     the datagram must carry exactly {@code out.joints()} joints
     * @return {@code ACCEPTED} (then {@link #sequence()} holds the sequence number and
     *     {@link #time()} the tick's deadline), or the first reason to reject it
     */
    public DatagramStatus decodeCommand(ByteBuffer src, CommandFrame out) {
        int base = src.position();
        int received = src.limit() - base;
        src.order(ByteOrder.LITTLE_ENDIAN);
        DatagramStatus shape = checkShape(src, base, received, COMMAND_MAGIC, COMMAND_OVERHEAD, 16);
        if (shape != DatagramStatus.ACCEPTED) {
            return shape;
        }
        int n = (received - COMMAND_OVERHEAD) / 16;
        if (n != out.joints()) {
            return DatagramStatus.WRONG_COUNT;
        }
        byte state = src.get(base + AT_STATE);
        byte stop = src.get(base + AT_STOP);
        byte power = src.get(base + AT_POWER);
        if (state < CommandFrame.STATE_DISARMED || state > CommandFrame.STATE_FAULTED
                || stop < CommandFrame.STOP_NONE || stop > CommandFrame.STOP_CATEGORY_2
                || (power != 0 && power != 1) || src.get(base + AT_RESERVED) != 0) {
            return DatagramStatus.BAD_FIELD;
        }
        int at = base + AT_POSITIONS;
        for (int i = 0; i < 2 * n; i++) {
            if (!Double.isFinite(src.getDouble(at + 8 * i))) {
                return DatagramStatus.NON_FINITE;
            }
        }
        for (int i = 0; i < n; i++) {
            out.positions[i] = src.getDouble(at + 8 * i);
            out.velocities[i] = src.getDouble(at + 8 * (n + i));
        }
        out.timeNanos = src.getLong(base + AT_TIME);
        out.tick = src.getLong(base + AT_TICK);
        out.state = state;
        out.stopCategory = stop;
        out.removePower = power == 1;
        out.limiterFlags = src.getInt(base + AT_FLAGS);
        sequence = src.getLong(base + AT_SEQUENCE);
        time = out.timeNanos;
        return DatagramStatus.ACCEPTED;
    }

    /** The sequence number of the last datagram decoded as {@code ACCEPTED}. */
    public long sequence() {
        return sequence;
    }

    /** The timestamp field of the last datagram decoded as {@code ACCEPTED}. */
    public long time() {
        return time;
    }

    private DatagramStatus checkShape(ByteBuffer src, int base, int received, int magic, int overhead, int stride) {
        if (received < overhead) {
            return DatagramStatus.TOO_SHORT;
        }
        if (src.getInt(base + AT_MAGIC) != magic) {
            return DatagramStatus.BAD_MAGIC;
        }
        if (Short.toUnsignedInt(src.getShort(base + AT_VERSION)) != VERSION) {
            return DatagramStatus.BAD_VERSION;
        }
        int length = Short.toUnsignedInt(src.getShort(base + AT_LENGTH));
        if (length != received || (length - overhead) % stride != 0) {
            return DatagramStatus.BAD_LENGTH;
        }
        int limit = src.limit();
        src.limit(base + length - 4);
        crc.reset();
        crc.update(src);
        src.limit(limit).position(base);
        if ((int) crc.getValue() != src.getInt(base + length - 4)) {
            return DatagramStatus.BAD_CRC;
        }
        return DatagramStatus.ACCEPTED;
    }

    private static void prepare(ByteBuffer dst, int length) {
        if (dst.capacity() < length) {
            throw new IllegalArgumentException("the buffer holds " + dst.capacity() + " bytes, the datagram needs " + length);
        }
        dst.clear();
        dst.order(ByteOrder.LITTLE_ENDIAN);
    }

    private void seal(ByteBuffer dst, int length) {
        dst.position(0).limit(length - 4);
        crc.reset();
        crc.update(dst);
        dst.limit(length);
        dst.putInt(length - 4, (int) crc.getValue());
        dst.position(0);
    }
}
