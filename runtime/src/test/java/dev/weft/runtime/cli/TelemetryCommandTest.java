package dev.weft.runtime.cli;

import static org.assertj.core.api.Assertions.assertThat;
import static org.junit.jupiter.api.Assumptions.assumeTrue;

import dev.weft.onnxkit.PolicyModels;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermissions;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code weft check} and {@code weft run} with a telemetry file that cannot be written, that
 * exists, or that fills up during the run: one line naming {@code telemetry.file} and exit 2 before
 * anything starts, the existing file untouched unless replacing was asked for, and on a failure
 * during the run the normal end summary with the counts and the failure, never a stack trace.
 */
class TelemetryCommandTest {

    @TempDir
    Path dir;

    private Path config(String telemetry) throws Exception {
        Files.write(dir.resolve("goal.onnx"), PolicyModels.goalPolicy(3, 50, new double[] {0.3, -0.2, 0.1}));
        String yaml = """
                robot:
                  name: telemetry-bench
                  joints:
                    - {name: a, position: {min: -1.5, max: 1.5}, velocity: 1.0, acceleration: 8, jerk: 120}
                    - {name: b, position: {min: -1.5, max: 1.5}, velocity: 1.0, acceleration: 8, jerk: 120}
                    - {name: c, position: {min: -1.5, max: 1.5}, velocity: 1.0, acceleration: 8, jerk: 120}
                timing:
                  control_period: 0.002
                policy:
                  model: goal.onnx
                  observation_size: 3
                  inputs:
                    obs: {source: observation}
                  output: {layout: 1xKxD}
                watchdog:
                  observation_age_max: 0.05
                  inference_latency_max: 0.05
                  overruns_max: 100
                  stall_periods: 50
                arming:
                  pose_distance_max: 0.5
                  ramp_time: 0.5
                source:
                  kind: sim
                port:
                  kind: discard
                telemetry:
                """ + telemetry;
        return Files.writeString(dir.resolve("run.yaml"), yaml);
    }

    /** Exit 2, one line on stderr naming the key and {@code mentions}, nothing like a stack trace. */
    private static void assertRefusedInOneLine(InspectCommandTest.Run r, String... mentions) {
        assertThat(r.exit()).as(r.out() + r.err()).isEqualTo(WeftCommand.COULD_NOT_RUN);
        assertThat(r.err().strip().lines()).as(r.err()).hasSize(1);
        assertThat(r.err()).contains("telemetry.file (line 28)").contains(mentions);
        assertNoStackTrace(r.out() + r.err());
    }

    private static void assertNoStackTrace(String text) {
        assertThat(text).doesNotContain("\tat ").doesNotContain("Exception");
    }

    @Test
    void aFolderThatTakesNoFilesIsRefusedByCheckAndRunInOneLine() throws Exception {
        Path ro = Files.createDirectories(dir.resolve("ro"));
        Files.setPosixFilePermissions(ro, PosixFilePermissions.fromString("r-xr-xr-x"));
        try {
            Path folder = ro;
            if (creates(ro)) {
                // root ignores permission bits; sysfs refuses new files even to root
                folder = Path.of("/sys");
                assumeTrue(!creates(folder), "permissions are not enforced here (root) and no folder refuses root");
            }
            Path cfg = config("  file: " + folder.resolve("telemetry.csv") + "\n");
            InspectCommandTest.Run check = InspectCommandTest.weft("check", cfg.toString(), "--runs", "20");
            String file = folder.resolve("telemetry.csv").toString();
            assertRefusedInOneLine(check, file);
            assertThat(check.err()).containsAnyOf("is not writable", "cannot create files in its folder");
            InspectCommandTest.Run run = InspectCommandTest.weft("run", cfg.toString(), "--duration", "0.3");
            assertRefusedInOneLine(run, file);
            assertThat(run.out()).doesNotContain("ended");
            try (var left = Files.list(folder)) {
                assertThat(left.filter(p -> p.getFileName().toString().startsWith("telemetry.csv"))).isEmpty();
            }
        } finally {
            Files.setPosixFilePermissions(ro, PosixFilePermissions.fromString("rwxr-xr-x"));
        }
    }

    /** A probe write: true when a file can be created in {@code folder}. */
    static boolean creates(Path folder) {
        try {
            Files.delete(Files.createFile(folder.resolve("weft-probe-" + ProcessHandle.current().pid())));
            return true;
        } catch (IOException e) {
            return false;
        }
    }

    @Test
    @Timeout(120)
    void anExistingFileDirectlyThroughDotDotOrALinkIsRefusedUnlessReplacingIsAsked() throws Exception {
        Path sub = Files.createDirectories(dir.resolve("sub"));
        Path existing = dir.resolve("rows.csv");
        byte[] precious = "precious rows\n\u00e9\n".getBytes(StandardCharsets.UTF_8);
        Files.write(existing, precious);
        Files.createSymbolicLink(dir.resolve("link.csv"), existing);
        String real = existing.toRealPath().toString();
        for (String named : List.of("rows.csv", "sub/../rows.csv", "link.csv")) {
            Path cfg = config("  file: " + named + "\n");
            InspectCommandTest.Run check = InspectCommandTest.weft("check", cfg.toString(), "--runs", "20");
            assertRefusedInOneLine(check, real, "exists", "--overwrite", "telemetry.overwrite: true");
            InspectCommandTest.Run run = InspectCommandTest.weft("run", cfg.toString(), "--duration", "0.3");
            assertRefusedInOneLine(run, real, "exists");
            assertThat(Files.readAllBytes(existing)).as(named).isEqualTo(precious);
            assertThat(dir.resolve("rows.csv.incomplete")).doesNotExist();
            // check --overwrite checks as run --overwrite would run: no refusal for that reason
            InspectCommandTest.Run checkOver = InspectCommandTest.weft("check", cfg.toString(), "--runs", "20",
                    "--overwrite");
            assertThat(checkOver.err()).doesNotContain("telemetry.file");
            assertThat(checkOver.out()).contains("telemetry      " + real + " (replaced when the run ends)");
        }
        assertThat(sub).isEmptyDirectory();

        // --overwrite on the command line, through the link: the file it points to is replaced
        InspectCommandTest.Run over = InspectCommandTest.weft("run", config("  file: link.csv\n").toString(),
                "--duration", "0.5", "--overwrite");
        assertReplaced(over, existing);
        assertThat(Files.isSymbolicLink(dir.resolve("link.csv"))).isTrue();

        // telemetry.overwrite: true in the configuration, through ../
        Files.write(existing, precious);
        InspectCommandTest.Run flag = InspectCommandTest.weft("run",
                config("  file: sub/../rows.csv\n  overwrite: true\n").toString(), "--duration", "0.5");
        assertReplaced(flag, existing);
    }

    private static void assertReplaced(InspectCommandTest.Run r, Path file) throws IOException {
        assertThat(r.exit()).as(r.out() + r.err()).isZero();
        long ticks = ticks(r.out());
        assertThat(ticks).isPositive();
        List<String> rows = Files.readAllLines(file);
        assertThat(rows.get(0)).startsWith("tick,time_s,");
        assertThat(rows).hasSize((int) ticks + 1);
        assertThat(r.out()).contains("telemetry: " + ticks + " rows handed over, " + ticks + " written, 0 lost");
        assertThat(file.resolveSibling(file.getFileName() + ".incomplete")).doesNotExist();
        assertNoStackTrace(r.out() + r.err());
    }

    private static long ticks(String out) {
        Matcher m = Pattern.compile("after (\\d+) ticks").matcher(out);
        assertThat(m.find()).as(out).isTrue();
        return Long.parseLong(m.group(1));
    }

    /**
     * The file fills up during the run, for real: a file-size limit ({@code ulimit -f}, 100 KiB)
     * on a child JVM running {@code weft run --arm} makes a write fail part-way with EFBIG, as a
     * full disk fails with ENOSPC. The loop stops under the telemetry cause; the end summary has
     * the counts and the failure; the partial file holds exactly the rows counted as written.
     */
    @Test
    @Timeout(120)
    void aFileThatFillsUpDuringTheRunStopsTheRobotAndTheSummaryCountsEveryRow() throws Exception {
        Path cfg = config("  file: rows.csv\n");
        // ONNX Runtime would copy its native library (24 MB) to a temporary file under the same
        // limit; it loads a copy made here instead
        Path lib = Files.createDirectories(dir.resolve("native"));
        for (String name : List.of("libonnxruntime.so", "libonnxruntime4j_jni.so")) {
            try (var in = ai.onnxruntime.OrtEnvironment.class.getResourceAsStream(
                    "/ai/onnxruntime/native/linux-x64/" + name)) {
                assumeTrue(in != null, "needs ONNX Runtime's linux-x64 libraries");
                Files.copy(in, lib.resolve(name));
            }
        }
        String javaBin = Path.of(System.getProperty("java.home"), "bin", "java").toString();
        String cmd = "ulimit -f 100 && exec '" + javaBin + "' -Donnxruntime.native.path='" + lib + "' -cp '"
                + System.getProperty("java.class.path") + "' " + WeftCommand.class.getName() + " run '" + cfg
                + "' --arm --warmup 0 --duration 6";
        Process p = new ProcessBuilder("bash", "-c", cmd).redirectErrorStream(true).start();
        String out = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertThat(p.waitFor(60, TimeUnit.SECONDS)).isTrue();
        assertThat(p.exitValue()).as(out).isEqualTo(WeftCommand.VERDICT_FAILED);
        assertNoStackTrace(out);
        long ticks = ticks(out);
        Matcher m = Pattern.compile("telemetry: (\\d+) rows handed over, (\\d+) written, (\\d+) lost\\n").matcher(out);
        assertThat(m.find()).as(out).isTrue();
        long handed = Long.parseLong(m.group(1));
        long written = Long.parseLong(m.group(2));
        long lost = Long.parseLong(m.group(3));
        assertThat(handed).as(out).isEqualTo(ticks);
        assertThat(written + lost).isEqualTo(handed);
        assertThat(lost).isPositive();
        assertThat(out).contains("stopped by: telemetry write failed (the telemetry recorder could not write to "
                + dir.toRealPath().resolve("rows.csv") + ")");
        assertThat(out).containsPattern("telemetry failed: could not write .*rows\\.csv\\.incomplete: File too large");
        Path partial = dir.resolve("rows.csv.incomplete");
        assertThat(dir.resolve("rows.csv")).doesNotExist();
        byte[] bytes = Files.readAllBytes(partial);
        assertThat(bytes[bytes.length - 1]).isEqualTo((byte) '\n');
        List<String> rows = Files.readAllLines(partial);
        assertThat(rows).hasSize((int) written + 1);
        int columns = rows.get(0).split(",").length;
        for (String row : rows) {
            assertThat(row.split(",")).as(row).hasSize(columns);
        }
    }
}
