package dev.weft.runtime.recording;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.recording.Hdf5RecordingReader.Found;
import io.jhdf.HdfFile;
import io.jhdf.api.Dataset;
import io.jhdf.dataset.DatasetBase;
import io.jhdf.exceptions.HdfException;
import io.jhdf.object.datatype.DataType;
import io.jhdf.object.datatype.FixedPoint;
import io.jhdf.object.datatype.FloatingPoint;
import java.nio.ByteBuffer;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Reads the camera streams of an HDF5 recording (the layout is described on {@link Recordings}).
 * Every camera's datasets are found and their types and shapes checked first; then each camera's
 * times are read and checked, and its frames are read, only when all of its checks passed, into
 * one byte array. One reading reports every problem of every camera.
 */
final class Hdf5FrameReader {

    /**
     * The most bytes one camera's frames may take: the longest byte array a JVM is sure to allocate
     * ({@code Integer.MAX_VALUE - 8}, just under 2 GiB).
     */
    static final long FRAME_BYTES_MAX = Integer.MAX_VALUE - 8;

    private Hdf5FrameReader() {
    }

    static List<RecordedFrames> read(Path file, String name, List<CameraSpec> cameras, long frameBytesMax)
            throws BadInputException {
        try (HdfFile h = new HdfFile(file)) {
            return read(h, name, cameras, frameBytesMax);
        } catch (HdfException e) {
            throw new BadInputException(name, "cannot be read as HDF5: " + e.getMessage());
        }
    }

    /** One camera whose datasets have the right types and shapes. */
    private record Checked(CameraSpec spec, Dataset frames, int[] shape, Found time) {
        int n() {
            return shape[0];
        }
    }

    private static List<RecordedFrames> read(HdfFile h, String name, List<CameraSpec> cameras, long frameBytesMax)
            throws BadInputException {
        ProblemList problems = new ProblemList(name);
        List<Checked> checked = new ArrayList<>();
        for (CameraSpec c : cameras) {
            Checked k = check(h, name, c, frameBytesMax, problems);
            if (k != null) {
                checked.add(k);
            }
        }
        List<double[]> times = new ArrayList<>();
        for (Checked k : checked) {
            double[] t = Hdf5RecordingReader.values(name, k.time(), problems);
            if (t != null) {
                Hdf5RecordingReader.increasing(name, k.time(), t, problems);
            }
            times.add(t);
        }
        problems.throwIfAny();
        List<RecordedFrames> out = new ArrayList<>();
        for (int i = 0; i < checked.size(); i++) {
            Checked k = checked.get(i);
            byte[] pixels = pixels(name, k);
            out.add(new RecordedFrames(k.spec().name(), Hdf5RecordingReader.at(name, k.frames().getPath()),
                    k.spec().pixelFormat(), k.shape()[1], k.shape()[2], times.get(i), pixels));
        }
        return out;
    }

    /** The camera's datasets when their types and shapes are right; null after recording every problem. */
    private static Checked check(HdfFile h, String name, CameraSpec c, long frameBytesMax, ProblemList problems) {
        int before = problems.total();
        String key = c.key() + ".frames";
        Dataset frames = Hdf5RecordingReader.resolve(h, name, c.frames(), problems);
        int[] shape = null;
        if (frames != null) {
            String where = Hdf5RecordingReader.at(name, frames.getPath());
            int[] s = frames.getDimensions();
            String type = elementType(frames);
            if (!type.equals("unsigned 8-bit integer")) {
                problems.add(where, "holds " + type + " values; " + key + " needs unsigned 8-bit integers (uint8), "
                        + "one byte per channel");
            } else if (s.length != 4) {
                problems.add(where, "has shape " + Arrays.toString(s) + "; " + key + " needs a 4-D dataset [n, "
                        + "height, width, channels]");
            } else if (s[3] != c.pixelFormat().channels()) {
                problems.add(where, "has " + s[3] + " channel" + (s[3] == 1 ? "" : "s") + " (shape "
                        + Arrays.toString(s) + "); " + c.key() + ".pixel_format is " + c.pixelFormat().label()
                        + ", which has " + c.pixelFormat().channels());
            } else if (s[0] == 0) {
                problems.add(where, "has no frames (shape " + Arrays.toString(s) + ")");
            } else if (s[1] == 0 || s[2] == 0) {
                problems.add(where, "has empty frames (shape " + Arrays.toString(s) + "); a frame needs a height "
                        + "and a width of at least 1");
            } else {
                long bytes = (long) s[0] * s[1] * s[2] * s[3];
                if (bytes > frameBytesMax) {
                    problems.add(where, "holds " + bytes + " bytes of frames (" + s[0] + " × " + s[1] + " × " + s[2]
                            + " × " + s[3] + "); a camera is read into memory whole and may hold at most "
                            + frameBytesMax + " bytes");
                } else {
                    shape = s;
                }
            }
        }
        Found time = Hdf5RecordingReader.column(h, name, c.time(), c.key() + ".time", " of frame times in seconds",
                problems);
        if (time != null && shape != null && time.rows() != shape[0]) {
            problems.add(Hdf5RecordingReader.at(name, time.path()), "has " + time.rows() + " times (shape "
                    + Arrays.toString(time.shape()) + ") but " + c.key() + ".frames (" + frames.getPath() + ") has "
                    + shape[0] + " frames");
        }
        return problems.total() == before ? new Checked(c, frames, shape, time) : null;
    }

    /** What a dataset's elements are, in the words messages use. */
    private static String elementType(Dataset d) {
        if (d.isCompound()) {
            return "compound";
        }
        DataType t = d.getDataType();
        if (t instanceof FixedPoint f) {
            return (f.isSigned() ? "signed " : "unsigned ") + f.getBitPrecision() + "-bit integer";
        }
        if (t instanceof FloatingPoint) {
            return "float" + 8 * t.getSize();
        }
        return Hdf5RecordingReader.typeName(d);
    }

    /** The frames' bytes, as stored (row-major, C order), in one array of exactly n × H × W × C. */
    private static byte[] pixels(String name, Checked k) throws BadInputException {
        int[] s = k.shape();
        int length = s[0] * s[1] * s[2] * s[3];
        // Every dataset jhdf 0.13 reads from a file is a DatasetBase, whose raw buffer holds the bytes as
        // stored (chunks decompressed and assembled); getDataFlat would widen each uint8 to a short.
        ByteBuffer raw = ((DatasetBase) k.frames()).getDataBuffer();
        if (raw.remaining() != length) {
            throw new BadInputException(Hdf5RecordingReader.at(name, k.frames().getPath()), "holds "
                    + raw.remaining() + " bytes of data, but its shape " + Arrays.toString(s) + " needs " + length);
        }
        byte[] out = new byte[length];
        raw.get(out);
        return out;
    }
}
