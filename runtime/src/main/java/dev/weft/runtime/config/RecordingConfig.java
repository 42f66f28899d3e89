package dev.weft.runtime.config;

import dev.weft.runtime.recording.CameraSpec;
import dev.weft.runtime.recording.Columns;
import dev.weft.runtime.recording.RecordingFormat;
import java.util.List;
import java.util.Optional;

/**
 * The {@code recording} section: where a recorded trajectory keeps its times, observations and
 * actions. The file itself is named when a dry run starts, not here.
 *
 * @param format the format, or empty to take it from the file's extension
 * @param time the CSV column, or HDF5 path of a 1-D dataset, of the sample times in seconds
 * @param observation the observation's columns (as many as {@code policy.observation_size}) or, in
 *     HDF5, one 2-D dataset
 * @param action the action's columns in joint order (one per joint) or, in HDF5, one 2-D dataset
 * @param cameras the camera streams ({@code recording.cameras}, HDF5 only) in document order; may be empty
 */
public record RecordingConfig(Optional<RecordingFormat> format, String time, Columns observation, Columns action,
                              List<CameraSpec> cameras) {

    public RecordingConfig {
        if (format == null || time == null || time.isBlank() || observation == null || action == null
                || cameras == null) {
            throw new IllegalArgumentException("a recording section needs a format (or empty), a time column, "
                    + "observation and action columns and a list of cameras (or none)");
        }
        cameras = List.copyOf(cameras);
    }
}
