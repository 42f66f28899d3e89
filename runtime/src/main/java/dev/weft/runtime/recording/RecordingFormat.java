package dev.weft.runtime.recording;

import java.nio.file.Path;
import java.util.Locale;
import java.util.Optional;

/** The file formats a recorded trajectory is read from, with the names configuration uses. */
public enum RecordingFormat {
    /** Comma-separated text with a header row; see {@link Recordings}. */
    CSV("csv"),
    /** HDF5, read with jhdf; dataset paths come from the configuration. */
    HDF5("hdf5");

    private final String label;

    RecordingFormat(String label) {
        this.label = label;
    }

    /** The name used in configuration files and messages. */
    public String label() {
        return label;
    }

    /**
     * The format a file name implies: {@code .csv} is CSV; {@code .h5} and {@code .hdf5} are HDF5
     * (letter case ignored).
     *
     * @return the format, or empty when the extension is none of these
     */
    public static Optional<RecordingFormat> fromFileName(Path file) {
        Path name = file.getFileName();
        String n = name == null ? "" : name.toString().toLowerCase(Locale.ROOT);
        if (n.endsWith(".csv")) {
            return Optional.of(CSV);
        }
        if (n.endsWith(".h5") || n.endsWith(".hdf5")) {
            return Optional.of(HDF5);
        }
        return Optional.empty();
    }
}
