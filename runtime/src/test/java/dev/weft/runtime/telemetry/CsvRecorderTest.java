package dev.weft.runtime.telemetry;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;
import static org.junit.jupiter.api.Assumptions.assumeTrue;

import java.io.FileInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.CountDownLatch;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * The recorder against real files: a normal file, a full device ({@code /dev/full}), FIFOs with no
 * reader and with a reader that stops reading, and a file-size limit that cuts a write part-way.
 * Every test checks {@code handed = written + lost} after close against an independent count.
 */
class CsvRecorderTest {

    static final long SECOND = 1_000_000_000L;

    @TempDir
    Path dir;

    /** A row: one number, written as {@code n,n*2,padding}. */
    static final class Row {
        long n;
    }

    static final CsvRecorder.Format<Row> FORMAT = new CsvRecorder.Format<>() {
        @Override
        public void header(StringBuilder out) {
            out.append("n,twice,pad");
        }

        @Override
        public void row(Row r, StringBuilder out) {
            out.append(r.n).append(',').append(r.n * 2).append(",0123456789abcdef0123456789abcdef");
        }
    };

    static CsvRecorder<Row> open(TargetFile t, int ring, long drainNanos) throws IOException {
        return CsvRecorder.open(t, ring, drainNanos, Row::new, FORMAT, "test-recorder");
    }

    static CsvRecorder<Row> straight(Path file, int ring, long drainNanos) throws IOException {
        return CsvRecorder.openStraightForTests(file, ring, drainNanos, Row::new, FORMAT, "test-recorder");
    }

    /** Hands over {@code rows} rows without waiting; returns how many the ring took. */
    static long hand(CsvRecorder<Row> rec, long from, long rows) {
        long taken = 0;
        for (long i = from; i < from + rows; i++) {
            Row r = rec.claim();
            if (r != null) {
                r.n = i;
                rec.publish();
                taken++;
            }
        }
        return taken;
    }

    /** Every line ends with a line break and every data line parses as a whole row. */
    static void assertWholeLines(Path file) throws IOException {
        byte[] bytes = Files.readAllBytes(file);
        if (bytes.length > 0) {
            assertThat(bytes[bytes.length - 1]).as("the file ends with a line break").isEqualTo((byte) '\n');
        }
        List<String> lines = Files.readAllLines(file);
        assertThat(lines.get(0)).isEqualTo("n,twice,pad");
        for (int i = 1; i < lines.size(); i++) {
            String[] f = lines.get(i).split(",");
            assertThat(f).as("line %d: %s", i + 1, lines.get(i)).hasSize(3);
            assertThat(Long.parseLong(f[1])).isEqualTo(2 * Long.parseLong(f[0]));
            assertThat(f[2]).hasSize(32);
        }
    }

    @Test
    void aNormalRunWritesEveryRowAndMovesTheFileOntoItsName() throws Exception {
        Path target = dir.resolve("rows.csv");
        TargetFile t = TargetFile.resolve(target, false);
        CsvRecorder<Row> rec = open(t, 1 << 14, 2 * SECOND);
        assertThat(t.partial()).exists();
        assertThat(target).as("no file under the final name during the run").doesNotExist();
        for (long i = 0; i < 5000; i++) {
            Row r = rec.claimWaiting();
            r.n = i;
            rec.publish();
        }
        rec.close();
        assertThat(rec.counts()).isEqualTo(new RowCounts(5000, 5000, 0, 0));
        assertThat(rec.failure()).isNull();
        assertThat(t.partial()).doesNotExist();
        List<String> lines = Files.readAllLines(target);
        assertThat(lines).hasSize(5001);
        assertThat(lines.get(5000)).startsWith("4999,9998,");
        assertWholeLines(target);
    }

    /** /dev/full fails every write with ENOSPC, as a full disk does (Linux). */
    @Test
    @Timeout(60)
    void aFullDeviceLosesEveryRowAndSaysSoExactly() throws Exception {
        Path full = Path.of("/dev/full");
        assumeTrue(Files.isWritable(full), "needs /dev/full");
        // reached through a link, as a configuration could name it
        Path link = Files.createSymbolicLink(dir.resolve("t.csv"), full);
        assertThatThrownBy(() -> TargetFile.resolve(link, true)).isInstanceOf(TargetFile.Refused.class)
                .hasMessageContaining("/dev/full").hasMessageContaining("not a regular file");
        CsvRecorder<Row> rec = straight(link, 1 << 6, 2 * SECOND);
        hand(rec, 0, 300);
        for (int i = 0; i < 300; i++) {
            Row r = rec.claimWaiting();
            if (r != null) {
                r.n = i;
                rec.publish();
            }
        }
        rec.close();
        RowCounts c = rec.counts();
        assertThat(c.handed()).isEqualTo(600);
        assertThat(c.written()).isZero();
        assertThat(c.lost()).isEqualTo(600);
        assertThat(c.pending()).isZero();
        assertThat(rec.faulted()).isTrue();
        assertThat(rec.failure()).contains("t.csv").containsIgnoringCase("no space left on device");
    }

    /**
     * A file-size limit ({@code ulimit -f}) makes a write stop part-way through a row, on a real
     * file, as a disk filling up does; the JVM ignores SIGXFSZ, so the write fails with EFBIG. A
     * child JVM runs the recorder under the limit and prints its counts.
     */
    @Test
    @Timeout(120)
    void aWriteCutShortPartWayLeavesOnlyWholeLinesAndCountsExactly() throws Exception {
        Path target = dir.resolve("limited.csv");
        String javaBin = Path.of(System.getProperty("java.home"), "bin", "java").toString();
        // 64 blocks of 1024 bytes: the limit falls inside the second write buffer
        String cmd = "ulimit -f 64 && exec '" + javaBin + "' -cp '" + System.getProperty("java.class.path") + "' '"
                + LimitedWrite.class.getName() + "' '" + target + "' 4000";
        Process p = new ProcessBuilder("bash", "-c", cmd).redirectErrorStream(true).start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertThat(p.waitFor(60, TimeUnit.SECONDS)).isTrue();
        assertThat(p.exitValue()).as(out).isZero();
        String[] f = out.trim().split("\n");
        String counts = f[f.length - 2];
        String failure = f[f.length - 1];
        String[] n = counts.split(" ");
        long handed = Long.parseLong(n[0]);
        long written = Long.parseLong(n[1]);
        long lost = Long.parseLong(n[2]);
        long pending = Long.parseLong(n[3]);
        assertThat(handed).isEqualTo(4000);
        assertThat(written + lost).isEqualTo(handed);
        assertThat(pending).isZero();
        assertThat(lost).as(out).isPositive();
        assertThat(failure).contains("limited.csv.incomplete").containsIgnoringCase("file too large")
                .contains("the rows written are in");
        // a file that failed keeps its partial name, cut back to its last whole line
        Path partial = dir.resolve("limited.csv.incomplete");
        assertThat(target).doesNotExist();
        assertThat(Files.size(partial)).isLessThanOrEqualTo(64 * 1024);
        assertWholeLines(partial);
        assertThat(Files.readAllLines(partial)).hasSize((int) written + 1);
    }

    /** The child of {@link #aWriteCutShortPartWayLeavesOnlyWholeLinesAndCountsExactly}. */
    public static final class LimitedWrite {
        public static void main(String[] args) throws Exception {
            CsvRecorder<Row> rec = open(TargetFile.resolve(Path.of(args[0]), false), 1 << 14, 5 * SECOND);
            long rows = Long.parseLong(args[1]);
            for (long i = 0; i < rows; i++) {
                Row r = rec.claimWaiting();
                if (r != null) {
                    r.n = i;
                    rec.publish();
                }
                if (i % 500 == 0) {
                    Thread.sleep(5); // several write buffers, so some whole ones land before the limit
                }
            }
            rec.close();
            RowCounts c = rec.counts();
            System.out.println(c.handed() + " " + c.written() + " " + c.lost() + " " + c.pending());
            System.out.println(rec.failure());
        }
    }

    static Path mkfifo(Path p) throws Exception {
        Process mk = new ProcessBuilder("mkfifo", p.toString()).redirectErrorStream(true).start();
        assumeTrue(mk.waitFor(10, TimeUnit.SECONDS) && mk.exitValue() == 0, "needs mkfifo");
        return p;
    }

    @Test
    @Timeout(30)
    void aFifoWithNoReaderIsRefusedAndOpeningItStraightGivesUpInTime() throws Exception {
        Path fifo = mkfifo(dir.resolve("pipe.csv"));
        assertThatThrownBy(() -> TargetFile.resolve(fifo, true)).isInstanceOf(TargetFile.Refused.class)
                .hasMessageContaining("not a regular file").hasMessageContaining(fifo.toString());
        assertThatThrownBy(() -> TargetFile.resolve(fifo, false)).isInstanceOf(TargetFile.Refused.class)
                .hasMessageContaining("not a regular file");
        // written straight into, opening blocks in the kernel until a reader comes: the wait is bounded
        assertThatThrownBy(() -> straight(fifo, 64, SECOND / 2)).isInstanceOf(IOException.class)
                .hasMessageContaining("could not open " + fifo).hasMessageContaining("FIFO with no reader");
    }

    @Test
    @Timeout(60)
    void aFifoWhoseReaderStopsReadingCannotHoldCloseBeyondTheDrainTimeout() throws Exception {
        Path fifo = mkfifo(dir.resolve("slow.csv"));
        CountDownLatch readSome = new CountDownLatch(1);
        CountDownLatch release = new CountDownLatch(1);
        Thread reader = new Thread(() -> {
            try (InputStream in = new FileInputStream(fifo.toFile())) {
                byte[] buf = new byte[1000];
                int got = 0;
                while (got < buf.length) { // not readNBytes: on a FIFO it seeks (JDK 17)
                    int n = in.read(buf, got, buf.length - got);
                    if (n < 0) {
                        break;
                    }
                    got += n;
                }
                readSome.countDown();
                release.await(); // stops reading, keeps the FIFO open
            } catch (IOException | InterruptedException e) {
                readSome.countDown();
            }
        }, "test-slow-reader");
        reader.setDaemon(true);
        reader.start();
        CsvRecorder<Row> rec = straight(fifo, 1 << 10, SECOND);
        // far more than the pipe (64 KiB) and the write buffer (64 KiB) hold
        long taken = 0;
        for (int k = 0; k < 40; k++) {
            taken += hand(rec, k * 1000L, 1000);
            Thread.sleep(2);
        }
        assertThat(readSome.await(10, TimeUnit.SECONDS)).isTrue();
        long start = System.nanoTime();
        rec.close();
        long took = System.nanoTime() - start;
        release.countDown();
        assertThat(took).as("close returned (liveness bound, not a timing claim)").isLessThan(20 * SECOND);
        RowCounts c = rec.counts();
        assertThat(c.handed()).isEqualTo(40_000);
        assertThat(c.pending()).isZero();
        assertThat(c.written() + c.lost()).isEqualTo(c.handed());
        assertThat(c.written()).isLessThan(taken);
        assertThat(rec.failure()).contains("did not finish within").contains((taken - c.written()) + " rows were not written");
        // the counts are final: the writer thread, whatever it does now, changes nothing
        Thread.sleep(100);
        assertThat(rec.counts()).isEqualTo(c);
    }

    @Test
    void anExistingFileIsRefusedDirectlyThroughDotDotAndThroughALinkAndReplacedOnlyWhenAsked() throws Exception {
        Path sub = Files.createDirectories(dir.resolve("sub"));
        Path existing = Files.writeString(dir.resolve("keep.csv"), "precious\n");
        Path link = Files.createSymbolicLink(sub.resolve("link.csv"), existing);
        for (Path p : List.of(existing, sub.resolve("../keep.csv"), link)) {
            assertThatThrownBy(() -> TargetFile.resolve(p, false)).as(p.toString())
                    .isInstanceOf(TargetFile.Refused.class)
                    .hasMessageContaining(existing.toRealPath().toString()).hasMessageContaining("exists")
                    .extracting(e -> ((TargetFile.Refused) e).reason()).isEqualTo(TargetFile.Reason.EXISTS);
            assertThat(Files.readString(existing)).isEqualTo("precious\n");
        }
        // replacing through the link replaces the file it points to and keeps the link
        TargetFile t = TargetFile.resolve(link, true);
        assertThat(t.file()).isEqualTo(existing.toRealPath());
        assertThat(t.partial()).isEqualTo(existing.toRealPath().resolveSibling("keep.csv.incomplete"));
        CsvRecorder<Row> rec = open(t, 64, 2 * SECOND);
        assertThat(Files.readString(existing)).as("untouched until the end").isEqualTo("precious\n");
        hand(rec, 0, 10);
        rec.close();
        assertThat(rec.counts()).isEqualTo(new RowCounts(10, 10, 0, 0));
        assertThat(Files.isSymbolicLink(link)).isTrue();
        assertThat(Files.readAllLines(link)).hasSize(11);
        assertThat(Files.readAllLines(existing)).hasSize(11);
        assertThat(t.partial()).doesNotExist();
    }

    @Test
    void aFolderASpecialFileADanglingLinkAndALeftoverPartialFileAreRefused() throws Exception {
        assertThatThrownBy(() -> TargetFile.resolve(dir, true)).hasMessageContaining("is a folder");
        assertThatThrownBy(() -> TargetFile.resolve(dir.resolve("none/t.csv"), true))
                .hasMessage("folder not found: " + dir.resolve("none"));
        Path dangling = Files.createSymbolicLink(dir.resolve("d.csv"), dir.resolve("nothing.csv"));
        assertThatThrownBy(() -> TargetFile.resolve(dangling, true)).hasMessageContaining("does not exist");
        Files.writeString(dir.resolve("t.csv.incomplete"), "1,2\n");
        assertThatThrownBy(() -> TargetFile.resolve(dir.resolve("t.csv"), true))
                .hasMessageContaining("t.csv.incomplete is in the way");
        assertThat(Files.readString(dir.resolve("t.csv.incomplete"))).isEqualTo("1,2\n");
        assertThat(dir.resolve("t.csv")).doesNotExist();
    }

    @Test
    void aFileThatAppearsDuringTheRunIsNotOverwrittenAtClose() throws Exception {
        TargetFile t = TargetFile.resolve(dir.resolve("late.csv"), false);
        CsvRecorder<Row> rec = open(t, 64, 2 * SECOND);
        hand(rec, 0, 5);
        Files.writeString(dir.resolve("late.csv"), "someone else's\n");
        rec.close();
        assertThat(Files.readString(dir.resolve("late.csv"))).isEqualTo("someone else's\n");
        assertThat(rec.failure()).contains("could not move").contains("the rows are in " + t.partial());
        assertThat(Files.readAllLines(t.partial())).hasSize(6);
        assertThat(rec.counts()).isEqualTo(new RowCounts(5, 5, 0, 0));
    }

    @Test
    void aDiscardedRecordingLeavesNothingBehind() throws Exception {
        TargetFile t = TargetFile.resolve(dir.resolve("never.csv"), false);
        CsvRecorder<Row> rec = open(t, 64, 2 * SECOND);
        rec.discard();
        rec.close();
        assertThat(t.partial()).doesNotExist();
        assertThat(t.file()).doesNotExist();
    }

    @Test
    void probingAFolderLeavesNothingBehindAndAFullRingIsCountedAsLost() throws Exception {
        TargetFile t = TargetFile.resolve(dir.resolve("p.csv"), false);
        t.probe();
        try (var files = Files.list(dir)) {
            assertThat(files).isEmpty();
        }
        // a ring of 16 rows handed 100 000 rows at once: the ring refuses some, and says so
        CsvRecorder<Row> rec = open(t, 16, 2 * SECOND);
        long taken = hand(rec, 0, 100_000);
        rec.close();
        RowCounts c = rec.counts();
        assertThat(c.handed()).isEqualTo(100_000);
        assertThat(c.written()).isEqualTo(taken);
        assertThat(c.lost()).isEqualTo(100_000 - taken);
        assertThat(Files.readAllLines(t.file())).hasSize((int) taken + 1);
        if (c.lost() > 0) {
            assertThat(rec.faulted()).isTrue();
        }
    }
}
