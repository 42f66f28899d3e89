package dev.weft.runtime.recording;

import java.util.List;
import java.util.Optional;

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
 */
public record RecordingSpec(Optional<RecordingFormat> format, String time, Columns observation, Columns action,
                            int observationSize, List<String> jointNames) {

    public RecordingSpec {
        if (format == null || time == null || time.isBlank() || observation == null || action == null
                || jointNames == null) {
            throw new IllegalArgumentException("a recording spec needs a format (or empty), a time, "
                    + "observation and action columns and the joint names");
        }
        jointNames = List.copyOf(jointNames);
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
