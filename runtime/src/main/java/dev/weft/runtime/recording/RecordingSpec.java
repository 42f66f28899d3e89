package dev.weft.runtime.recording;

import java.util.HashSet;
import java.util.List;
import java.util.Optional;
import java.util.Set;

/**
 * What a reader needs to read one recording: the format (or none, to take it from the file name),
 * where the time, observation and action values are, and the sizes the run expects.
 * {@code WeftConfig.recordingSpec()} builds one from a configuration's {@code recording} section.
 *
 * @param format the format, or empty to take it from the file's extension
 * @param time the CSV column name, or the HDF5 path of a 1-D dataset, of the sample times in seconds
 * @param observation where the observation vector is
 * @param action where the action (one value per joint, in joint order) is
 * @param observationSize values per observation (the policy's observation size)
 * @param jointNames the joints in action order; the recording's action names are these
 * @param cameras the camera streams (HDF5 only), each with its own frames and times; may be empty
 */
public record RecordingSpec(Optional<RecordingFormat> format, String time, Columns observation, Columns action,
                            int observationSize, List<String> jointNames, List<CameraSpec> cameras) {

    /** A spec with no camera streams. */
    public RecordingSpec(Optional<RecordingFormat> format, String time, Columns observation, Columns action,
                         int observationSize, List<String> jointNames) {
        this(format, time, observation, action, observationSize, jointNames, List.of());
    }

    public RecordingSpec {
        if (format == null || time == null || time.isBlank() || observation == null || action == null
                || jointNames == null || cameras == null) {
            throw new IllegalArgumentException("a recording spec needs a format (or empty), a time, "
                    + "observation and action columns, the joint names and a list of cameras (or none)");
        }
        jointNames = List.copyOf(jointNames);
        cameras = List.copyOf(cameras);
        Set<String> cameraNames = new HashSet<>();
        for (CameraSpec c : cameras) {
            if (!cameraNames.add(c.name())) {
                throw new IllegalArgumentException("camera \"" + c.name() + "\" is named twice");
            }
        }
        if (format.isPresent() && format.get() == RecordingFormat.CSV && !cameras.isEmpty()) {
            throw new IllegalArgumentException("camera frames are read from HDF5 recordings only");
        }
        if (observationSize < 1 || jointNames.isEmpty()) {
            throw new IllegalArgumentException("observation size and joint count must be >= 1, got "
                    + observationSize + " and " + jointNames.size());
        }
        if (!observation.matrix() && observation.names().size() != observationSize) {
            throw new IllegalArgumentException(observation.names().size() + " observation columns for an observation "
                    + "of " + observationSize + " values");
        }
        if (!action.matrix() && action.names().size() != jointNames.size()) {
            throw new IllegalArgumentException(action.names().size() + " action columns for " + jointNames.size()
                    + " joints");
        }
        if (format.isPresent() && format.get() == RecordingFormat.CSV && (observation.matrix() || action.matrix())) {
            throw new IllegalArgumentException("a CSV recording names its columns; a single 2-D dataset is HDF5 only");
        }
    }

    /** The number of values per action, one per joint. */
    public int actionSize() {
        return jointNames.size();
    }
}
