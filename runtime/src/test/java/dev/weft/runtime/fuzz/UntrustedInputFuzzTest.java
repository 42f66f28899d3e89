package dev.weft.runtime.fuzz;

import static org.assertj.core.api.Assertions.assertThat;

import com.code_intelligence.jazzer.junit.FuzzTest;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.recording.Columns;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.RecordingSpec;
import dev.weft.runtime.recording.Recordings;
import dev.weft.runtime.udp.DatagramCodec;
import dev.weft.runtime.udp.DatagramStatus;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Optional;
import java.util.zip.CRC32C;

/**
 * Fuzz targets for the three readers of untrusted input: the configuration parser, the CSV
 * recording reader and the datagram codec. Each input must end in a result or in the documented
 * bad-input exception ({@link BadInputException}, or a rejection status for a datagram); any other
 * exception or error is a finding.
 *
 * <p>Run without {@code JAZZER_FUZZ}, as in {@code mvn verify}, each target replays its committed
 * corpus under {@code src/test/resources/dev/weft/runtime/fuzz/UntrustedInputFuzzTestInputs/}.
 * {@code .ci/run} then fuzzes each for 30 s with {@code JAZZER_FUZZ=1} (one target per Maven run,
 * as Jazzer fuzzes one at a time); a finding is written into that folder and fails the run.
 */
class UntrustedInputFuzzTest {

    private static final Path DIR = tempDir();
    private static final Path RECORDING = DIR.resolve("fuzz.csv");
    private static final RecordingSpec SPEC = new RecordingSpec(Optional.empty(), "time",
            Columns.list(List.of("q.a", "q.b")), Columns.list(List.of("a.a", "a.b")), 2, List.of("a", "b"));

    private static Path tempDir() {
        try {
            Path d = Files.createTempDirectory("weft-fuzz");
            d.toFile().deleteOnExit();
            return d;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    @FuzzTest(maxDuration = "30s")
    void configurationText(byte[] input) {
        String yaml = new String(input, StandardCharsets.UTF_8);
        try {
            WeftConfig c = WeftConfig.parse(yaml, DIR, "fuzz.yaml");
            // a configuration that parses has the invariants its readers rely on
            assertThat(c.timing().controlPeriod()).isPositive().isFinite();
            assertThat(c.robot().joints()).isNotEmpty();
        } catch (BadInputException expected) {
            assertThat(expected.problems()).isNotEmpty();
        }
    }

    @FuzzTest(maxDuration = "30s")
    void csvRecording(byte[] input) throws IOException {
        Files.write(RECORDING, input);
        try {
            Recording r = Recordings.read(RECORDING, SPEC);
            assertThat(r.length()).isPositive();
            for (int i = 1; i < r.length(); i++) {
                assertThat(r.time(i)).isGreaterThan(r.time(i - 1));
            }
        } catch (BadInputException expected) {
            assertThat(expected.problems()).isNotEmpty();
        }
    }

    /**
     * Datagrams of both kinds. The first byte steers: bit 0 set writes the right CRC-32C over the
     * rest before decoding (so the fuzzer reaches the checks behind the CRC as well), bit 1 set
     * decodes a command datagram instead of a state datagram, bits 2 to 4 are the expected count
     * (0 to 7 values; 1 to 8 joints); the datagram is the bytes after it.
     */
    @FuzzTest(maxDuration = "30s")
    void datagram(byte[] input) {
        if (input.length == 0) {
            return;
        }
        boolean seal = (input[0] & 1) != 0;
        boolean command = (input[0] & 2) != 0;
        int count = (input[0] >> 2) & 7;
        byte[] bytes = java.util.Arrays.copyOfRange(input, 1, input.length);
        if (seal && bytes.length >= 4) {
            CRC32C crc = new CRC32C();
            crc.update(bytes, 0, bytes.length - 4);
            ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN).putInt(bytes.length - 4, (int) crc.getValue());
        }
        DatagramCodec codec = new DatagramCodec();
        ByteBuffer src = ByteBuffer.wrap(bytes);
        if (command) {
            CommandFrame out = new CommandFrame(count + 1);
            DatagramStatus s = codec.decodeCommand(src, out);
            if (s == DatagramStatus.ACCEPTED) {
                for (int i = 0; i <= count; i++) {
                    assertThat(out.positions[i]).isFinite();
                    assertThat(out.velocities[i]).isFinite();
                }
            }
        } else {
            double[] out = new double[count];
            DatagramStatus s = codec.decodeState(src, count, out);
            if (s == DatagramStatus.ACCEPTED) {
                for (double v : out) {
                    assertThat(v).isFinite();
                }
            }
        }
        assertThat(src.position()).isZero();
        assertThat(src.limit()).isEqualTo(bytes.length);
    }
}
