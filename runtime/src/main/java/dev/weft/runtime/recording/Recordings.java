package dev.weft.runtime.recording;

import dev.weft.runtime.BadInputException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;

/**
 * Reads recorded trajectories from CSV or HDF5 and checks them before any replay: times strictly
 * increasing, every value finite, the named columns or datasets present, and their counts and
 * shapes matching the observation size and the number of joints.
 *
 * <p>Every problem found is reported at once (up to {@value ProblemList#SHOWN_MAX}, then how many
 * more) in one {@link BadInputException}, each naming the file and the place in it:
 * <ul>
 *   <li>CSV: {@code run.csv (line 12, column "q.elbow"): is not a number: "0.3.1"}</li>
 *   <li>HDF5: {@code run.h5 (dataset /obs/state, index [12, 3]): is not finite: NaN}</li>
 * </ul>
 *
 * <p><b>CSV.</b> UTF-8 text (a leading byte-order mark is skipped), one sample per line, fields
 * separated by commas, spaces around a field ignored. Lines whose first non-space character is
 * {@code #} are comments and blank lines are skipped, anywhere in the file; line numbers in messages
 * count every line. The first other line is the header: one name per column. Every data line has as
 * many fields as the header. Quoted fields are not supported (a field containing {@code "} is an
 * error). Values are decimal numbers ({@code -1.5}, {@code 2}, {@code .5}, {@code 3e-4}), parsed by
 * {@link Double#parseDouble} after a syntax check that refuses hexadecimal, {@code NaN},
 * {@code Infinity} and suffixes such as {@code 1.0d}. Columns that the spec does not name are
 * neither parsed nor checked. The file is read line by line.
 *
 * <p><b>HDF5.</b> Datasets are found by path ({@code /obs/state} or {@code obs/state}). The time is a
 * 1-D dataset {@code [n]} (or {@code [n, 1]}); a list of columns is a list of such datasets, each of
 * length n; a matrix is one 2-D dataset {@code [n, size]}. Accepted element types: float64, float32
 * and integers (8 to 64 bits; an integer must be exactly representable as a double, at most 2^53 in
 * magnitude). Text, compound and other types are refused.
 *
 * <p><b>Cameras (HDF5 only).</b> Each camera has a 4-D dataset {@code [n, height, width, channels]}
 * of unsigned 8-bit integers (uint8; signed 8-bit, wider integers and floats are refused), with 3
 * channels for rgb8 and bgr8 and 1 for grey8, and its own 1-D time dataset {@code [n]} (or
 * {@code [n, 1]}) of the types the time accepts, finite and strictly increasing, at the camera's own
 * rate, independent of the joint-state time. {@link #readCameras} reads them; {@link #read} does not.
 *
 * <p>The recording's observation names are the CSV column names, the HDF5 dataset paths, or
 * {@code path[k]} for column k of a matrix; its action names are the spec's joint names.
 *
 * <p>Thread-safe: every call reads its own file.
 */
public final class Recordings {

    private Recordings() {
    }

    /**
     * Reads and checks one recording.
     *
     * @param file the recording; messages name it as given here
     * @param spec where the values are and the sizes expected
     * @return the checked recording, whose source is the file as given
     * @throws BadInputException naming the file, and the line and column (CSV) or dataset and index
     *     (HDF5), of every problem found
     */
    public static Recording read(Path file, RecordingSpec spec) throws BadInputException {
        String name = file.toString();
        if (!Files.exists(file)) {
            throw new BadInputException(name, "file not found");
        }
        if (!Files.isRegularFile(file)) {
            throw new BadInputException(name, "is not a file");
        }
        RecordingFormat format = formatOf(file, spec.format());
        if (format == RecordingFormat.CSV) {
            csvNeedsNames(name, "recording.observation", spec.observation());
            csvNeedsNames(name, "recording.action", spec.action());
            return CsvRecordingReader.read(file, name, spec);
        }
        return Hdf5RecordingReader.read(file, name, spec);
    }

    /**
     * Reads and checks the camera streams of an HDF5 recording: every camera of
     * {@code spec.cameras()}, each read whole into memory (at most 2147483639 bytes, just under 2 GiB,
     * per camera). The joint-state datasets are not read here; {@link #read} reads them.
     *
     * @param file the recording; messages name it as given here
     * @param spec where the cameras' frames and times are
     * @return one {@link RecordedFrames} per camera, in the spec's order; empty when the spec names none
     * @throws BadInputException naming the file and the dataset (and index) of every problem found,
     *     or the {@code recording.cameras} key when the file is read as CSV
     */
    public static List<RecordedFrames> readCameras(Path file, RecordingSpec spec) throws BadInputException {
        return readCameras(file, spec, Hdf5FrameReader.FRAME_BYTES_MAX);
    }

    /** {@link #readCameras(Path, RecordingSpec)} with another bound on a camera's bytes, for tests. */
    static List<RecordedFrames> readCameras(Path file, RecordingSpec spec, long frameBytesMax)
            throws BadInputException {
        if (spec.cameras().isEmpty()) {
            return List.of();
        }
        String name = file.toString();
        if (!Files.exists(file)) {
            throw new BadInputException(name, "file not found");
        }
        if (!Files.isRegularFile(file)) {
            throw new BadInputException(name, "is not a file");
        }
        if (formatOf(file, spec.format()) == RecordingFormat.CSV) {
            List<String> names = new ArrayList<>();
            for (CameraSpec c : spec.cameras()) {
                names.add(c.name());
            }
            throw new BadInputException(name, "is read as CSV, but recording.cameras names " + names.size()
                    + " camera" + (names.size() == 1 ? "" : "s") + " (" + String.join(", ", names)
                    + "); camera frames are read only from an HDF5 recording");
        }
        return Hdf5FrameReader.read(file, name, spec.cameras(), frameBytesMax);
    }

    private static RecordingFormat formatOf(Path file, Optional<RecordingFormat> given) throws BadInputException {
        if (given.isPresent()) {
            return given.get();
        }
        return RecordingFormat.fromFileName(file).orElseThrow(() -> new BadInputException(file.toString(),
                "cannot tell the format from the file name (.csv is CSV; .h5 and .hdf5 are HDF5); "
                        + "set recording.format to csv or hdf5"));
    }

    private static void csvNeedsNames(String name, String key, Columns c) throws BadInputException {
        if (c.matrix()) {
            throw new BadInputException(name, "is read as CSV, but " + key + " names one dataset (\""
                    + c.names().get(0) + "\"), which only an HDF5 recording has; a CSV recording needs a list of "
                    + "column names");
        }
    }
}
