package dev.weft.runtime.recording;

/**
 * Where an HDF5 recording keeps one camera's frames: a 4-D dataset {@code [n, height, width,
 * channels]} of unsigned 8-bit integers and a 1-D dataset {@code [n]} of their times in seconds,
 * at the camera's own rate, independent of the joint-state time.
 *
 * @param name the camera's name, the key under {@code recording.cameras}
 * @param frames the path of the frames dataset
 * @param time the path of the frame times dataset
 * @param pixelFormat how a pixel's bytes are ordered; fixes the channel count the file must have
 */
public record CameraSpec(String name, String frames, String time, PixelFormat pixelFormat) {

    public CameraSpec {
        if (name == null || name.isBlank() || frames == null || frames.isBlank() || time == null || time.isBlank()
                || pixelFormat == null) {
            throw new IllegalArgumentException("a camera needs a name, a frames dataset, a time dataset and a "
                    + "pixel format");
        }
    }

    /** The configuration key of this camera, for messages: {@code recording.cameras.NAME}. */
    public String key() {
        return "recording.cameras." + name;
    }
}
