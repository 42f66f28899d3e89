package dev.weft.examples.demo;

import java.io.IOException;
import java.math.BigDecimal;
import java.math.RoundingMode;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.stream.Stream;

/**
 * The demo's recording files: one CSV per episode, a header row, comma separated, {@code \n}
 * line ends. Columns: {@code time} (s), {@code q.<joint>} (rad), {@code dq.<joint>} (rad/s),
 * {@code a.<joint>} (rad, the commanded position), joints in action order. Every value is written
 * with exactly six decimals, rounded half-even from the exact binary value (through
 * {@link BigDecimal}, so the text does not depend on the JDK's float formatting).
 */
public final class RecordingCsv {

    /** Decimals of every value. */
    public static final int DECIMALS = 6;

    private RecordingCsv() {
    }

    /** The header row, without the line end. */
    public static String header() {
        StringBuilder b = new StringBuilder("time");
        for (String prefix : List.of("q.", "dq.", "a.")) {
            for (String joint : DipCell.jointNames()) {
                b.append(',').append(prefix).append(joint);
            }
        }
        return b.toString();
    }

    /** Observation column names in observation order: positions, then velocities. */
    public static List<String> observationColumns() {
        return Stream.concat(DipCell.jointNames().stream().map(j -> "q." + j),
                DipCell.jointNames().stream().map(j -> "dq." + j)).toList();
    }

    /** Action column names in action order. */
    public static List<String> actionColumns() {
        return DipCell.jointNames().stream().map(j -> "a." + j).toList();
    }

    /** The file's text. */
    public static String format(Episode e) {
        StringBuilder b = new StringBuilder(e.length() * 190);
        b.append(header()).append('\n');
        for (int i = 0; i < e.length(); i++) {
            b.append(number(e.time(i)));
            for (int k = 0; k < DipCell.D; k++) {
                b.append(',').append(number(e.q(i, k)));
            }
            for (int k = 0; k < DipCell.D; k++) {
                b.append(',').append(number(e.dq(i, k)));
            }
            for (int k = 0; k < DipCell.D; k++) {
                b.append(',').append(number(e.a(i, k)));
            }
            b.append('\n');
        }
        return b.toString();
    }

    /** A value with {@link #DECIMALS} decimals; {@code -0.000000} is written {@code 0.000000}. */
    static String number(double v) {
        if (!Double.isFinite(v)) {
            throw new IllegalArgumentException("not a finite value: " + v);
        }
        return new BigDecimal(v).setScale(DECIMALS, RoundingMode.HALF_EVEN).toPlainString();
    }

    /** Writes {@code e} to {@code file} (UTF-8). */
    public static void write(Episode e, Path file) throws IOException {
        Files.writeString(file, format(e), StandardCharsets.UTF_8);
    }

    /**
     * Reads a file this class wrote (or any file with the same header).
     *
     * @throws IOException when the file cannot be read
     * @throws IllegalArgumentException naming the file and line when the header or a row is malformed
     */
    public static Episode read(Path file) throws IOException {
        List<String> lines = Files.readAllLines(file, StandardCharsets.UTF_8);
        String where = file.getFileName().toString();
        if (lines.isEmpty() || !lines.get(0).equals(header())) {
            throw new IllegalArgumentException(where + " (line 1): expected the header " + header());
        }
        int n = lines.size() - 1;
        int d = DipCell.D;
        double[] t = new double[n];
        double[] q = new double[n * d];
        double[] dq = new double[n * d];
        double[] a = new double[n * d];
        for (int i = 0; i < n; i++) {
            String[] cells = lines.get(i + 1).split(",", -1);
            if (cells.length != 1 + 3 * d) {
                throw new IllegalArgumentException(where + " (line " + (i + 2) + "): expected " + (1 + 3 * d)
                        + " values, got " + cells.length);
            }
            try {
                t[i] = Double.parseDouble(cells[0]);
                for (int k = 0; k < d; k++) {
                    q[i * d + k] = Double.parseDouble(cells[1 + k]);
                    dq[i * d + k] = Double.parseDouble(cells[1 + d + k]);
                    a[i * d + k] = Double.parseDouble(cells[1 + 2 * d + k]);
                }
            } catch (NumberFormatException ex) {
                throw new IllegalArgumentException(where + " (line " + (i + 2) + "): not a number: " + ex.getMessage());
            }
        }
        String name = where.endsWith(".csv") ? where.substring(0, where.length() - 4) : where;
        return new Episode(name, t, q, dq, a);
    }
}
