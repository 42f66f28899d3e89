package dev.weft.runtime.recording;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import java.io.BufferedWriter;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Optional;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class CsvRecordingTest {

    @TempDir
    Path dir;

    private Path write(String name, String text) throws IOException {
        Path p = dir.resolve(name);
        Files.writeString(p, text, StandardCharsets.UTF_8);
        return p;
    }

    private List<String> problems(Path file, RecordingSpec spec) {
        BadInputException e = catchThrowableOfType(() -> Recordings.read(file, spec), BadInputException.class);
        assertThat(e).as("reading %s must fail", file).isNotNull();
        String prefix = dir + java.io.File.separator;
        return e.problems().stream().map(x -> x.toString().replace(prefix, "")).toList();
    }

    private List<String> problems(String text) throws IOException {
        return problems(write("run.csv", text), Specs.csv());
    }

    /** Files are named in messages as given; the tests show them relative to the temporary folder. */
    private String rel(Path p) {
        return dir.relativize(p).toString();
    }

    @Test
    void readsSamplesInFileOrderIgnoringCommentsBlankLinesSpacesAndUnnamedColumns() throws Exception {
        Path f = write("run.csv", "\uFEFF# recorded on the bench\n"
                + "time, label, q.shoulder,q.elbow ,a.shoulder,a.elbow\n"
                + "0.00,start,0.1,-0.2,1,2\n"
                + "\n"
                + "  # a comment between samples\n"
                + "0.01 ,moving, 0.15,-0.25,1.5e-1,-2E0\r\n"
                + "0.02,,.5,5.,+3,-0\n");
        Recording r = Recordings.read(f, Specs.csv());
        assertThat(r.source()).isEqualTo(f.toString());
        assertThat(r.length()).isEqualTo(3);
        assertThat(new double[] {r.time(0), r.time(1), r.time(2)}).containsExactly(0.0, 0.01, 0.02);
        double[] obs = new double[2];
        double[] act = new double[2];
        r.observation(1, obs);
        r.action(1, act);
        assertThat(obs).containsExactly(0.15, -0.25);
        assertThat(act).containsExactly(0.15, -2.0);
        r.observation(2, obs);
        r.action(2, act);
        assertThat(obs).containsExactly(0.5, 5.0);
        assertThat(act).containsExactly(3.0, -0.0);
        assertThat(r.observationNames()).containsExactly("q.shoulder", "q.elbow");
        assertThat(r.actionNames()).containsExactly("shoulder", "elbow");
    }

    @Test
    void aLineOfOneMebibyteIsReadAndOneByteMoreIsRefusedNamingTheLine() throws Exception {
        String header = "time,q.shoulder,q.elbow,a.shoulder,a.elbow\n";
        String samples = "0.0,0.1,0.2,0.3,0.4\n0.01,0.1,0.2,0.3,0.4\n";
        // a comment line of exactly 1 MiB (the bound) between the samples is skipped as usual
        String atBound = "#" + "x".repeat((1 << 20) - 1) + "\r\n";
        Recording r = Recordings.read(write("big.csv", header + samples + atBound + "0.02,0.1,0.2,0.3,0.4\n"),
                Specs.csv());
        assertThat(r.length()).isEqualTo(3);
        String over = "#" + "x".repeat(1 << 20) + "\n";
        assertThat(problems(header + samples + over)).containsExactly(
                "run.csv (line 4): is longer than 1048576 bytes; a recording line may hold at most 1 MiB");
    }

    @Test
    void aMissingColumnNamesTheHeaderLineAndListsTheColumnsThere() throws Exception {
        assertThat(problems("# two comment lines\n# before the header\ntime,q.shoulder,q.elbw,a.shoulder\n0,1,2,3\n"))
                .containsExactly(
                        "run.csv (line 3): has no column \"q.elbow\" (recording.observation[1]); the header has: "
                                + "time, q.shoulder, q.elbw, a.shoulder",
                        "run.csv (line 3): has no column \"a.elbow\" (recording.action[1]); the header has: "
                                + "time, q.shoulder, q.elbw, a.shoulder");
    }

    @Test
    void headerProblemsAreReportedTogether() throws Exception {
        assertThat(problems("time,q.shoulder,,\"q.elbow\",a.shoulder,a.elbow,a.elbow\n"))
                .containsExactly(
                        "run.csv (line 1): header field 3 has no name",
                        "run.csv (line 1): header field 4 is quoted: \"q.elbow\"; quoted fields are not supported, "
                                + "write the name without quotes",
                        "run.csv (line 1): has no column \"q.elbow\" (recording.observation[1]); the header has: "
                                + "time, q.shoulder, (no name), \"q.elbow\", a.shoulder, a.elbow, a.elbow",
                        "run.csv (line 1): has the column \"a.elbow\" (recording.action[1]) more than once, as fields "
                                + "6, 7; column names must be unique");
    }

    @Test
    void everyBadValueIsNamedByLineAndColumn() throws Exception {
        String header = "time,q.shoulder,q.elbow,a.shoulder,a.elbow\n";
        assertThat(problems(header
                + "0.0,1,2,3,4\n"
                + "0.1,1,2,3\n"
                + "0.2,,abc,NaN,-inf\n"
                + "0.3,1e999,\"1.0\",0x1p3,1.0d\n"
                + "0.4,1,2,3,4,5\n"
                + "0.5,Infinity,1.,1.e5,1e\n"))
                .containsExactly(
                        "run.csv (line 3): has 4 fields, the header (line 1) has 5",
                        "run.csv (line 4, column \"q.shoulder\"): is empty",
                        "run.csv (line 4, column \"q.elbow\"): is not a decimal number: abc",
                        "run.csv (line 4, column \"a.shoulder\"): is not finite: NaN",
                        "run.csv (line 4, column \"a.elbow\"): is not finite: -inf",
                        "run.csv (line 5, column \"q.shoulder\"): is beyond the range of a double: 1e999",
                        "run.csv (line 5, column \"q.elbow\"): is quoted: \"1.0\"; quoted fields are not supported",
                        "run.csv (line 5, column \"a.shoulder\"): is not a decimal number: 0x1p3",
                        "run.csv (line 5, column \"a.elbow\"): is not a decimal number: 1.0d",
                        "run.csv (line 6): has 6 fields, the header (line 1) has 5",
                        "run.csv (line 7, column \"q.shoulder\"): is not finite: Infinity",
                        "run.csv (line 7, column \"a.elbow\"): is not a decimal number: 1e");
    }

    @Test
    void timesMustIncreaseStrictlyAndTheMessageGivesBothTimes() throws Exception {
        assertThat(problems("time,q.shoulder,q.elbow,a.shoulder,a.elbow\n"
                + "0.00,1,2,3,4\n"
                + "0.01,1,2,3,4\n"
                + "# a comment does not break the comparison\n"
                + "0.010,1,2,3,4\n"
                + "0.005,1,2,3,4\n"
                + "x,1,2,3,4\n"
                + "0.02,1,2,3,4\n"))
                .containsExactly(
                        "run.csv (line 5, column \"time\"): time 0.010 is not after 0.01 at line 3; "
                                + "times must increase strictly",
                        "run.csv (line 6, column \"time\"): time 0.005 is not after 0.010 at line 5; "
                                + "times must increase strictly",
                        "run.csv (line 7, column \"time\"): is not a decimal number: x");
    }

    @Test
    void emptyFilesAndFilesWithoutSamplesAreRefused() throws Exception {
        assertThat(problems("")).containsExactly("run.csv: is empty; a CSV recording starts with a header row");
        assertThat(problems("# only a comment\n\n"))
                .containsExactly("run.csv: holds no header row, only comments and blank lines");
        assertThat(problems("time,q.shoulder,q.elbow,a.shoulder,a.elbow\n# nothing recorded\n"))
                .containsExactly("run.csv: has a header (line 1) but no samples");
    }

    @Test
    void filesThatAreNotReadableCsvAreNamed() throws Exception {
        assertThat(problems(dir.resolve("none.csv"), Specs.csv())).containsExactly(rel(dir.resolve("none.csv"))
                + ": file not found");
        Path folder = Files.createDirectory(dir.resolve("folder.csv"));
        assertThat(problems(folder, Specs.csv())).containsExactly("folder.csv: is not a file");
        Path latin1 = dir.resolve("latin1.csv");
        Files.write(latin1, "time,q.shoulder,q.elbow,a.shoulder,a.elbow\n0,1,2,3,4\n# caf\u00e9\n"
                .getBytes(StandardCharsets.ISO_8859_1));
        assertThat(problems(latin1, Specs.csv())).containsExactly(rel(latin1) + " (line 3): is not UTF-8 text");
        Path other = write("run.txt", "time\n");
        assertThat(problems(other, Specs.csv())).containsExactly(rel(other) + ": cannot tell the format from the "
                + "file name (.csv is CSV; .h5 and .hdf5 are HDF5); set recording.format to csv or hdf5");
    }

    @Test
    void anHdf5FileReadAsCsvIsNamedAsSuch() throws Exception {
        Path h5 = dir.resolve("run.h5");
        try (var w = io.jhdf.HdfFile.write(h5)) {
            w.putDataset("time", new double[] {0, 1});
        }
        RecordingSpec asCsv = new RecordingSpec(Optional.of(RecordingFormat.CSV), "time",
                Specs.csv().observation(), Specs.csv().action(), 2, Specs.JOINTS);
        assertThat(problems(h5, asCsv)).containsExactly(rel(h5) + ": is an HDF5 file, not CSV text; set "
                + "recording.format to hdf5 (or name the file .h5)");
    }

    @Test
    void aMatrixCannotBeReadFromCsv() throws Exception {
        Path f = write("run.csv", "time,a\n0,1\n");
        RecordingSpec spec = Specs.hdf5("time", Columns.matrix("obs"), Columns.list(List.of("a.shoulder", "a.elbow")));
        assertThat(problems(f, spec)).containsExactly(rel(f) + ": is read as CSV, but recording.observation names "
                + "one dataset (\"obs\"), which only an HDF5 recording has; a CSV recording needs a list of column names");
    }

    @Test
    void aLongListOfProblemsIsCutAtTwentyAndSaysHowManyMore() throws Exception {
        StringBuilder b = new StringBuilder("time,q.shoulder,q.elbow,a.shoulder,a.elbow\n");
        for (int i = 0; i < 30; i++) {
            b.append(i).append(",1,2,3,nan\n");
        }
        List<String> p = problems(b.toString());
        assertThat(p).hasSize(21);
        assertThat(p.get(0)).isEqualTo("run.csv (line 2, column \"a.elbow\"): is not finite: nan");
        assertThat(p.get(19)).isEqualTo("run.csv (line 21, column \"a.elbow\"): is not finite: nan");
        assertThat(p.get(20)).isEqualTo("run.csv: 10 more problems not shown (30 in all; the first 20 are listed)");
    }

    @Test
    void aLargeFileIsReadCompletelyLineByLine() throws Exception {
        // 200,000 samples, values drawn from a seeded generator and written with Double.toString,
        // whose output Double.parseDouble reads back to the same double (its documented round trip).
        int n = 200_000;
        Random rnd = new Random(7);
        double[] expected = new double[n * 2];
        Path f = dir.resolve("large.csv");
        try (BufferedWriter w = Files.newBufferedWriter(f)) {
            w.write("time,q.shoulder,q.elbow,a.shoulder,a.elbow\n");
            for (int i = 0; i < n; i++) {
                expected[2 * i] = rnd.nextGaussian();
                expected[2 * i + 1] = rnd.nextDouble() * 1e-3;
                w.write(i * 0.002 + "," + expected[2 * i] + "," + expected[2 * i + 1] + ",0,0\n");
            }
        }
        Recording r = Recordings.read(f, Specs.csv());
        assertThat(r.length()).isEqualTo(n);
        double[] obs = new double[2];
        for (int i = 0; i < n; i += 997) {
            r.observation(i, obs);
            assertThat(obs[0]).isEqualTo(expected[2 * i]);
            assertThat(obs[1]).isEqualTo(expected[2 * i + 1]);
            assertThat(r.time(i)).isEqualTo(i * 0.002);
        }
        assertThat(r.time(n - 1)).isEqualTo((n - 1) * 0.002);
    }

    @Test
    void theErrorExamplesInTheConfigurationDocsAreWhatTheReaderSays() throws Exception {
        String doc = Files.readString(Path.of("..", "docs", "configuration.md"));
        RecordingSpec spec = new RecordingSpec(Optional.empty(), "time",
                Columns.list(List.of("q.base", "q.shoulder", "q.elbow")),
                Columns.list(List.of("cmd.base", "cmd.shoulder", "cmd.elbow")), 3, List.of("base", "shoulder", "elbow"));
        StringBuilder b = new StringBuilder("time,q.base,q.shoulder,q.elbow,cmd.base,cmd.shoulder,cmd.elbow\n");
        for (int line = 2; line <= 20; line++) {
            double t = line == 14 ? 0.024 : line * 0.002;
            String time = String.format(java.util.Locale.ROOT, "%.3f", t);
            String row = switch (line) {
                case 9 -> time + ",0,0,0,0,0";
                case 12 -> time + ",0,0,0.3.1,0,0,0";
                case 20 -> time + ",0,0,0,NaN,0,0";
                default -> time + ",0,0,0,0,0,0";
            };
            b.append(row).append('\n');
        }
        Path bench = write("bench.csv", b.toString());
        BadInputException e = catchThrowableOfType(() -> Recordings.read(bench, spec), BadInputException.class);
        String shown = e.getMessage().replace(dir + java.io.File.separator, "").replace(System.lineSeparator(), "\n");
        assertThat(doc).contains("```\n" + shown + "\n```");

        RecordingSpec wrist = new RecordingSpec(Optional.empty(), "time",
                Columns.list(List.of("q.base", "q.shoulder", "q.wrist")), spec.action(), 3, spec.jointNames());
        BadInputException missing = catchThrowableOfType(() -> Recordings.read(bench, wrist), BadInputException.class);
        assertThat(doc).contains("```\n" + missing.getMessage().replace(dir + java.io.File.separator, "") + "\n```");
    }
}
