package dev.weft.runtime.udp;

/**
 * What became of one received datagram: accepted, or the one reason it was rejected. The codec
 * ({@link DatagramCodec}) returns the shape reasons, checked in the order of the constants from
 * {@code TOO_SHORT} to {@code NON_FINITE}; the state receiver checks the source
 * ({@code NOT_ALLOWED}) before the shape and the sequence ({@code DUPLICATE}, {@code OUT_OF_ORDER})
 * after it. The first check that fails names the datagram's status. Enum constants are shared
 * singletons, so returning one allocates nothing.
 */
public enum DatagramStatus {
    /** Well-formed, from an allowed source, newer than the last accepted datagram. */
    ACCEPTED("accepted"),
    /** Fewer bytes than the smallest datagram of its type (header and CRC). */
    TOO_SHORT("too short"),
    /** The first four bytes are not the type's magic. */
    BAD_MAGIC("bad magic"),
    /** A format version this build does not read. */
    BAD_VERSION("bad version"),
    /** The length field differs from the bytes received, or does not fit a whole number of values. */
    BAD_LENGTH("bad length"),
    /** The CRC-32C over the preceding bytes does not match the trailing CRC field. */
    BAD_CRC("bad crc"),
    /** Well-formed, but carrying a different number of values than expected. */
    WRONG_COUNT("wrong value count"),
    /** A command datagram with an unknown state or stop code, a power flag other than 0 or 1, or a non-zero reserved byte. */
    BAD_FIELD("bad field"),
    /** A value is NaN or infinite. */
    NON_FINITE("non-finite value"),
    /** The source address is not on the receiver's allowlist. */
    NOT_ALLOWED("source not allowed"),
    /** The same sequence number as the last accepted datagram. */
    DUPLICATE("duplicate sequence"),
    /** A sequence number below the last accepted one (arrived late or replayed). */
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
