package dev.weft.runtime.port;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.telemetry.CsvRecorder;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * Records every command frame to a CSV file through its own writer thread: the loop hands each
 * frame over a bounded, preallocated ring and never waits; a full ring drops the frame, counts it
 * and raises a port fault. Not live: it is the recorder a dry run swaps in for a live port.
 *
 * <p>Columns: {@code tick,time_s,state,stop_category,remove_power,limiter,position.<joint>…,velocity.<joint>…}
 * with {@code state} the supervisor state's name, values in Java's shortest round-trip form.
 */
public final class CsvPort implements CommandPort {

    /** Frames the ring holds; at 1 kHz about 16 s of backlog. */
    public static final int DEFAULT_RING = 1 << 14;

    private final Path file;
    private final List<String> jointNames;
    private final int ringSize;
    private final boolean waitWhenFull;
    private CsvRecorder<CommandFrame> recorder;
    private int joints;
    private long emitted;

    /**
     * @param file the file to write (truncated at open)
     * @param jointNames column names; empty for {@code j0, j1, …}
     */
    public CsvPort(Path file, List<String> jointNames, int ringSize) {
        this(file, jointNames, ringSize, false);
    }

    /**
     * @param waitWhenFull wait for the writer instead of dropping when the ring is full: only for
     *     runs on virtual time (dry runs), which have no deadline and must keep every frame
     */
    public CsvPort(Path file, List<String> jointNames, int ringSize, boolean waitWhenFull) {
        this.file = file;
        this.jointNames = List.copyOf(jointNames);
        this.ringSize = ringSize;
        this.waitWhenFull = waitWhenFull;
    }

    @Override
    public void open(int joints) throws IOException {
        this.joints = joints;
        List<String> names = new ArrayList<>(jointNames);
        if (names.isEmpty()) {
            for (int i = 0; i < joints; i++) {
                names.add("j" + i);
            }
        }
        if (names.size() != joints) {
            throw new IOException("csv port: " + names.size() + " joint names for " + joints + " joints");
        }
        recorder = CsvRecorder.openTruncating(file, ringSize, CsvRecorder.DEFAULT_DRAIN_TIMEOUT_NANOS,
                () -> new CommandFrame(joints), new Format(names), "weft-csv-port");
    }

    @Override
    public boolean emit(CommandFrame frame) {
        CommandFrame slot = waitWhenFull ? recorder.claimWaiting() : recorder.claim();
        if (slot == null) {
            return false;
        }
        slot.copyFrom(frame);
        recorder.publish();
        emitted++;
        return true;
    }

    @Override
    public boolean faulted() {
        return recorder != null && recorder.faulted();
    }

    @Override
    public long emitted() {
        return emitted;
    }

    @Override
    public long dropped() {
        return recorder == null ? 0 : recorder.lost();
    }

    /** The file written. */
    public Path file() {
        return file;
    }

    /** Frames written to the file so far. */
    public long written() {
        return recorder == null ? 0 : recorder.written();
    }

    @Override
    public String describe() {
        return "csv port " + file + ": " + emitted + " frames, " + dropped() + " dropped";
    }

    @Override
    public void close() {
        if (recorder != null) {
            recorder.close();
            if (recorder.failure() != null) {
                throw new UncheckedIOException("csv port: " + recorder.failure(), new IOException(recorder.failure()));
            }
        }
    }

    private static final class Format implements CsvRecorder.Format<CommandFrame> {
        private final List<String> names;

        Format(List<String> names) {
            this.names = names;
        }

        @Override
        public void header(StringBuilder out) {
            out.append("tick,time_s,state,stop_category,remove_power,limiter");
            for (String n : names) {
                out.append(",position.").append(n);
            }
            for (String n : names) {
                out.append(",velocity.").append(n);
            }
        }

        @Override
        public void row(CommandFrame f, StringBuilder out) {
            out.append(f.tick).append(',').append(f.timeNanos / 1e9).append(',')
                    .append(dev.weft.runtime.telemetry.TelemetryFormat.stateName(f.state)).append(',').append((int) f.stopCategory).append(',')
                    .append(f.removePower ? '1' : '0').append(',').append(f.limiterFlags);
            for (double v : f.positions) {
                out.append(',').append(v);
            }
            for (double v : f.velocities) {
                out.append(',').append(v);
            }
        }
    }

    /** The {@code csv} kind: options {@code file} (required), {@code ring} (frames, a power of two). */
    public static final class Provider implements CommandPortProvider {
        @Override
        public String kind() {
            return "csv";
        }

        @Override
        public boolean live() {
            return false;
        }

        @Override
        public CommandPort create(PortOptions options) throws BadInputException {
            Path file = options.path("file");
            if (file == null && !options.has("file")) {
                options.problem("file", "is required");
            }
            int ring = options.integer("ring", DEFAULT_RING, 16, 1 << 24);
            if (Integer.bitCount(ring) != 1) {
                options.problem("ring", "must be a power of two, got " + ring);
            }
            List<String> names = options.textList("joint_names", List.of());
            options.finish();
            return new CsvPort(file, names, ring);
        }
    }
}
