package dev.weft.runtime.recording;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.runtime.BadInputException;
import io.jhdf.HdfFile;
import io.jhdf.WritableHdfFile;
import io.jhdf.api.WritableGroup;
import java.io.File;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Optional;
import java.util.function.Consumer;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * HDF5 recordings. The files are written by jhdf itself: no HDF5 file written by another program
 * is used, because neither h5py nor the HDF5 command-line tools are on this machine (checked:
 * {@code python3 -c "import h5py"} fails) and nothing is downloaded for the tests. What is checked
 * against jhdf's writer is therefore the reader's own logic (paths, shapes, types, values, order),
 * not jhdf's reading of files from other writers.
 */
class Hdf5RecordingTest {

    @TempDir
    Path dir;

    private Path h5(String name, Consumer<WritableHdfFile> content) {
        Path p = dir.resolve(name);
        try (WritableHdfFile w = HdfFile.write(p)) {
            content.accept(w);
        }
        return p;
    }

    /** A valid file: /time [3], /obs/state [3, 2], /act/shoulder [3], /act/elbow [3]. */
    private Path valid() {
        return h5("run.h5", w -> {
            w.putDataset("time", new double[] {0.0, 0.5, 1.0});
            w.putGroup("obs").putDataset("state", new double[][] {{1, 2}, {3, 4}, {5, 6}});
            WritableGroup act = w.putGroup("act");
            act.putDataset("shoulder", new double[] {0.1, 0.2, 0.3});
            act.putDataset("elbow", new double[] {-0.1, -0.2, -0.3});
        });
    }

    private List<String> problems(Path file, RecordingSpec spec) {
        BadInputException e = catchThrowableOfType(() -> Recordings.read(file, spec), BadInputException.class);
        assertThat(e).as("reading %s must fail", file).isNotNull();
        String prefix = dir + File.separator;
        return e.problems().stream().map(x -> x.toString().replace(prefix, "")).toList();
    }

    @Test
    void readsAMatrixAndOneDimensionalColumnsRowByRow() throws Exception {
        Path f = valid();
        Recording r = Recordings.read(f, Specs.hdf5());
        assertThat(r.source()).isEqualTo(f.toString());
        assertThat(r.length()).isEqualTo(3);
        assertThat(r.time(2)).isEqualTo(1.0);
        double[] obs = new double[2];
        double[] act = new double[2];
        r.observation(1, obs);
        r.action(2, act);
        // row 1 of [[1, 2], [3, 4], [5, 6]]: the flat data is row-major as the dataset's C order
        assertThat(obs).containsExactly(3.0, 4.0);
        assertThat(act).containsExactly(0.3, -0.3);
        assertThat(r.observationNames()).containsExactly("/obs/state[0]", "/obs/state[1]");
        assertThat(r.actionNames()).containsExactly("shoulder", "elbow");
    }

    @Test
    void acceptsFloat32AndIntegerDatasetsAndColumnsShapedNByOne() throws Exception {
        Path f = h5("mixed.hdf5", w -> {
            w.putDataset("t", new int[] {1, 2, 4});
            w.putDataset("q0", new float[] {0.1f, 0.2f, 0.3f});
            w.putDataset("q1", new long[][] {{7}, {8}, {9}});
            w.putDataset("a", new float[][] {{1.5f, -2.5f}, {0.1f, 0.2f}, {3, 4}});
        });
        RecordingSpec spec = Specs.hdf5("t", Columns.list(List.of("q0", "/q1")), Columns.matrix("a"));
        Recording r = Recordings.read(f, spec);
        assertThat(r.time(2)).isEqualTo(4.0);
        double[] obs = new double[2];
        double[] act = new double[2];
        r.observation(1, obs);
        r.action(1, act);
        // float32 values are widened exactly: 0.2f is 0.20000000298023224 as a double
        assertThat(obs).containsExactly((double) 0.2f, 8.0);
        assertThat(act).containsExactly((double) 0.1f, (double) 0.2f);
        assertThat(r.observationNames()).containsExactly("/q0", "/q1");
    }

    @Test
    void aMissingDatasetListsWhatIsThereInstead() {
        Path f = valid();
        RecordingSpec spec = Specs.hdf5("/times", Columns.matrix("/obs/joints"),
                Columns.list(List.of("/action/shoulder", "/act/shoulder/x")));
        assertThat(problems(f, spec)).containsExactly(
                "run.h5 (dataset /times): not found: / holds no \"times\"; / holds: act (group), obs (group), "
                        + "time (dataset [3] float64)",
                "run.h5 (dataset /obs/joints): not found: /obs holds no \"joints\"; /obs holds: "
                        + "state (dataset [3, 2] float64)",
                "run.h5 (dataset /action/shoulder): not found: / holds no \"action\"; / holds: act (group), "
                        + "obs (group), time (dataset [3] float64)",
                "run.h5 (dataset /act/shoulder/x): not found: /act/shoulder is a dataset, not a group");
    }

    @Test
    void groupsAndMalformedPathsAreNotDatasets() {
        Path f = valid();
        RecordingSpec spec = Specs.hdf5("/", Columns.matrix("obs"), Columns.list(List.of("act//shoulder", "act/")));
        assertThat(problems(f, spec)).containsExactly(
                "run.h5 (dataset /): is not a dataset path (names separated by single /, such as /obs/state)",
                "run.h5 (dataset /obs): is a group, not a dataset; it holds: state (dataset [3, 2] float64)",
                "run.h5 (dataset act//shoulder): is not a dataset path (names separated by single /, such as "
                        + "/obs/state)",
                "run.h5 (dataset act/): is not a dataset path (names separated by single /, such as /obs/state)");
    }

    @Test
    void wrongTypesAndShapesNameTheDatasetAndTheShapeNeeded() {
        Path f = h5("shapes.h5", w -> {
            w.putDataset("time", new double[][] {{0, 1}, {2, 3}, {4, 5}});
            w.putDataset("label", new String[] {"a", "b", "c"});
            w.putDataset("one", 2.0);
            w.putDataset("flat", new double[] {1, 2, 3});
            w.putDataset("wide", new double[][] {{1, 2, 3}, {4, 5, 6}, {7, 8, 9}});
        });
        RecordingSpec spec = Specs.hdf5("time", Columns.list(List.of("label", "one")), Columns.matrix("wide"));
        assertThat(problems(f, spec)).containsExactly(
                "shapes.h5 (dataset /time): has shape [3, 2]; recording.time needs a 1-D dataset [n] (or [n, 1]) "
                        + "of times in seconds",
                "shapes.h5 (dataset /label): holds text values; recording.observation[0] needs numbers: float64, "
                        + "float32 or integers",
                "shapes.h5 (dataset /one): has shape [] (a single value); recording.observation[1] needs a 1-D "
                        + "dataset [n] (or [n, 1])",
                "shapes.h5 (dataset /wide): has shape [3, 3]; recording.action needs a 2-D dataset [n, 2]: one row "
                        + "per sample, one column per joint (2 in robot.joints)");
        // the same dataset may serve twice when named two ways ("flat" and "/flat")
        RecordingSpec flatMatrix = Specs.hdf5("flat", Columns.matrix("flat"), Columns.list(List.of("flat", "/flat")));
        assertThat(problems(f, flatMatrix)).containsExactly(
                "shapes.h5 (dataset /flat): has shape [3]; recording.observation needs a 2-D dataset [n, 2]: one row "
                        + "per sample, 2 values per observation (policy.observation_size)");
    }

    @Test
    void lengthsMustMatchTheTimeDataset() {
        Path f = h5("short.h5", w -> {
            w.putDataset("time", new double[] {0, 1, 2});
            w.putDataset("obs", new double[][] {{1, 2}, {3, 4}});
            w.putDataset("a0", new double[] {1, 2, 3, 4});
            w.putDataset("a1", new double[] {1, 2, 3});
        });
        RecordingSpec spec = Specs.hdf5("time", Columns.matrix("obs"), Columns.list(List.of("a0", "a1")));
        assertThat(problems(f, spec)).containsExactly(
                "short.h5 (dataset /obs): has 2 samples (shape [2, 2]) but recording.time (/time) has 3",
                "short.h5 (dataset /a0): has 4 samples (shape [4]) but recording.time (/time) has 3");
    }

    @Test
    void nonFiniteValuesAndTimesOutOfOrderAreNamedByIndex() {
        Path f = h5("values.h5", w -> {
            w.putDataset("time", new float[] {0f, 0.1f, 0.1f, 0.05f});
            w.putDataset("obs", new double[][] {{1, 2}, {3, Double.NaN}, {5, 6}, {Double.NEGATIVE_INFINITY, 8}});
            w.putDataset("a0", new float[] {1, Float.POSITIVE_INFINITY, 3, 4});
            w.putDataset("a1", new long[] {1, (1L << 53) + 1, 3, -(1L << 53)});
        });
        RecordingSpec spec = Specs.hdf5("time", Columns.matrix("obs"), Columns.list(List.of("a0", "a1")));
        assertThat(problems(f, spec)).containsExactly(
                "values.h5 (dataset /time, index [2]): time 0.1 is not after 0.1 at [1]; times must increase strictly",
                "values.h5 (dataset /time, index [3]): time 0.05 is not after 0.1 at [2]; times must increase strictly",
                "values.h5 (dataset /obs, index [1, 1]): is not finite: NaN",
                "values.h5 (dataset /obs, index [3, 0]): is not finite: -Infinity",
                "values.h5 (dataset /a0, index [1]): is not finite: Infinity",
                "values.h5 (dataset /a1, index [1]): integer 9007199254740993 is not exactly a double (its magnitude "
                        + "is above 2^53)");
    }

    @Test
    void aTimeColumnShapedNByOneIsIndexedWithBothIndices() {
        Path f = h5("column.h5", w -> {
            w.putDataset("time", new double[][] {{0}, {1}, {1}});
            w.putDataset("obs", new double[][] {{1, 2}, {3, 4}, {5, 6}});
            w.putDataset("a", new double[][] {{1, 2}, {3, 4}, {5, 6}});
        });
        RecordingSpec spec = Specs.hdf5("time", Columns.matrix("obs"), Columns.matrix("a"));
        assertThat(problems(f, spec)).containsExactly(
                "column.h5 (dataset /time, index [2, 0]): time 1.0 is not after 1.0 at [1, 0]; times must increase "
                        + "strictly");
    }

    @Test
    void aFileThatIsNotHdf5IsNamed() throws Exception {
        Path f = dir.resolve("run.h5");
        Files.writeString(f, "time,a\n0,1\n");
        assertThat(problems(f, Specs.hdf5())).containsExactly(
                "run.h5: cannot be read as HDF5: No valid HDF5 signature found");
        Path csv = dir.resolve("run.csv");
        Files.writeString(csv, "time,a\n0,1\n");
        RecordingSpec forced = new RecordingSpec(Optional.of(RecordingFormat.HDF5), "/time", Columns.matrix("/obs"),
                Columns.matrix("/act"), 2, Specs.JOINTS);
        assertThat(problems(csv, forced)).containsExactly(
                "run.csv: cannot be read as HDF5: No valid HDF5 signature found");
    }

    @Test
    void theSameTrajectoryReadsTheSameFromCsvAndHdf5() throws Exception {
        double[] t = {0.0, 0.002, 0.004, 0.006};
        double[][] q = {{0.1, -0.3}, {0.11, -0.29}, {0.125, -0.275}, {0.14, -0.26}};
        double[][] a = {{0.2, -0.1}, {0.21, -0.09}, {0.22, -0.08}, {0.23, -0.07}};
        StringBuilder csv = new StringBuilder("time,q.shoulder,q.elbow,a.shoulder,a.elbow\n");
        for (int i = 0; i < t.length; i++) {
            csv.append(t[i]).append(',').append(q[i][0]).append(',').append(q[i][1]).append(',')
                    .append(a[i][0]).append(',').append(a[i][1]).append('\n');
        }
        Path c = dir.resolve("same.csv");
        Files.writeString(c, csv);
        Path h = h5("same.h5", w -> {
            w.putDataset("time", t);
            w.putGroup("obs").putDataset("state", q);
            WritableGroup g = w.putGroup("act");
            g.putDataset("shoulder", new double[] {a[0][0], a[1][0], a[2][0], a[3][0]});
            g.putDataset("elbow", new double[] {a[0][1], a[1][1], a[2][1], a[3][1]});
        });
        Recording fromCsv = Recordings.read(c, Specs.csv());
        Recording fromHdf5 = Recordings.read(h, Specs.hdf5());
        double[] x = new double[2];
        double[] y = new double[2];
        for (int i = 0; i < t.length; i++) {
            assertThat(fromHdf5.time(i)).isEqualTo(fromCsv.time(i)).isEqualTo(t[i]);
            fromCsv.observation(i, x);
            fromHdf5.observation(i, y);
            assertThat(y).containsExactly(x).containsExactly(q[i]);
            fromCsv.action(i, x);
            fromHdf5.action(i, y);
            assertThat(y).containsExactly(x).containsExactly(a[i]);
        }
    }
}
