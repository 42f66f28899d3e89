package dev.weft.runtime.cli;

import static org.assertj.core.api.Assertions.assertThat;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import dev.weft.onnxkit.PolicyModels;
import java.net.InetSocketAddress;
import java.nio.ByteBuffer;
import java.nio.channels.DatagramChannel;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class DryRunCommandTest {

    @TempDir
    Path dir;

    private Path config(String port) throws Exception {
        Files.write(dir.resolve("ramp.onnx"), PolicyModels.rampPolicy(8, 0.001));
        return Files.writeString(dir.resolve("dry.yaml"), """
                robot:
                  name: hand-check
                  joints:
                    - {name: x, position: {min: -2, max: 2}, velocity: 1.5, acceleration: 10, jerk: 200}
                timing:
                  control_period: 0.01
                  query: {schedule: fixed, every_ticks: 2}
                policy:
                  model: ramp.onnx
                  observation_size: 1
                  inputs:
                    obs: {source: observation}
                  output: {layout: 1xKxD}
                watchdog:
                  observation_age_max: 0.05
                  inference_latency_max: 0.05
                  overruns_max: 5
                arming:
                  pose_distance_max: 0.5
                  ramp_time: 0.2
                source: {kind: embedded}
                port: %s
                recording:
                  time: time
                  observation: [q.x]
                  action: [a.x]
                gates:
                  rms_error_max: 0.05
                """.formatted(port));
    }

    private Path recording(int samples) throws Exception {
        StringBuilder b = new StringBuilder("time,q.x,a.x\n");
        for (int k = 0; k < samples; k++) {
            double q = 0.3 * Math.sin(0.5 * k * 0.01);
            b.append(k * 0.01).append(',').append(q).append(',').append(q).append('\n');
        }
        return Files.writeString(dir.resolve("wave.csv"), b);
    }

    @Test
    void aRecordingRunsToAPassingVerdictWithSummaryAndReport() throws Exception {
        Path cfg = config("{kind: discard}");
        Path rec = recording(400);
        Path out = dir.resolve("out");
        InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", out.toString(), "--latency-ticks", "2");
        assertThat(r.err()).isEmpty();
        assertThat(r.exit()).as(r.out()).isZero();
        assertThat(r.out()).startsWith(Caution.LINE_1).contains("PASS      wave.csv: 400 ticks, 0 stops, 0 bound violations");
        JsonNode s = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
        for (String key : List.of("ticks", "commands", "telemetry_rows", "bound_violations", "rms_error", "max_error",
                "limit_active", "stale_dropped", "starved_ticks", "stops", "inference_ms", "verdict", "gates")) {
            assertThat(s.has(key)).as(key).isTrue();
        }
        assertThat(s.get("ticks").asLong()).isEqualTo(400);
        assertThat(s.get("commands").asLong()).isEqualTo(400);
        assertThat(s.get("telemetry_rows").asLong()).isEqualTo(400);
        assertThat(s.get("telemetry_rows_handed").asLong()).isEqualTo(400);
        assertThat(s.get("telemetry_rows_lost").asLong()).isZero();
        assertThat(Files.readAllLines(out.resolve("telemetry.csv"))).hasSize(401);
        assertThat(out.resolve("telemetry.csv.incomplete")).doesNotExist();
        assertThat(s.get("latency_ticks").asLong()).isEqualTo(2);
        assertThat(s.get("verdict").asText()).isEqualTo("pass");
        assertThat(s.get("limit_active").has("jerk")).isTrue();
        assertThat(s.get("gates").findValuesAsText("name")).contains("bound_violations", "armed", "rms_error.x");
        String html = Files.readString(out.resolve("report.html"));
        assertThat(html).contains("PASS");
        assertThat(html).contains("<th scope=\"row\">telemetry rows handed to the recorder</th><td class=\"field\">"
                + "telemetryHanded</td><td>400</td>");
        assertThat(html).contains("<td class=\"field\">telemetryLost</td><td>0</td>");
        // a second run into the same folder replaces the dry run's own files
        InspectCommandTest.Run again = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", out.toString(), "--latency-ticks", "2");
        assertThat(again.exit()).as(again.out() + again.err()).isZero();
        assertThat(Files.readAllLines(out.resolve("telemetry.csv"))).hasSize(401);
        assertThat(html.indexOf("not a safety-rated")).isLessThan(html.indexOf("<svg"));
    }

    @Test
    void aReportFolderThatTakesNoFilesIsRefusedInOneLine() throws Exception {
        Path cfg = config("{kind: discard}");
        Path rec = recording(100);
        Path ro = Files.createDirectories(dir.resolve("ro"));
        Files.setPosixFilePermissions(ro, java.nio.file.attribute.PosixFilePermissions.fromString("r-xr-xr-x"));
        try {
            Path out = ro;
            if (TelemetryCommandTest.creates(ro)) {
                // root ignores permission bits; sysfs refuses new files and folders even to root
                out = Path.of("/sys/weft-report");
                org.junit.jupiter.api.Assumptions.assumeTrue(!TelemetryCommandTest.creates(Path.of("/sys")),
                        "permissions are not enforced here (root) and no folder refuses root");
            }
            InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                    "--report", out.toString(), "--latency-ticks", "2");
            assertThat(r.exit()).as(r.out() + r.err()).isEqualTo(2);
            assertThat(r.err().strip().lines()).as(r.err()).hasSize(1);
            assertThat(r.err()).startsWith("weft dry-run: --report: ").contains(out.toString());
            assertThat(r.out() + r.err()).doesNotContain("\tat ").doesNotContain("Exception");
        } finally {
            Files.setPosixFilePermissions(ro, java.nio.file.attribute.PosixFilePermissions.fromString("rwxr-xr-x"));
        }
    }

    @Test
    void closedLoopObservesThePlantWeftDrives() throws Exception {
        Path cfg = config("{kind: discard}");
        Path rec = recording(300);
        Path out = dir.resolve("closed");
        InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", out.toString(), "--closed-loop", "--latency-ticks", "1");
        InspectCommandTest.Run open = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", dir.resolve("open").toString(), "--latency-ticks", "1");
        assertThat(open.exit()).isZero();
        JsonNode s = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
        assertThat(s.get("mode").asText()).isEqualTo("closed_loop");
        assertThat(s.get("bound_violations").asLong()).isZero();
        // the ramp policy plans from whatever it observes: on the recording it follows the sine
        // (the open-loop run passes its gate); on the plant it only ever sees weft's own commands,
        // so it drifts off the recorded reference and the error gate says so
        assertThat(r.exit()).as(r.out()).isEqualTo(1);
        assertThat(r.out()).contains("gate rms_error.x failed");
        assertThat(Files.readAllLines(out.resolve("commands.csv")))
                .isNotEqualTo(Files.readAllLines(dir.resolve("open/commands.csv")));
    }

    @Test
    void realtimePacesTheLoopAndReportsPeriodError() throws Exception {
        Path cfg = config("{kind: discard}");
        Path rec = recording(50);
        Path out = dir.resolve("rt");
        InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", out.toString(), "--realtime");
        assertThat(r.exit()).as(r.out() + r.err()).isIn(0, 1);
        JsonNode s = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
        assertThat(s.get("realtime").asBoolean()).isTrue();
        assertThat(s.get("latency_ticks").asLong()).isEqualTo(-1);
        assertThat(s.has("period_error_ms")).isTrue();
        assertThat(s.get("period_error_ms").get("max").asDouble()).isGreaterThanOrEqualTo(0.0);
        assertThat(s.get("ticks").asLong()).isEqualTo(50);
    }

    @Test
    void aGateFromTheCommandLineCanFailTheRun() throws Exception {
        Path cfg = config("{kind: discard}");
        Path rec = recording(300);
        InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", dir.resolve("strict").toString(), "--gate", "rms_error_max=0.000001");
        assertThat(r.exit()).as(r.out()).isEqualTo(1);
        assertThat(r.out()).contains("FAIL      wave.csv").contains("gate rms_error.x failed");
        InspectCommandTest.Run bad = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", dir.resolve("x").toString(), "--gate", "rms=1");
        assertThat(bad.exit()).isEqualTo(2);
        assertThat(bad.err()).startsWith("weft dry-run: --gate: rms: no such gate");
    }

    /** The same wave as {@link #recording} in HDF5, with a 30 Hz rgb8 camera of 6 × 8 frames. */
    private Path hdf5Recording(int samples, boolean signedFrames) {
        Path p = dir.resolve("wave.h5");
        double[] t = new double[samples];
        double[] q = new double[samples];
        for (int k = 0; k < samples; k++) {
            t[k] = k * 0.01;
            q[k] = 0.3 * Math.sin(0.5 * k * 0.01);
        }
        int frames = (int) Math.ceil(samples * 0.01 * 30);
        double[] ft = new double[frames];
        for (int i = 0; i < frames; i++) {
            ft[i] = i / 30.0;
        }
        try (io.jhdf.WritableHdfFile w = io.jhdf.HdfFile.write(p)) {
            w.putDataset("time", t);
            w.putDataset("q.x", q);
            w.putDataset("a.x", q);
            io.jhdf.api.WritableGroup wrist = w.putGroup("cam").putGroup("wrist");
            io.jhdf.api.DatasetCreationOptions.Builder b = io.jhdf.api.DatasetCreationOptions.builder();
            wrist.putDataset("rgb", new byte[frames][6][8][3], (signedFrames ? b : b.unsigned()).build());
            wrist.putDataset("t", ft);
        }
        return p;
    }

    private Path configWithCamera() throws Exception {
        Path cfg = config("{kind: discard}");
        return Files.writeString(cfg, Files.readString(cfg).replace("  action: [a.x]\n",
                "  action: [a.x]\n  cameras:\n    wrist: {frames: /cam/wrist/rgb, time: /cam/wrist/t, "
                        + "pixel_format: rgb8}\n"));
    }

    @Test
    void aRecordingsCamerasAreReadAndCheckedAndNotReplayedWithoutACamerasSection() throws Exception {
        Path cfg = configWithCamera();
        Path rec = hdf5Recording(400, false);
        InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", dir.resolve("out").toString(), "--latency-ticks", "2");
        assertThat(r.exit()).as(r.out() + r.err()).isZero();
        // 400 samples at 100 Hz are 4 s: 120 frames at 30 Hz, the last at 119/30 = 3.967 s
        assertThat(r.out()).contains("camera    wrist: 120 frames 6 × 8 rgb8, 0.000 s to 3.967 s; read and checked, "
                + "not replayed (no cameras.wrist in the configuration)").contains("PASS      wave.h5: 400 ticks");

        Path bad = hdf5Recording(400, true);
        InspectCommandTest.Run refused = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording",
                bad.toString(), "--report", dir.resolve("out2").toString());
        assertThat(refused.exit()).isEqualTo(2);
        assertThat(refused.err()).isEqualTo("weft dry-run: " + bad + " (dataset /cam/wrist/rgb): holds signed 8-bit "
                + "integer values; recording.cameras.wrist.frames needs unsigned 8-bit integers (uint8), one byte per "
                + "channel" + System.lineSeparator());
        assertThat(dir.resolve("out2")).doesNotExist();
    }

    @Test
    void aMalformedRecordingIsRefusedNamingFileLineAndColumn() throws Exception {
        Path cfg = config("{kind: discard}");
        Path rec = Files.writeString(dir.resolve("bad.csv"), "time,q.x,a.x\n0.0,0.1,0.1\n0.01,oops,0.1\n");
        InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", dir.resolve("o").toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.err()).isEqualTo("weft dry-run: " + rec + " (line 3, column \"q.x\"): is not a decimal number: oops"
                + System.lineSeparator());
    }

    @Test
    void aRecordingWithAGiantLineIsRefusedAsBadInputAfterOneMebibyte() throws Exception {
        Path cfg = config("{kind: discard}");
        // a sparse file: a 1.5 GB line of NUL bytes after a valid header, taking no disk space; the
        // reader must refuse it after 1 MiB instead of holding it (exit 2, could not run, not 1)
        Path rec = dir.resolve("giant.csv");
        Files.writeString(rec, "time,q.x,a.x\n");
        try (java.io.RandomAccessFile f = new java.io.RandomAccessFile(rec.toFile(), "rw")) {
            f.setLength(1_500_000_000L);
        }
        InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                "--report", dir.resolve("o").toString());
        assertThat(r.exit()).as(r.out() + r.err()).isEqualTo(2);
        assertThat(r.err()).isEqualTo("weft dry-run: " + rec + " (line 2): is longer than 1048576 bytes; a recording"
                + " line may hold at most 1 MiB" + System.lineSeparator());
    }

    @Test
    void aLivePortIsNeverOpenedAndTheRunSaysSo() throws Exception {
        try (DatagramChannel rx = DatagramChannel.open()) {
            rx.bind(new InetSocketAddress("127.0.0.1", 0));
            rx.configureBlocking(false);
            int port = ((InetSocketAddress) rx.getLocalAddress()).getPort();
            Path cfg = config("{kind: udp, options: {port: " + port + "}}");
            Path rec = recording(200);
            InspectCommandTest.Run r = InspectCommandTest.weft("dry-run", cfg.toString(), "--recording", rec.toString(),
                    "--report", dir.resolve("live").toString());
            assertThat(r.exit()).as(r.out() + r.err()).isZero();
            assertThat(r.out()).contains("the configured port 'udp' is live: the dry run sends nothing to it and records"
                    + " the commands to commands.csv instead");
            Thread.sleep(100);
            assertThat(rx.receive(ByteBuffer.allocate(2048))).as("nothing reached the live port").isNull();
            assertThat(Files.readAllLines(dir.resolve("live/commands.csv"))).hasSize(201);
        }
    }
}
