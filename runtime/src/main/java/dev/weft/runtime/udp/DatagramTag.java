package dev.weft.runtime.udp;

import java.nio.ByteBuffer;
import java.security.InvalidKeyException;
import java.security.NoSuchAlgorithmException;
import javax.crypto.Mac;
import javax.crypto.ShortBufferException;
import javax.crypto.spec.SecretKeySpec;

/**
 * The message authentication tag of a keyed datagram: HMAC-SHA-256 (RFC 2104 with SHA-256, the
 * JDK's {@code javax.crypto.Mac} algorithm {@code HmacSHA256}) over every byte of the datagram
 * before the tag, with the link's shared key. Computing, sealing and checking all go through
 * {@link #compute}, the path the RFC 4231 test vectors are checked on.
 *
 * <p>Allocation: the JDK's {@code Mac.doFinal(byte[], int)} makes one 32-byte array per call
 * (it copies from the array {@code doFinal()} returns), 48 bytes per tag measured with the thread
 * allocation counter on JDK 17 and 25; nothing else. Tags are computed on the UDP receiving and
 * sending threads only, never on the control loop thread ({@code docs/performance.md}).
 *
 * <p>Threading: one instance per thread (a {@link Mac} keeps state between calls).
 */
public final class DatagramTag {

    /** Bytes of a tag: the full HMAC-SHA-256 output, never truncated. */
    public static final int LENGTH = 32;

    private static final String ALGORITHM = "HmacSHA256";

    private final Mac mac;
    private final byte[] computed = new byte[LENGTH];

    /**
     * @param key read, not kept (the JDK copies it into its key object); any length from 1 byte
     *     (HMAC hashes keys longer than 64 bytes first); key files are held to 32 to 64 bytes by
     *     {@link LinkKey}
     * @throws IllegalArgumentException when the key is empty
     */
    public DatagramTag(byte[] key) {
        if (key.length == 0) {
            throw new IllegalArgumentException("an HMAC key needs at least one byte");
        }
        try {
            mac = Mac.getInstance(ALGORITHM);
            mac.init(new SecretKeySpec(key, ALGORITHM));
        } catch (NoSuchAlgorithmException | InvalidKeyException e) {
            // Every Java SE platform must provide HmacSHA256 (javax.crypto.Mac, "Java Security Standard Algorithm Names").
            throw new IllegalStateException("this JVM cannot compute HMAC-SHA-256", e);
        }
    }

    /**
     * Computes the tag of the bytes {@code [from, to)} of {@code src}.
     *
     * @param src read; its position and limit are restored
     * @param out modified: receives the 32 tag bytes at {@code [at, at + 32)}
     */
    public void compute(ByteBuffer src, int from, int to, byte[] out, int at) {
        int position = src.position();
        int limit = src.limit();
        src.limit(to).position(from);
        mac.update(src);
        src.limit(limit).position(position);
        try {
            mac.doFinal(out, at);
        } catch (ShortBufferException e) {
            throw new IllegalArgumentException("no room for a " + LENGTH + "-byte tag at " + at + " in " + out.length + " bytes", e);
        }
    }

    /**
     * Writes the tag of the first {@code length - 32} bytes of {@code dst} into its last 32.
     *
     * @param dst modified: bytes {@code [length - 32, length)}; position and limit are restored
     */
    void seal(ByteBuffer dst, int length) {
        int at = length - LENGTH;
        compute(dst, 0, at, computed, 0);
        for (int i = 0; i < LENGTH; i++) {
            dst.put(at + i, computed[i]);
        }
    }

    /**
     * True when the 32 bytes at {@code tagAt} are the tag of {@code [from, tagAt)}. Compares every
     * byte whatever the first difference, so the time taken tells nothing about the correct tag.
     *
     * @param src read; its position and limit are restored
     */
    boolean verify(ByteBuffer src, int from, int tagAt) {
        compute(src, from, tagAt, computed, 0);
        int difference = 0;
        for (int i = 0; i < LENGTH; i++) {
            difference |= computed[i] ^ src.get(tagAt + i);
        }
        return difference == 0;
    }
}
