package dev.weft.runtime.recording;

/**
 * How the bytes of one 8-bit camera pixel are ordered, with the names configuration uses (the
 * same three as the shared-memory frame header in {@code docs/ports.md}).
 */
public enum PixelFormat {
    /** Three channels: red, green, blue. */
    RGB8("rgb8", 3),
    /** Three channels: blue, green, red. */
    BGR8("bgr8", 3),
    /** One channel: grey level. */
    GREY8("grey8", 1);

    private final String label;
    private final int channels;

    PixelFormat(String label, int channels) {
        this.label = label;
        this.channels = channels;
    }

    /** The name used in configuration files and messages. */
    public String label() {
        return label;
    }

    /**
     * The number the shared-memory frame header uses for this format (byte 28:
     * {@code SharedFrameReader.RGB8}, {@code BGR8}, {@code GREY8}).
     */
    public int headerCode() {
        return switch (this) {
            case RGB8 -> 0;
            case BGR8 -> 1;
            case GREY8 -> 2;
        };
    }

    /** Bytes per pixel: 3 or 1. */
    public int channels() {
        return channels;
    }
}
