package dev.weft.runtime.config;

import java.nio.file.Path;
import java.util.Optional;

/**
 * Telemetry recording.
 *
 * @param file the file every tick's row is written to (absolute, its folder exists), or empty for
 *     no file
 * @param where how messages name the file's key, such as {@code telemetry.file (line 35)}
 * @param overwrite whether an existing file may be replaced ({@code telemetry.overwrite})
 * @param drainTimeout how long opening and the end of a run wait for the recorder's writer, seconds
 *     ({@code telemetry.drain_timeout})
 */
public record TelemetryConfig(Optional<Path> file, String where, boolean overwrite, double drainTimeout) {

    /** The key naming the file. */
    public static final String FILE_KEY = "telemetry.file";

    /** How long the end of a run waits for the recorder when nobody says, seconds. */
    public static final double DEFAULT_DRAIN_TIMEOUT = 2.0;

    /** No telemetry file. */
    public static final TelemetryConfig NONE = new TelemetryConfig(Optional.empty());

    public TelemetryConfig {
        if (file == null || where == null) {
            throw new IllegalArgumentException("file and where must be given (Optional.empty() for no file)");
        }
        if (!(drainTimeout > 0) || !Double.isFinite(drainTimeout)) {
            throw new IllegalArgumentException("drain timeout must be finite and > 0 s, got " + drainTimeout);
        }
    }

    /** A file (or none), not replacing an existing one, with the default drain timeout. */
    public TelemetryConfig(Optional<Path> file) {
        this(file, FILE_KEY, false, DEFAULT_DRAIN_TIMEOUT);
    }

    /** The same, allowed to replace an existing file (the command line's {@code --overwrite}). */
    public TelemetryConfig overwriting() {
        return new TelemetryConfig(file, where, true, drainTimeout);
    }
}
