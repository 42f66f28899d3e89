package dev.weft.runtime.recording;

import dev.weft.runtime.BadInputException;
import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.CharacterCodingException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;

/**
 * Reads a CSV recording line by line (the layout is described on {@link Recordings}). Values are
 * stored only while no problem has been found; after the first problem the rest of the file is
 * still checked, so that one reading reports every problem.
 */
final class CsvRecordingReader {

    /** The first bytes of every HDF5 file (the format signature), to name the mistake when one is read as CSV. */
    private static final byte[] HDF5_SIGNATURE = {(byte) 0x89, 'H', 'D', 'F', '\r', '\n', 0x1a, '\n'};

    /** How many header names a "the header has" list shows. */
    private static final int NAMES_SHOWN_MAX = 40;

    private static final int OK = 0;
    private static final int EMPTY = 1;
    private static final int SYNTAX = 2;
    private static final int NON_FINITE = 3;

    private CsvRecordingReader() {
    }

    static Recording read(Path file, String name, RecordingSpec spec) throws BadInputException {
        ProblemList problems = new ProblemList(name);
        int lineNo = 0;
        try (LineReader in = new LineReader(Files.newInputStream(file))) {
            String line;
            String[] header = null;
            while ((line = in.next()) != null) {
                lineNo++;
                if (lineNo == 1 && !line.isEmpty() && line.charAt(0) == '\uFEFF') {
                    line = line.substring(1);
                }
                if (!skipped(line)) {
                    header = line.split(",", -1);
                    break;
                }
            }
            if (header == null) {
                throw new BadInputException(name, lineNo == 0 ? "is empty; a CSV recording starts with a header row"
                        : "holds no header row, only comments and blank lines");
            }
            int headerLine = lineNo;
            String at = name + " (line " + headerLine + ")";
            String[] columns = headerNames(header, at, problems);
            Map<String, List<Integer>> byName = new HashMap<>();
            for (int i = 0; i < columns.length; i++) {
                byName.computeIfAbsent(columns[i], k -> new ArrayList<>()).add(i);
            }
            int timeIndex = find(spec.time(), "recording.time", byName, columns, at, problems);
            int[] obsIndex = findAll(spec.observation(), "recording.observation", byName, columns, at, problems);
            int[] actIndex = findAll(spec.action(), "recording.action", byName, columns, at, problems);
            problems.throwIfAny();

            DoubleList times = new DoubleList(1024);
            DoubleList obs = new DoubleList(1024 * obsIndex.length);
            DoubleList act = new DoubleList(1024 * actIndex.length);
            double[] obsRow = new double[obsIndex.length];
            double[] actRow = new double[actIndex.length];
            int samples = 0;
            double previousTime = 0;
            String previousTimeText = null;
            int previousTimeLine = 0;
            while ((line = in.next()) != null) {
                lineNo++;
                if (skipped(line)) {
                    continue;
                }
                samples++;
                String[] f = line.split(",", -1);
                if (f.length != columns.length) {
                    problems.add(name + " (line " + lineNo + ")", "has " + f.length + " field"
                            + (f.length == 1 ? "" : "s") + ", the header (line " + headerLine + ") has "
                            + columns.length);
                    continue;
                }
                int before = problems.total();
                String timeText = f[timeIndex].trim();
                double t = value(timeText, name, lineNo, columns[timeIndex], problems);
                if (problems.total() == before) {
                    if (previousTimeText != null && !(t > previousTime)) {
                        problems.add(where(name, lineNo, columns[timeIndex]), "time " + timeText + " is not after "
                                + previousTimeText + " at line " + previousTimeLine + "; times must increase strictly");
                    }
                    previousTime = t;
                    previousTimeText = timeText;
                    previousTimeLine = lineNo;
                }
                for (int k = 0; k < obsIndex.length; k++) {
                    obsRow[k] = value(f[obsIndex[k]].trim(), name, lineNo, columns[obsIndex[k]], problems);
                }
                for (int k = 0; k < actIndex.length; k++) {
                    actRow[k] = value(f[actIndex[k]].trim(), name, lineNo, columns[actIndex[k]], problems);
                }
                if (problems.total() == 0) {
                    times.add(t);
                    for (double v : obsRow) {
                        obs.add(v);
                    }
                    for (double v : actRow) {
                        act.add(v);
                    }
                }
            }
            if (samples == 0) {
                problems.add(name, "has a header (line " + headerLine + ") but no samples");
            }
            problems.throwIfAny();
            return new Recording(name, times.toArray(), obs.toArray(), act.toArray(), spec.observation().names(),
                    spec.jointNames());
        } catch (LineReader.LineTooLongException e) {
            throw new BadInputException(name + " (line " + (lineNo + 1) + ")", "is longer than " + e.limit
                    + " bytes; a recording line may hold at most 1 MiB");
        } catch (CharacterCodingException e) {
            if (startsWithHdf5Signature(file)) {
                throw new BadInputException(name, "is an HDF5 file, not CSV text; set recording.format to hdf5 "
                        + "(or name the file .h5)");
            }
            throw new BadInputException(name + " (line " + (lineNo + 1) + ")", "is not UTF-8 text");
        } catch (IOException e) {
            throw new BadInputException(name, "cannot be read: " + e.getMessage());
        }
    }

    /** Blank lines and comment lines (first non-space character {@code #}) carry no sample. */
    private static boolean skipped(String line) {
        for (int i = 0; i < line.length(); i++) {
            char c = line.charAt(i);
            if (c == '#') {
                return true;
            }
            if (c > ' ') {
                return false;
            }
        }
        return true;
    }

    private static String[] headerNames(String[] header, String at, ProblemList problems) {
        String[] names = new String[header.length];
        for (int i = 0; i < header.length; i++) {
            names[i] = header[i].trim();
            if (names[i].isEmpty()) {
                problems.add(at, "header field " + (i + 1) + " has no name");
            } else if (names[i].indexOf('"') >= 0) {
                problems.add(at, "header field " + (i + 1) + " is quoted: " + names[i]
                        + "; quoted fields are not supported, write the name without quotes");
            }
        }
        return names;
    }

    private static int find(String column, String key, Map<String, List<Integer>> byName, String[] columns,
                            String at, ProblemList problems) {
        List<Integer> found = byName.get(column);
        if (found == null) {
            problems.add(at, "has no column \"" + column + "\" (" + key + "); the header has: " + list(columns));
            return -1;
        }
        if (found.size() > 1) {
            StringBuilder fields = new StringBuilder();
            for (int i : found) {
                fields.append(fields.length() == 0 ? "" : ", ").append(i + 1);
            }
            problems.add(at, "has the column \"" + column + "\" (" + key + ") more than once, as fields " + fields
                    + "; column names must be unique");
            return -1;
        }
        return found.get(0);
    }

    private static int[] findAll(Columns c, String key, Map<String, List<Integer>> byName, String[] columns,
                                 String at, ProblemList problems) {
        int[] out = new int[c.names().size()];
        for (int k = 0; k < out.length; k++) {
            out[k] = find(c.names().get(k), key + "[" + k + "]", byName, columns, at, problems);
        }
        return out;
    }

    private static String list(String[] columns) {
        StringBuilder b = new StringBuilder();
        int shown = Math.min(columns.length, NAMES_SHOWN_MAX);
        for (int i = 0; i < shown; i++) {
            b.append(i == 0 ? "" : ", ").append(columns[i].isEmpty() ? "(no name)" : columns[i]);
        }
        if (columns.length > shown) {
            b.append(", and ").append(columns.length - shown).append(" more");
        }
        return b.toString();
    }

    private static String where(String name, int line, String column) {
        return name + " (line " + line + ", column \"" + column + "\")";
    }

    /** The value of one field, or NaN after recording why it is not a finite decimal number. */
    private static double value(String s, String name, int line, String column, ProblemList problems) {
        int kind = classify(s);
        if (kind == OK) {
            double v = Double.parseDouble(s);
            if (Double.isFinite(v)) {
                return v;
            }
            problems.add(where(name, line, column), "is beyond the range of a double: " + s);
        } else if (kind == EMPTY) {
            problems.add(where(name, line, column), "is empty");
        } else if (kind == NON_FINITE) {
            problems.add(where(name, line, column), "is not finite: " + s);
        } else if (s.indexOf('"') >= 0) {
            problems.add(where(name, line, column), "is quoted: " + s + "; quoted fields are not supported");
        } else {
            problems.add(where(name, line, column), "is not a decimal number: " + s);
        }
        return Double.NaN;
    }

    /**
     * Checks decimal syntax: an optional sign, digits with at most one point (at least one digit in
     * all), and an optional exponent {@code e} or {@code E} with optional sign and at least one digit.
     * {@link Double#parseDouble} alone would also take hexadecimal, {@code NaN}, {@code Infinity}
     * and type suffixes ({@code 1.0d}).
     */
    static int classify(String s) {
        int n = s.length();
        if (n == 0) {
            return EMPTY;
        }
        int i = 0;
        if (s.charAt(0) == '+' || s.charAt(0) == '-') {
            i++;
        }
        int digits = 0;
        while (i < n && isDigit(s.charAt(i))) {
            i++;
            digits++;
        }
        if (i < n && s.charAt(i) == '.') {
            i++;
            while (i < n && isDigit(s.charAt(i))) {
                i++;
                digits++;
            }
        }
        if (digits == 0) {
            String word = s.substring(s.charAt(0) == '+' || s.charAt(0) == '-' ? 1 : 0).toLowerCase(Locale.ROOT);
            return word.equals("nan") || word.equals("inf") || word.equals("infinity") ? NON_FINITE : SYNTAX;
        }
        if (i < n && (s.charAt(i) == 'e' || s.charAt(i) == 'E')) {
            i++;
            if (i < n && (s.charAt(i) == '+' || s.charAt(i) == '-')) {
                i++;
            }
            int exponentDigits = 0;
            while (i < n && isDigit(s.charAt(i))) {
                i++;
                exponentDigits++;
            }
            if (exponentDigits == 0) {
                return SYNTAX;
            }
        }
        return i == n ? OK : SYNTAX;
    }

    private static boolean isDigit(char c) {
        return c >= '0' && c <= '9';
    }

    private static boolean startsWithHdf5Signature(Path file) {
        try (InputStream in = Files.newInputStream(file)) {
            byte[] head = in.readNBytes(HDF5_SIGNATURE.length);
            return java.util.Arrays.equals(head, HDF5_SIGNATURE);
        } catch (IOException e) {
            return false;
        }
    }
}
