package dev.weft.runtime.config;

import dev.weft.runtime.recording.PixelFormat;
import java.nio.file.Path;
import java.util.Optional;

/**
 * One camera stream ({@code cameras.<name>}): the frames' size and pixel format, the age bound
 * the watchdog holds its newest frame to, and, for a live run, where its frames come from.
 *
 * @param name the camera's name, its key
 * @param height frame rows
 * @param width frame columns
 * @param pixelFormat the channel order (and so the channel count)
 * @param ageMax the frame-stale bound, s: a newest frame older than this stops the robot
 * @param frameFile for {@code source: {kind: shared_memory}}: the frame file a camera process
 *     writes; empty for {@code kind: embedded} (frames offered by the embedding program) or when no
 *     source is given (dry runs read the recording's frames)
 * @param embedded whether the embedding program offers the frames ({@code source: {kind: embedded}})
 */
public record CameraConfig(String name, int height, int width, PixelFormat pixelFormat, double ageMax,
                           Optional<Path> frameFile, boolean embedded) {

    /** Bytes per pixel. */
    public int channels() {
        return pixelFormat.channels();
    }
}
