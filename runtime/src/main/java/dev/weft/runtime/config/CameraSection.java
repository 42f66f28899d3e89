package dev.weft.runtime.config;

import dev.weft.runtime.config.TreeReader.Section;
import dev.weft.runtime.recording.CameraSpec;
import dev.weft.runtime.recording.PixelFormat;
import dev.weft.runtime.recording.RecordingFormat;
import java.util.ArrayList;
import java.util.List;

/**
 * Reads {@code recording.cameras}: a map from each camera's name to its {@code frames} dataset,
 * its {@code time} dataset and its {@code pixel_format}. Cameras are HDF5 only: with
 * {@code recording.format: csv} the key is refused.
 */
final class CameraSection {

    private final TreeReader r;

    CameraSection(TreeReader r) {
        this.r = r;
    }

    /**
     * @param recording the {@code recording} map
     * @param format {@code recording.format}, or null when it is left out (or did not read)
     * @return the cameras in document order (empty when the key is left out), or null with problems recorded
     */
    List<CameraSpec> read(Section recording, RecordingFormat format) {
        boolean given = recording.has("cameras");
        Section s = recording.section("cameras", false);
        if (s == null) {
            return given ? null : List.of();
        }
        if (format == RecordingFormat.CSV) {
            recording.problem("cameras", "camera frames are read only from an HDF5 recording, and recording.format "
                    + "is csv");
            s.acceptAllKeys();
            return null;
        }
        List<String> names = s.keys();
        if (names.isEmpty()) {
            recording.problem("cameras", "must name at least one camera, or be left out");
            return null;
        }
        int before = r.count();
        List<CameraSpec> out = new ArrayList<>();
        for (String name : names) {
            Section c = s.section(name, true);
            if (c == null) {
                continue;
            }
            if (name.isBlank()) {
                s.problem(name, "a camera's name must not be empty");
            }
            String frames = c.text("frames", null);
            String time = c.text("time", null);
            PixelFormat pixelFormat = c.choice("pixel_format", PixelFormat.values(), PixelFormat::label, null);
            c.done();
            if (r.count() == before) {
                out.add(new CameraSpec(name, frames, time, pixelFormat));
            }
        }
        return r.count() == before ? out : null;
    }
}
