package dev.weft.runtime.config;

import java.nio.file.Path;
import java.util.Optional;

/**
 * Telemetry recording.
 *
 * @param file the file every tick's row is written to (absolute, its folder exists), or empty for
 *     no file
 */
public record TelemetryConfig(Optional<Path> file) {

    /** No telemetry file. */
    public static final TelemetryConfig NONE = new TelemetryConfig(Optional.empty());

    public TelemetryConfig {
        if (file == null) {
            throw new IllegalArgumentException("file must be given (Optional.empty() for none)");
        }
    }
}
