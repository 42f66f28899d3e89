package dev.weft.runtime.recording;

import static org.assertj.core.api.Assertions.assertThat;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import org.junit.jupiter.api.Test;

/**
 * The CSV reader's numbers against an outside reference: decimal-reference.csv (in the test
 * resources) holds decimal texts and, in its *_bits columns, the IEEE 754 binary64 bit patterns
 * that CPython 3.11's {@code float()} gave for each text (correctly rounded, round half to even;
 * written by make_decimal_reference.py beside it). Among the texts are halfway cases (2^53 + 1),
 * the smallest normal and subnormal numbers, the largest double, and texts longer than 17 digits.
 * The reader must give the same bits for every value. The *_bits columns are hexadecimal text that
 * the spec does not name, so the file also shows that unnamed columns are not parsed.
 */
class DecimalReferenceTest {

    @Test
    void everyValueHasTheBitsCPythonGaveForItsText() throws Exception {
        Path file = Path.of("src", "test", "resources", "recording", "decimal-reference.csv");
        RecordingSpec spec = new RecordingSpec(Optional.empty(), "time", Columns.list(List.of("a", "b")),
                Columns.list(List.of("c")), 2, List.of("only"));
        Recording r = Recordings.read(file, spec);

        List<String[]> rows = new ArrayList<>();
        for (String line : Files.readAllLines(file)) {
            if (!line.startsWith("#") && !line.startsWith("time,")) {
                rows.add(line.split(","));
            }
        }
        assertThat(rows).hasSize(120);
        assertThat(r.length()).isEqualTo(rows.size());
        double[] obs = new double[2];
        double[] act = new double[1];
        for (int i = 0; i < rows.size(); i++) {
            String[] f = rows.get(i);
            r.observation(i, obs);
            r.action(i, act);
            assertThat(bits(r.time(i))).as("time %s", f[0]).isEqualTo(f[4]);
            assertThat(bits(obs[0])).as("a %s", f[1]).isEqualTo(f[5]);
            assertThat(bits(obs[1])).as("b %s", f[2]).isEqualTo(f[6]);
            assertThat(bits(act[0])).as("c %s", f[3]).isEqualTo(f[7]);
        }
    }

    private static String bits(double v) {
        return String.format("%016x", Double.doubleToRawLongBits(v));
    }
}
