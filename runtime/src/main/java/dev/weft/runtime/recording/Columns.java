package dev.weft.runtime.recording;

import java.util.HashSet;
import java.util.List;
import java.util.Set;

/**
 * Where a recording keeps one vector (the observation, or the action): either a list of named
 * columns, one value each (CSV column names, or paths of 1-D HDF5 datasets), or a single 2-D HDF5
 * dataset whose row {@code i} is the vector at sample {@code i}.
 *
 * @param names the column names or dataset paths in vector order; for a matrix, its one dataset path
 * @param matrix true when {@code names} holds the path of one 2-D dataset
 */
public record Columns(List<String> names, boolean matrix) {

    public Columns {
        if (names == null || names.isEmpty()) {
            throw new IllegalArgumentException("columns need at least one name");
        }
        names = List.copyOf(names);
        if (matrix && names.size() != 1) {
            throw new IllegalArgumentException("a matrix is one dataset path, got " + names.size());
        }
        Set<String> seen = new HashSet<>();
        for (String n : names) {
            if (n.isBlank()) {
                throw new IllegalArgumentException("a column name must not be blank");
            }
            if (!seen.add(n)) {
                throw new IllegalArgumentException("column \"" + n + "\" is named twice");
            }
        }
    }

    /** Named columns (CSV) or 1-D datasets (HDF5), one value each, in vector order. */
    public static Columns list(List<String> names) {
        return new Columns(names, false);
    }

    /** One 2-D HDF5 dataset {@code [samples, size]}. */
    public static Columns matrix(String datasetPath) {
        return new Columns(List.of(datasetPath), true);
    }
}
