package dev.weft.runtime.cli;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.udp.DatagramCodec;
import dev.weft.runtime.udp.DatagramStatus;
import java.net.InetSocketAddress;
import java.net.StandardSocketOptions;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.channels.DatagramChannel;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.Timeout;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code weft run} end to end: a generated ONNX policy, the simulated plant as the source, the
 * UDP port sending to a receiver on loopback. The receiver must see every command the loop sent,
 * in order, one per tick.
 */
class RunCommandTest {

    @TempDir
    Path dir;

    static final int JOINTS = 3;

    private Path writeConfig(int udpPort, String extra) throws Exception {
        Files.write(dir.resolve("goal.onnx"), PolicyModels.goalPolicy(JOINTS, 50, new double[] {0.3, -0.2, 0.1}));
        String yaml = """
                robot:
                  name: loopback-bench
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
                  # a shared CI machine can hold a thread off the CPU for several 2 ms periods
                  # inside a tick; a robot computer keeps the default of 3
                  stall_periods: 50
                arming:
                  pose_distance_max: 0.5
                  ramp_time: 0.5
                source:
                  kind: sim
                port:
                  kind: udp
                  options:
                    host: 127.0.0.1
                    port: %d
                    queue: 1024
                telemetry:
                  file: telemetry.csv
                """.formatted(udpPort) + extra;
        return Files.writeString(dir.resolve("run.yaml"), yaml);
    }

    @Test
    @Timeout(60)
    void armedRunSendsOneDatagramPerTickInOrderToALoopbackReceiver() throws Exception {
        try (Receiver rx = new Receiver()) {
            Path cfg = writeConfig(rx.port(), "");
            List<Long> sequences = rx.sequences;
            List<Long> ticks = rx.ticks;
            List<Byte> states = rx.states;
            InspectCommandTest.Run r = InspectCommandTest.weft("run", cfg.toString(), "--arm", "--duration", "2",
                    "--status-every", "0.5");
            rx.stopAfter(300);
            assertThat(r.out()).startsWith(Caution.LINE_1);
            assertThat(r.out()).contains("armed: soft start toward the plan");
            assertThat(r.exit()).as(r.out() + r.err()).isZero();
            Matcher m = Pattern.compile("after (\\d+) ticks").matcher(r.out());
            assertThat(m.find()).as(r.out()).isTrue();
            long ran = Long.parseLong(m.group(1));
            assertThat(ran).isGreaterThan(500);
            assertThat(sequences).as("one datagram per tick; " + r.out()).hasSize((int) ran);
            for (int i = 0; i < sequences.size(); i++) {
                assertThat(sequences.get(i)).isEqualTo(i + 1L);
            }
            for (int i = 1; i < ticks.size(); i++) {
                assertThat(ticks.get(i)).isGreaterThan(ticks.get(i - 1));
            }
            assertThat(states).contains(CommandFrame.STATE_ARMED);
            // the telemetry file has one row per tick as well, and the end line counts them
            assertThat(Files.readAllLines(dir.resolve("telemetry.csv"))).hasSize((int) ran + 1);
            assertThat(r.out()).contains("telemetry: " + ran + " rows handed over, " + ran + " written, 0 lost");
            assertThat(r.out()).contains("telemetry in " + dir.toRealPath().resolve("telemetry.csv"));
            assertThat(dir.resolve("telemetry.csv.incomplete")).doesNotExist();
            assertThat(r.out()).containsPattern("telemetry \\d+ handed \\d+ written 0 lost");
        }
    }

    /**
     * Invariant 5 on a signal: a separate JVM runs {@code weft run --arm} until it gets SIGTERM
     * (what Ctrl-C's SIGINT also leads to: the shutdown hook); the telemetry file must then hold
     * one row for every command the receiver got.
     */
    @Test
    @Timeout(90)
    void aSignalStopsTheRobotAndEveryTickReachesTheTelemetryFile() throws Exception {
        try (Receiver rx = new Receiver()) {
            Path cfg = writeConfig(rx.port(), "");
            List<Long> sequences = rx.sequences;
            List<Long> ticks = rx.ticks;
            List<Byte> states = rx.states;
            String javaBin = Path.of(System.getProperty("java.home"), "bin", "java").toString();
            Process p = new ProcessBuilder(javaBin, "-cp", System.getProperty("java.class.path"),
                    WeftCommand.class.getName(), "run", cfg.toString(), "--arm")
                    .redirectErrorStream(true).redirectOutput(dir.resolve("child.log").toFile()).start();
            Path telemetry = dir.resolve("telemetry.csv");
            // during the run the rows go to the partial file; it gets the final name at the end
            Path partial = dir.resolve("telemetry.csv.incomplete");
            long until = System.nanoTime() + 30_000_000_000L;
            while (System.nanoTime() < until && (!Files.exists(partial) || Files.size(partial) < 50_000)) {
                Thread.sleep(50);
            }
            assertThat(telemetry).as("the final name appears only when the run ends").doesNotExist();
            p.destroy();
            assertThat(p.waitFor(30, java.util.concurrent.TimeUnit.SECONDS)).isTrue();
            rx.stopAfter(300);
            String log = Files.readString(dir.resolve("child.log"));
            assertThat(log).contains("weft run: stopping (controlled stop, then flush)");
            List<String> rows = Files.readAllLines(telemetry);
            assertThat(partial).doesNotExist();
            assertThat(sequences.size()).as(log).isGreaterThan(100);
            assertThat(rows).as("a row for every command sent; " + log).hasSize(sequences.size() + 1);
            // the last rows are the controlled stop's: the robot ended at rest, disarmed
            assertThat(rows.get(rows.size() - 1)).as(log).contains(",disarmed,");
        }
    }

    @Test
    void withoutArmOnlyHoldCommandsGoOut() throws Exception {
        try (Receiver rx = new Receiver()) {
            Path cfg = writeConfig(rx.port(), "");
            List<Long> sequences = rx.sequences;
            List<Long> ticks = rx.ticks;
            List<Byte> states = rx.states;
            InspectCommandTest.Run r = InspectCommandTest.weft("run", cfg.toString(), "--duration", "0.5");
            rx.stopAfter(200);
            assertThat(r.exit()).as(r.out() + r.err()).isZero();
            assertThat(r.out()).contains("not armed: hold commands only");
            assertThat(states).isNotEmpty().containsOnly(CommandFrame.STATE_DISARMED);
        }
    }

    @Test
    void badConfigurationExitsTwoNamingTheKey() throws Exception {
        Path cfg = writeConfig(9, "");
        Files.writeString(cfg, Files.readString(cfg).replace("jerk: 120}", "jerk: -2}"));
        InspectCommandTest.Run r = InspectCommandTest.weft("run", cfg.toString());
        assertThat(r.exit()).isEqualTo(2);
        assertThat(r.err()).isEqualTo("weft run: 3 problems:" + System.lineSeparator()
                + "  robot.joints[0].jerk (line 4): must be > 0, got -2" + System.lineSeparator()
                + "  robot.joints[1].jerk (line 5): must be > 0, got -2" + System.lineSeparator()
                + "  robot.joints[2].jerk (line 6): must be > 0, got -2" + System.lineSeparator());
    }

    @Test
    void aKeyFileOthersCanReadIsRefusedByCheckAsByRunBeforeAnythingStarts() throws Exception {
        Path key = Files.writeString(dir.resolve("link.key"), "00112233445566778899aabbccddeeff"
                + "00112233445566778899aabbccddeeff\n");
        Files.setPosixFilePermissions(key, java.nio.file.attribute.PosixFilePermissions.fromString("rw-r--r--"));
        Path cfg = writeConfig(9, "");
        Files.writeString(cfg, Files.readString(cfg).replace("    queue: 1024\n", "    queue: 1024\n    key_file: link.key\n"));
        for (String command : new String[] {"check", "run"}) {
            InspectCommandTest.Run r = InspectCommandTest.weft(command, cfg.toString());
            assertThat(r.exit()).as(command + ": " + r.out() + r.err()).isEqualTo(2);
            assertThat(r.err()).as(command).contains("port.options.key_file: the key file " + key.toAbsolutePath()
                    + " has mode 0644").doesNotContain("\tat ");
            assertThat(r.out()).as(command).doesNotContain("armed");
        }
    }

    /** A loopback receiver of command datagrams on a thread of its own, in arrival order. */
    static final class Receiver implements AutoCloseable {
        final List<Long> sequences = new ArrayList<>();
        final List<Long> ticks = new ArrayList<>();
        final List<Byte> states = new ArrayList<>();
        private final DatagramChannel rx;
        private final Thread thread;
        private final ByteBuffer buf = ByteBuffer.allocateDirect(2048).order(ByteOrder.LITTLE_ENDIAN);
        private final DatagramCodec codec = new DatagramCodec();
        private final CommandFrame frame = new CommandFrame(JOINTS);

        Receiver() throws java.io.IOException {
            rx = DatagramChannel.open();
            rx.setOption(StandardSocketOptions.SO_RCVBUF, 4 << 20);
            rx.bind(new InetSocketAddress("127.0.0.1", 0));
            rx.configureBlocking(false);
            thread = new Thread(this::run, "test-receiver");
            thread.start();
        }

        int port() throws java.io.IOException {
            return ((InetSocketAddress) rx.getLocalAddress()).getPort();
        }

        /** Lets datagrams in flight arrive for {@code millis}, then stops and takes what is left. */
        void stopAfter(long millis) throws InterruptedException {
            Thread.sleep(millis);
            thread.interrupt();
            thread.join();
            try {
                while (takeOne()) {
                    Thread.onSpinWait();
                }
            } catch (java.io.IOException ignored) {
                // the test asserts on what arrived
            }
        }

        private void run() {
            try {
                while (!Thread.currentThread().isInterrupted()) {
                    if (!takeOne()) {
                        Thread.onSpinWait();
                    }
                }
            } catch (java.io.IOException e) {
                // closed: the test asserts on what arrived
            }
        }

        private boolean takeOne() throws java.io.IOException {
            buf.clear();
            if (rx.receive(buf) == null) {
                return false;
            }
            buf.flip();
            if (codec.decodeCommand(buf, frame) == DatagramStatus.ACCEPTED) {
                synchronized (sequences) {
                    sequences.add(codec.sequence());
                    ticks.add(frame.tick);
                    states.add(frame.state);
                }
            }
            return true;
        }

        @Override
        public void close() throws java.io.IOException {
            thread.interrupt();
            rx.close();
        }
    }
}
