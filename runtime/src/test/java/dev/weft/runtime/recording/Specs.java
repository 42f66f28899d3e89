package dev.weft.runtime.recording;

import java.util.List;
import java.util.Optional;

/** Recording specs the reader tests share: two observation values, two joints. */
final class Specs {

    static final List<String> JOINTS = List.of("shoulder", "elbow");

    private Specs() {
    }

    /** CSV columns time; q.shoulder, q.elbow; a.shoulder, a.elbow; format by extension. */
    static RecordingSpec csv() {
        return new RecordingSpec(Optional.empty(), "time", Columns.list(List.of("q.shoulder", "q.elbow")),
                Columns.list(List.of("a.shoulder", "a.elbow")), 2, JOINTS);
    }

    /** HDF5 with a 2-D observation /obs/state [n, 2] and 1-D actions /act/shoulder, /act/elbow. */
    static RecordingSpec hdf5() {
        return new RecordingSpec(Optional.empty(), "/time", Columns.matrix("/obs/state"),
                Columns.list(List.of("/act/shoulder", "act/elbow")), 2, JOINTS);
    }

    static RecordingSpec hdf5(String time, Columns observation, Columns action) {
        return new RecordingSpec(Optional.empty(), time, observation, action, 2, JOINTS);
    }
}
