package dev.weft.runtime.udp;

import java.security.GeneralSecurityException;
import javax.crypto.Mac;
import javax.crypto.spec.SecretKeySpec;

/**
 * A plain, byte-at-a-time writer of the datagram layouts exactly as docs/ports.md tables them,
 * with its own bitwise CRC-32C, so the codec is checked against something that shares no code with it.
 * Writes any values at all, non-finite ones and bad fields included, so tests can build every
 * malformed datagram with a correct CRC or tag. Version 2 tags are computed with the JDK's
 * {@code javax.crypto.Mac} directly, not through the codec's {@code DatagramTag}.
 */
final class ReferenceDatagrams {

    private ReferenceDatagrams() {
    }

    /**
     * CRC-32C, bit by bit: reflected polynomial 0x82F63B78 (Castagnoli), initial value and final
     * xor 0xFFFFFFFF, as RFC 3720 (iSCSI), section 12.1 and appendix B.4, specifies it.
     */
    static int crc32c(byte[] data, int from, int to) {
        int crc = 0xFFFFFFFF;
        for (int i = from; i < to; i++) {
            crc ^= data[i] & 0xFF;
            for (int bit = 0; bit < 8; bit++) {
                crc = (crc & 1) != 0 ? (crc >>> 1) ^ 0x82F63B78 : crc >>> 1;
            }
        }
        return ~crc;
    }

    static byte[] state(long sequence, long senderNanos, double... values) {
        byte[] b = new byte[28 + 8 * values.length];
        b[0] = 'w';
        b[1] = 'f';
        b[2] = 't';
        b[3] = 's';
        put(b, 4, 1, 2);
        put(b, 6, b.length, 2);
        put(b, 8, sequence, 8);
        put(b, 16, senderNanos, 8);
        for (int i = 0; i < values.length; i++) {
            put(b, 24 + 8 * i, Double.doubleToRawLongBits(values[i]), 8);
        }
        seal(b);
        return b;
    }

    static byte[] command(long sequence, long timeNanos, long tick, int state, int stop, int power, int reserved,
            int flags, double[] positions, double[] velocities) {
        int n = positions.length;
        byte[] b = new byte[44 + 16 * n];
        b[0] = 'w';
        b[1] = 'f';
        b[2] = 't';
        b[3] = 'c';
        put(b, 4, 1, 2);
        put(b, 6, b.length, 2);
        put(b, 8, sequence, 8);
        put(b, 16, timeNanos, 8);
        put(b, 24, tick, 8);
        b[32] = (byte) state;
        b[33] = (byte) stop;
        b[34] = (byte) power;
        b[35] = (byte) reserved;
        put(b, 36, flags, 4);
        for (int i = 0; i < n; i++) {
            put(b, 40 + 8 * i, Double.doubleToRawLongBits(positions[i]), 8);
            put(b, 40 + 8 * n + 8 * i, Double.doubleToRawLongBits(velocities[i]), 8);
        }
        seal(b);
        return b;
    }

    /** A version 2 (keyed) state datagram: session id after the length, HMAC-SHA-256 tag at the end. */
    static byte[] keyedState(byte[] key, long session, long sequence, long senderNanos, double... values) {
        byte[] b = new byte[64 + 8 * values.length];
        b[0] = 'w';
        b[1] = 'f';
        b[2] = 't';
        b[3] = 's';
        put(b, 4, 2, 2);
        put(b, 6, b.length, 2);
        put(b, 8, session, 8);
        put(b, 16, sequence, 8);
        put(b, 24, senderNanos, 8);
        for (int i = 0; i < values.length; i++) {
            put(b, 32 + 8 * i, Double.doubleToRawLongBits(values[i]), 8);
        }
        return tag(key, b);
    }

    /** Rewrites the trailing 32-byte tag of a version 2 datagram with {@code key}. */
    static byte[] tag(byte[] key, byte[] b) {
        try {
            Mac mac = Mac.getInstance("HmacSHA256");
            mac.init(new SecretKeySpec(key, "HmacSHA256"));
            mac.update(b, 0, b.length - 32);
            System.arraycopy(mac.doFinal(), 0, b, b.length - 32, 32);
            return b;
        } catch (GeneralSecurityException e) {
            throw new IllegalStateException(e);
        }
    }

    /** Rewrites the trailing CRC after a test edited the bytes before it. */
    static byte[] seal(byte[] b) {
        put(b, b.length - 4, crc32c(b, 0, b.length - 4), 4);
        return b;
    }

    /** Little-endian: least significant byte first. */
    static void put(byte[] b, int at, long value, int bytes) {
        for (int i = 0; i < bytes; i++) {
            b[at + i] = (byte) (value >>> (8 * i));
        }
    }
}
