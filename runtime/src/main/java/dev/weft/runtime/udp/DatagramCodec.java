package dev.weft.runtime.udp;

import dev.weft.runtime.port.CommandFrame;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.zip.CRC32C;

/**
 * Encodes and decodes weft's two datagram types in their two versions (layouts in
 * {@code docs/ports.md}); every field is little-endian and values are IEEE 754 binary64.
 * Version 1 (unkeyed) ends in the CRC-32C (Castagnoli, as {@link CRC32C} computes it) of every
 * byte before it; version 2 (keyed) carries the sender's session id after the length and ends in
 * the 32-byte HMAC-SHA-256 tag ({@link DatagramTag}) of every byte before it. A codec made with
 * {@link #DatagramCodec()} writes and reads version 1 only; one made with {@link #keyed} writes and
 * reads version 2 only.
 *
 * <p><b>State datagram</b> (robot to weft), {@code 28 + 8n} bytes (version 1) or {@code 64 + 8n}
 * bytes (version 2) for {@code n} values:
 * <pre>
 *  v1 offset  v2 offset  size  field
 *          0          0     4  magic: the bytes 'w' 'f' 't' 's' (0x77 0x66 0x74 0x73)
 *          4          4     2  version, unsigned, 1 or 2
 *          6          6     2  length of the whole datagram in bytes, unsigned
 *          -          8     8  session id, chosen at random when the sender starts
 *          8         16     8  sequence number, unsigned, grows by one per datagram
 *         16         24     8  sender's timestamp, nanoseconds on the sender's own clock, signed
 *         24         32    8n  values, float64
 *      24+8n          -     4  CRC-32C of bytes [0, 24+8n)
 *          -      32+8n    32  HMAC-SHA-256 tag of bytes [0, 32+8n)
 * </pre>
 *
 * <p><b>Command datagram</b> (weft to robot), {@code 44 + 16n} bytes (version 1) or
 * {@code 80 + 16n} bytes (version 2) for {@code n} joints:
 * <pre>
 *  v1 offset  v2 offset  size  field
 *          0          0     4  magic: the bytes 'w' 'f' 't' 'c' (0x77 0x66 0x74 0x63)
 *          4          4     2  version, unsigned, 1 or 2
 *          6          6     2  length of the whole datagram in bytes, unsigned
 *          -          8     8  session id, chosen at random when the port opens
 *          8         16     8  sequence number, unsigned, grows by one per frame
 *         16         24     8  the tick's deadline, nanoseconds on weft's loop clock, signed
 *         24         32     8  tick number, signed
 *         32         40     1  state (0 disarmed, 1 arming, 2 armed, 3 stopping, 4 faulted)
 *         33         41     1  stop category (0 none, 1 category 1, 2 category 2)
 *         34         42     1  remove power (0 or 1)
 *         35         43     1  reserved, 0
 *         36         44     4  limiter flags, bit set
 *         40         48    8n  positions, float64
 *      40+8n      48+8n    8n  velocities, float64
 *     40+16n          -     4  CRC-32C of bytes [0, 40+16n)
 *          -     48+16n    32  HMAC-SHA-256 tag of bytes [0, 48+16n)
 * </pre>
 *
 * <p>Decoding checks, in this order, and reports the first failure as a {@link DatagramStatus}:
 * at least 8 bytes ({@code TOO_SHORT}), magic, version (a keyed codec calls version 1
 * {@code UNAUTHENTICATED}, an unkeyed one calls version 2 {@code TAG_NOT_EXPECTED}), at least the
 * smallest datagram's bytes ({@code TOO_SHORT}), length field equal to the bytes received and of
 * the form above ({@code BAD_LENGTH}), CRC or tag, value count as expected ({@code WRONG_COUNT}),
 * the command's code fields ({@code BAD_FIELD}), every value finite ({@code NON_FINITE}). The
 * caller's output is written only when the datagram is accepted.
 *
 * <p>Threading: one codec per thread (it keeps a {@link CRC32C} or a {@link DatagramTag} and the
 * fields of the last decoded datagram). Allocation: none for version 1, on any path, for direct
 * buffers and writable heap buffers (the JDK's {@code CRC32C.update(ByteBuffer)} copies through a
 * temporary array only for read-only heap buffers); for version 2, the 48 bytes per tag that
 * {@link DatagramTag} documents.
 */
public final class DatagramCodec {

    /** The unkeyed format version: CRC-32C, no session id. */
    public static final int VERSION = 1;
    /** The keyed format version: session id and HMAC-SHA-256 tag. */
    public static final int KEYED_VERSION = 2;

    /** The state magic as a little-endian int: bytes 'w' 'f' 't' 's'. */
    public static final int STATE_MAGIC = 0x73746677;
    /** The command magic as a little-endian int: bytes 'w' 'f' 't' 'c'. */
    public static final int COMMAND_MAGIC = 0x63746677;

    /** Bytes of a version 1 state datagram besides its values (24 of header, 4 of CRC). */
    public static final int STATE_OVERHEAD = 28;
    /** Bytes of a version 1 command datagram besides its positions and velocities (40 of header, 4 of CRC). */
    public static final int COMMAND_OVERHEAD = 44;
    /** Bytes of a version 2 state datagram besides its values (32 of header, 32 of tag). */
    public static final int KEYED_STATE_OVERHEAD = 64;
    /** Bytes of a version 2 command datagram besides its positions and velocities (48 of header, 32 of tag). */
    public static final int KEYED_COMMAND_OVERHEAD = 80;

    /** The largest UDP payload over IPv4 (65,535 minus the 20-byte IP and 8-byte UDP headers). */
    public static final int MAX_DATAGRAM = 65_507;
    /** Most values a version 1 state datagram can carry. */
    public static final int MAX_STATE_VALUES = (MAX_DATAGRAM - STATE_OVERHEAD) / 8;
    /** Most joints a version 1 command datagram can carry. */
    public static final int MAX_COMMAND_JOINTS = (MAX_DATAGRAM - COMMAND_OVERHEAD) / 16;
    /** Most values a version 2 state datagram can carry. */
    public static final int MAX_KEYED_STATE_VALUES = (MAX_DATAGRAM - KEYED_STATE_OVERHEAD) / 8;
    /** Most joints a version 2 command datagram can carry. */
    public static final int MAX_KEYED_COMMAND_JOINTS = (MAX_DATAGRAM - KEYED_COMMAND_OVERHEAD) / 16;

    /** Bytes every datagram has before anything version-dependent: magic, version, length. */
    private static final int PREFIX = 8;

    static final int AT_MAGIC = 0;
    static final int AT_VERSION = 4;
    static final int AT_LENGTH = 6;
    /** Version 2 only. */
    static final int AT_SESSION = 8;
    // Version 1 offsets; version 2 puts each 8 bytes further on (the session id comes first).
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

    private final boolean keyed;
    private final int shift;
    private final int trailer;
    private final long ownSession;
    private final CRC32C crc;
    private final DatagramTag tag;
    private long sequence;
    private long time;
    private long session;

    /** An unkeyed codec: version 1, CRC-32C. */
    public DatagramCodec() {
        this(false, null, 0);
    }

    private DatagramCodec(boolean keyed, DatagramTag tag, long ownSession) {
        this.keyed = keyed;
        this.shift = keyed ? 8 : 0;
        this.trailer = keyed ? DatagramTag.LENGTH : 4;
        this.tag = tag;
        this.ownSession = ownSession;
        this.crc = keyed ? null : new CRC32C();
    }

    /**
     * A keyed codec: version 2, HMAC-SHA-256.
     *
     * @param tag the link's tag computer, used by this codec's thread only; null for a codec that
     *     only lays datagrams out, leaving the tag field zero for {@link DatagramTag#seal} on
     *     another thread (such a codec cannot decode)
     * @param session the session id written into every datagram this codec encodes
     */
    public static DatagramCodec keyed(DatagramTag tag, long session) {
        return new DatagramCodec(true, tag, session);
    }

    /** True for a version 2 codec. */
    public boolean isKeyed() {
        return keyed;
    }

    /** Bytes of a version 1 state datagram with {@code values} values. */
    public static int stateLength(int values) {
        return stateLength(values, false);
    }

    /** Bytes of a version 1 command datagram for {@code joints} joints. */
    public static int commandLength(int joints) {
        return commandLength(joints, false);
    }

    /** Bytes of a state datagram with {@code values} values, version 2 when {@code keyed}. */
    public static int stateLength(int values, boolean keyed) {
        int max = keyed ? MAX_KEYED_STATE_VALUES : MAX_STATE_VALUES;
        if (values < 1 || values > max) {
            throw new IllegalArgumentException("a" + (keyed ? " keyed" : "") + " state datagram carries 1 to " + max
                    + " values, got " + values);
        }
        return (keyed ? KEYED_STATE_OVERHEAD : STATE_OVERHEAD) + 8 * values;
    }

    /** Bytes of a command datagram for {@code joints} joints, version 2 when {@code keyed}. */
    public static int commandLength(int joints, boolean keyed) {
        int max = keyed ? MAX_KEYED_COMMAND_JOINTS : MAX_COMMAND_JOINTS;
        if (joints < 1 || joints > max) {
            throw new IllegalArgumentException("a" + (keyed ? " keyed" : "") + " command datagram carries 1 to " + max
                    + " joints, got " + joints);
        }
        return (keyed ? KEYED_COMMAND_OVERHEAD : COMMAND_OVERHEAD) + 16 * joints;
    }

    /**
     * Writes one state datagram of this codec's version.
     *
     * @param dst modified: cleared, set to little-endian, filled from index 0, then left with
     *     position 0 and limit at the datagram's end, ready to send
     * @param sequence the datagram's sequence number
     * @param senderNanos the sender's timestamp
     * @param values read, not modified: the first {@code count} are written
     * @param count how many values, 1 to the version's maximum
     * @return the datagram's length in bytes, or 0 when a value is not finite (nothing to send;
     *     {@code dst} then holds no datagram)
     * @throws IllegalArgumentException when {@code dst} is too small or {@code count} is out of range
     */
    public int encodeState(ByteBuffer dst, long sequence, long senderNanos, double[] values, int count) {
        int length = stateLength(count, keyed);
        prepare(dst, length);
        int at = AT_STATE_VALUES + shift;
        for (int i = 0; i < count; i++) {
            double v = values[i];
            if (!Double.isFinite(v)) {
                dst.limit(0);
                return 0;
            }
            dst.putDouble(at + 8 * i, v);
        }
        header(dst, STATE_MAGIC, length, sequence);
        dst.putLong(AT_TIME + shift, senderNanos);
        seal(dst, length);
        return length;
    }

    /**
     * Writes one command datagram of this codec's version from {@code frame}.
     *
     * @param dst modified: cleared, set to little-endian, filled from index 0, then left with
     *     position 0 and limit at the datagram's end, ready to send (for a keyed codec made
     *     without a tag: ready for {@link DatagramTag#seal})
     * @param sequence the datagram's sequence number
     * @param frame read, not modified, not kept
     * @return the datagram's length in bytes, or 0 when a position or velocity is not finite
     *     (nothing to send; {@code dst} then holds no datagram)
     * @throws IllegalArgumentException when {@code dst} is too small for the frame's joints
     */
    public int encodeCommand(ByteBuffer dst, long sequence, CommandFrame frame) {
        int n = frame.joints();
        int length = commandLength(n, keyed);
        prepare(dst, length);
        double[] p = frame.positions;
        double[] v = frame.velocities;
        int atPositions = AT_POSITIONS + shift;
        int atVelocities = atPositions + 8 * n;
        for (int i = 0; i < n; i++) {
            if (!Double.isFinite(p[i]) || !Double.isFinite(v[i])) {
                dst.limit(0);
                return 0;
            }
            dst.putDouble(atPositions + 8 * i, p[i]);
            dst.putDouble(atVelocities + 8 * i, v[i]);
        }
        header(dst, COMMAND_MAGIC, length, sequence);
        dst.putLong(AT_TIME + shift, frame.timeNanos);
        dst.putLong(AT_TICK + shift, frame.tick);
        dst.put(AT_STATE + shift, frame.state);
        dst.put(AT_STOP + shift, frame.stopCategory);
        dst.put(AT_POWER + shift, (byte) (frame.removePower ? 1 : 0));
        dst.put(AT_RESERVED + shift, (byte) 0);
        dst.putInt(AT_FLAGS + shift, frame.limiterFlags);
        seal(dst, length);
        return length;
    }

    /**
     * Reads one state datagram: the bytes from {@code src}'s position to its limit.
     *
     * @param src read; its byte order is set to little-endian, its position and limit are restored
     * @param expected how many values the datagram must carry
     * @param out modified only when the result is {@link DatagramStatus#ACCEPTED}: the values
     * @return {@code ACCEPTED} (then {@link #sequence()}, {@link #time()} and, keyed,
     *     {@link #session()} hold the datagram's fields), or the first reason to reject it
     * @throws IllegalStateException on a keyed codec made without a tag
     */
    public DatagramStatus decodeState(ByteBuffer src, int expected, double[] out) {
        int base = src.position();
        int received = src.limit() - base;
        src.order(ByteOrder.LITTLE_ENDIAN);
        DatagramStatus shape = checkShape(src, base, received, STATE_MAGIC, STATE_OVERHEAD, 8);
        if (shape != DatagramStatus.ACCEPTED) {
            return shape;
        }
        int count = (received - STATE_OVERHEAD - shift - trailer + 4) / 8;
        if (count != expected) {
            return DatagramStatus.WRONG_COUNT;
        }
        int at = base + AT_STATE_VALUES + shift;
        for (int i = 0; i < count; i++) {
            if (!Double.isFinite(src.getDouble(at + 8 * i))) {
                return DatagramStatus.NON_FINITE;
            }
        }
        for (int i = 0; i < count; i++) {
            out[i] = src.getDouble(at + 8 * i);
        }
        readHeader(src, base);
        time = src.getLong(base + AT_TIME + shift);
        return DatagramStatus.ACCEPTED;
    }

    /**
     * Reads one command datagram (the robot's side of the link, and weft's own tests): the bytes
     * from {@code src}'s position to its limit.
     *
     * @param src read; its byte order is set to little-endian, its position and limit are restored
     * @param out modified only when the result is {@link DatagramStatus#ACCEPTED}: every field;
     *     the datagram must carry exactly {@code out.joints()} joints
     * @return {@code ACCEPTED} (then {@link #sequence()} holds the sequence number,
     *     {@link #time()} the tick's deadline and, keyed, {@link #session()} the session id), or
     *     the first reason to reject it
     * @throws IllegalStateException on a keyed codec made without a tag
     */
    public DatagramStatus decodeCommand(ByteBuffer src, CommandFrame out) {
        int base = src.position();
        int received = src.limit() - base;
        src.order(ByteOrder.LITTLE_ENDIAN);
        DatagramStatus shape = checkShape(src, base, received, COMMAND_MAGIC, COMMAND_OVERHEAD, 16);
        if (shape != DatagramStatus.ACCEPTED) {
            return shape;
        }
        int n = (received - COMMAND_OVERHEAD - shift - trailer + 4) / 16;
        if (n != out.joints()) {
            return DatagramStatus.WRONG_COUNT;
        }
        int fields = base + shift;
        byte state = src.get(fields + AT_STATE);
        byte stop = src.get(fields + AT_STOP);
        byte power = src.get(fields + AT_POWER);
        if (state < CommandFrame.STATE_DISARMED || state > CommandFrame.STATE_FAULTED
                || stop < CommandFrame.STOP_NONE || stop > CommandFrame.STOP_CATEGORY_2
                || (power != 0 && power != 1) || src.get(fields + AT_RESERVED) != 0) {
            return DatagramStatus.BAD_FIELD;
        }
        int at = fields + AT_POSITIONS;
        for (int i = 0; i < 2 * n; i++) {
            if (!Double.isFinite(src.getDouble(at + 8 * i))) {
                return DatagramStatus.NON_FINITE;
            }
        }
        for (int i = 0; i < n; i++) {
            out.positions[i] = src.getDouble(at + 8 * i);
            out.velocities[i] = src.getDouble(at + 8 * (n + i));
        }
        out.timeNanos = src.getLong(fields + AT_TIME);
        out.tick = src.getLong(fields + AT_TICK);
        out.state = state;
        out.stopCategory = stop;
        out.removePower = power == 1;
        out.limiterFlags = src.getInt(fields + AT_FLAGS);
        readHeader(src, base);
        time = out.timeNanos;
        return DatagramStatus.ACCEPTED;
    }

    /**
     * Decodes one datagram of either type, for fuzz targets and tools: the type comes from its
     * magic, and the value or joint count from its length, so only the shape, the CRC or tag and
     * the values are judged. Allocates (a codec, and the output arrays); never for the control loop.
     *
     * @param datagram read, not modified, not kept; any bytes at all
     * @param key the link's shared key, any length from 1 byte (then only version 2 can be
     *     accepted), or null for an unkeyed link (version 1)
     * @return the datagram's status; {@code ACCEPTED} only when it is well-formed, authentic with
     *     a key, and all its values are finite. No other exception is thrown for any datagram
     *     content, whatever its length.
     * @throws NullPointerException when {@code datagram} is null
     * @throws IllegalArgumentException when {@code key} is empty
     */
    public static DatagramStatus decodeOne(byte[] datagram, byte[] key) {
        if (datagram.length > MAX_DATAGRAM) {
            return DatagramStatus.BAD_LENGTH;
        }
        DatagramCodec codec = key == null ? new DatagramCodec() : keyed(new DatagramTag(key), 0);
        ByteBuffer src = ByteBuffer.wrap(datagram).order(ByteOrder.LITTLE_ENDIAN);
        int extra = codec.shift + codec.trailer - 4;
        if (datagram.length >= 4 && src.getInt(AT_MAGIC) == COMMAND_MAGIC) {
            int joints = Math.max(1, (datagram.length - COMMAND_OVERHEAD - extra) / 16);
            return codec.decodeCommand(src, new CommandFrame(joints));
        }
        int values = Math.max(1, (datagram.length - STATE_OVERHEAD - extra) / 8);
        return codec.decodeState(src, values, new double[values]);
    }

    /** The sequence number of the last datagram decoded as {@code ACCEPTED}. */
    public long sequence() {
        return sequence;
    }

    /** The timestamp field of the last datagram decoded as {@code ACCEPTED}. */
    public long time() {
        return time;
    }

    /** The session id of the last datagram decoded as {@code ACCEPTED} (always 0 for version 1). */
    public long session() {
        return session;
    }

    private DatagramStatus checkShape(ByteBuffer src, int base, int received, int magic, int unkeyedOverhead, int stride) {
        if (received < PREFIX) {
            return DatagramStatus.TOO_SHORT;
        }
        if (src.getInt(base + AT_MAGIC) != magic) {
            return DatagramStatus.BAD_MAGIC;
        }
        int version = Short.toUnsignedInt(src.getShort(base + AT_VERSION));
        if (version != (keyed ? KEYED_VERSION : VERSION)) {
            if (keyed && version == VERSION) {
                return DatagramStatus.UNAUTHENTICATED;
            }
            if (!keyed && version == KEYED_VERSION) {
                return DatagramStatus.TAG_NOT_EXPECTED;
            }
            return DatagramStatus.BAD_VERSION;
        }
        int overhead = unkeyedOverhead + shift + trailer - 4;
        if (received < overhead) {
            return DatagramStatus.TOO_SHORT;
        }
        int length = Short.toUnsignedInt(src.getShort(base + AT_LENGTH));
        if (length != received || (length - overhead) % stride != 0) {
            return DatagramStatus.BAD_LENGTH;
        }
        if (keyed) {
            if (tag == null) {
                throw new IllegalStateException("a keyed codec made without a tag cannot check datagrams");
            }
            return tag.verify(src, base, base + length - DatagramTag.LENGTH) ? DatagramStatus.ACCEPTED : DatagramStatus.BAD_TAG;
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

    private void header(ByteBuffer dst, int magic, int length, long sequence) {
        dst.putInt(AT_MAGIC, magic);
        dst.putShort(AT_VERSION, (short) (keyed ? KEYED_VERSION : VERSION));
        dst.putShort(AT_LENGTH, (short) length);
        if (keyed) {
            dst.putLong(AT_SESSION, ownSession);
        }
        dst.putLong(AT_SEQUENCE + shift, sequence);
    }

    private void readHeader(ByteBuffer src, int base) {
        sequence = src.getLong(base + AT_SEQUENCE + shift);
        session = keyed ? src.getLong(base + AT_SESSION) : 0;
    }

    private static void prepare(ByteBuffer dst, int length) {
        if (dst.capacity() < length) {
            throw new IllegalArgumentException("the buffer holds " + dst.capacity() + " bytes, the datagram needs " + length);
        }
        dst.clear();
        dst.order(ByteOrder.LITTLE_ENDIAN);
    }

    private void seal(ByteBuffer dst, int length) {
        dst.position(0).limit(length);
        if (keyed) {
            if (tag != null) {
                tag.seal(dst, length);
            } else {
                dst.putLong(length - 32, 0).putLong(length - 24, 0).putLong(length - 16, 0).putLong(length - 8, 0);
            }
            return;
        }
        dst.limit(length - 4);
        crc.reset();
        crc.update(dst);
        dst.limit(length);
        dst.putInt(length - 4, (int) crc.getValue());
        dst.position(0);
    }
}
