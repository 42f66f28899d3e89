package dev.weft.runtime.fuzz;

import static org.assertj.core.api.Assertions.assertThat;

import com.code_intelligence.jazzer.junit.FuzzTest;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.recording.Columns;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.RecordingSpec;
import dev.weft.runtime.recording.Recordings;
import dev.weft.runtime.udp.DatagramCodec;
import dev.weft.runtime.udp.DatagramStatus;
import dev.weft.runtime.udp.DatagramTag;
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
    /** The datagram target's key (32 bytes, 0x00 to 0x1f). */
    private static final byte[] KEY = new byte[32];
    private static final DatagramTag TAG;

    static {
        for (int i = 0; i < KEY.length; i++) {
            KEY[i] = (byte) i;
        }
        TAG = new DatagramTag(KEY);
    }
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
     * Datagrams of both kinds and both versions. The first byte steers: bit 0 set writes the right
     * CRC-32C (unkeyed) or HMAC-SHA-256 tag (keyed) over the rest before decoding, so the fuzzer
     * reaches the checks behind them; bit 1 set decodes with the fixed test key (version 2); the
     * datagram is the bytes after it, decoded through {@link DatagramCodec#decodeOne}, whose
     * contract is a status for any bytes at all.
     */
    @FuzzTest(maxDuration = "30s")
    void datagram(byte[] input) {
        if (input.length == 0) {
            return;
        }
        boolean seal = (input[0] & 1) != 0;
        byte[] key = (input[0] & 2) != 0 ? KEY : null;
        byte[] bytes = java.util.Arrays.copyOfRange(input, 1, input.length);
        if (seal && key == null && bytes.length >= 4) {
            CRC32C crc = new CRC32C();
            crc.update(bytes, 0, bytes.length - 4);
            ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN).putInt(bytes.length - 4, (int) crc.getValue());
        } else if (seal && key != null && bytes.length >= DatagramTag.LENGTH) {
            TAG.compute(ByteBuffer.wrap(bytes), 0, bytes.length - DatagramTag.LENGTH, bytes,
                    bytes.length - DatagramTag.LENGTH);
        }
        byte[] before = bytes.clone();
        DatagramStatus s = DatagramCodec.decodeOne(bytes, key);
        assertThat(s).isNotNull();
        assertThat(bytes).as("the datagram is not modified").isEqualTo(before);
    }
}
