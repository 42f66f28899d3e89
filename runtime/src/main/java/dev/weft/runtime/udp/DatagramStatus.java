package dev.weft.runtime.udp;

/**
 * What became of one received datagram: accepted, or the one reason it was rejected. The codec
 * ({@link DatagramCodec}) returns the shape and authentication reasons, checked in the order of
 * the constants from {@code TOO_SHORT} to {@code NON_FINITE} ({@code TOO_SHORT} twice: below the
 * 8 bytes of magic, version and length, and again once the version gives the smallest size);
 * the state receiver checks the source
 * ({@code NOT_ALLOWED}) before them and the sequence window ({@link SequenceWindow}:
 * {@code OTHER_SESSION} to {@code OUT_OF_ORDER}) after them. The first check that fails names the
 * datagram's status. Enum constants are shared singletons, so returning one allocates nothing.
 */
public enum DatagramStatus {
    /** Well-formed, authentic when a key is configured, from an allowed source, inside the sequence window. */
    ACCEPTED("accepted"),
    /** Fewer bytes than the smallest datagram of its type and version (header and CRC or tag). */
    TOO_SHORT("too short"),
    /** The first four bytes are not the type's magic. */
    BAD_MAGIC("bad magic"),
    /** A format version this build does not read. */
    BAD_VERSION("bad version"),
    /** A version 1 datagram (no tag) where a key is configured: never accepted, whatever it holds. */
    UNAUTHENTICATED("unauthenticated"),
    /** A version 2 datagram (tagged) where no key is configured: the tag cannot be checked. */
    TAG_NOT_EXPECTED("tagged, no key configured"),
    /** The length field differs from the bytes received, or does not fit a whole number of values. */
    BAD_LENGTH("bad length"),
    /** Version 1: the CRC-32C over the preceding bytes does not match the trailing CRC field. */
    BAD_CRC("bad crc"),
    /** Version 2: the HMAC-SHA-256 tag does not match (another key, or altered bytes). */
    BAD_TAG("bad tag"),
    /** Well-formed, but carrying a different number of values than expected. */
    WRONG_COUNT("wrong value count"),
    /** A command datagram with an unknown state or stop code, a power flag other than 0 or 1, or a non-zero reserved byte. */
    BAD_FIELD("bad field"),
    /** A value is NaN or infinite. */
    NON_FINITE("non-finite value"),
    /** The source address is not on the receiver's allowlist. */
    NOT_ALLOWED("source not allowed"),
    /** Keyed: another session than the current one, which is still sending. */
    OTHER_SESSION("other session"),
    /** The same sequence number as the last accepted datagram. */
    DUPLICATE("duplicate sequence"),
    /** A sequence number more than the window ahead of the last accepted one. */
    BEYOND_WINDOW("beyond the window"),
    /** A sequence number behind the last accepted one (arrived late, replayed, or forged far off). */
    OUT_OF_ORDER("out of order");

    private final String label;

    DatagramStatus(String label) {
        this.label = label;
    }

    /** A short lower-case phrase for messages and status lines. */
    public String label() {
        return label;
    }
}
