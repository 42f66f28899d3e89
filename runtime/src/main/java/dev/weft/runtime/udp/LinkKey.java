package dev.weft.runtime.udp;

import dev.weft.runtime.port.PortOptions;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermission;
import java.nio.file.attribute.PosixFilePermissions;
import java.util.Arrays;
import java.util.EnumSet;
import java.util.Set;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The shared key of an authenticated link, read once from a key file named in the options
 * ({@code key_file}); the key itself never appears in a configuration, a message or a log.
 *
 * <p>Key file format: the key as hexadecimal text, 64 to 128 hex digits (32 to 64 bytes; 64 is
 * SHA-256's block size, and HMAC would hash a longer key down to 32 bytes anyway), upper or lower
 * case; spaces, tabs and line breaks anywhere are ignored, nothing else is allowed. For example
 * {@code python3 -c 'import secrets; print(secrets.token_hex(32))' > link.key}, then
 * {@code chmod 600 link.key}.
 *
 * <p>The file must exist, be a regular file (a symbolic link to one is followed), be at most
 * 4096 bytes, and on a file system with POSIX permissions be neither readable nor writable by
 * group or others. Where the file system has no POSIX permissions the check cannot be made, and a
 * warning says so.
 *
 * <p>Immutable; thread-safe. Each thread that computes tags takes its own {@link #newTag()}.
 */
final class LinkKey {

    private static final Logger LOG = LoggerFactory.getLogger(LinkKey.class);

    /** Fewest key bytes a key file may hold (the HMAC-SHA-256 output length, RFC 2104 section 3). */
    static final int MIN_BYTES = 32;
    /** Most key bytes a key file may hold (the SHA-256 block size). */
    static final int MAX_BYTES = 64;
    private static final int MAX_FILE_BYTES = 4096;
    private static final Set<PosixFilePermission> PRIVATE_ONLY = EnumSet.of(
            PosixFilePermission.GROUP_READ, PosixFilePermission.GROUP_WRITE,
            PosixFilePermission.OTHERS_READ, PosixFilePermission.OTHERS_WRITE);

    private final byte[] key;
    private final Path file;

    private LinkKey(byte[] key, Path file) {
        this.key = key;
        this.file = file;
    }

    /**
     * Reads the key file named by option {@code option}, recording a problem under that option when
     * anything is wrong with it.
     *
     * @return the key, or null when the option is absent or a problem was recorded
     */
    static LinkKey read(PortOptions options, String option) {
        if (!options.has(option)) {
            return null;
        }
        Path file = options.path(option);
        if (file == null) {
            return null;
        }
        Path abs = file.toAbsolutePath();
        String problem = check(abs);
        if (problem != null) {
            options.problem(option, problem);
            return null;
        }
        byte[] text;
        try {
            text = Files.readAllBytes(abs);
        } catch (IOException e) {
            options.problem(option, "cannot read the key file " + abs + ": " + e.getMessage());
            return null;
        }
        try {
            return parse(text, abs, options, option);
        } finally {
            Arrays.fill(text, (byte) 0);
        }
    }

    /** The file's problem, or null when it may hold a key. */
    private static String check(Path file) {
        if (!Files.exists(file)) {
            return "key file not found: " + file;
        }
        if (!Files.isRegularFile(file)) {
            return "the key file " + file + " is not a regular file";
        }
        try {
            long size = Files.size(file);
            if (size > MAX_FILE_BYTES) {
                return "the key file " + file + " is " + size + " bytes; a key file holds " + 2 * MIN_BYTES + " to "
                        + 2 * MAX_BYTES + " hex digits";
            }
            Set<PosixFilePermission> mode;
            try {
                mode = Files.getPosixFilePermissions(file);
            } catch (UnsupportedOperationException e) {
                LOG.warn("could not check the permissions of the key file {}: its file system has no POSIX permissions;"
                        + " make sure only the owner can read it", file);
                return null;
            }
            EnumSet<PosixFilePermission> open = EnumSet.noneOf(PosixFilePermission.class);
            open.addAll(mode);
            open.retainAll(PRIVATE_ONLY);
            if (!open.isEmpty()) {
                return "the key file " + file + " has mode " + octal(mode) + " (" + PosixFilePermissions.toString(mode)
                        + "): a key file must not be readable or writable by group or others; run chmod 600 " + file;
            }
        } catch (IOException e) {
            return "cannot check the key file " + file + ": " + e.getMessage();
        }
        return null;
    }

    private static LinkKey parse(byte[] text, Path file, PortOptions options, String option) {
        byte[] key = new byte[MAX_BYTES];
        int digits = 0;
        for (int i = 0; i < text.length; i++) {
            int c = text[i];
            if (c == ' ' || c == '\t' || c == '\n' || c == '\r') {
                continue;
            }
            int v = Character.digit(c & 0xFF, 16);
            if (v < 0 || c < 0) {
                Arrays.fill(key, (byte) 0);
                options.problem(option, "the key file " + file + " holds a character other than a hex digit or white space"
                        + " at byte " + i + "; it must hold the key as " + 2 * MIN_BYTES + " to " + 2 * MAX_BYTES + " hex digits");
                return null;
            }
            if (digits < 2 * MAX_BYTES) {
                key[digits / 2] |= (byte) (digits % 2 == 0 ? v << 4 : v);
            }
            digits++;
        }
        if (digits % 2 != 0 || digits < 2 * MIN_BYTES || digits > 2 * MAX_BYTES) {
            Arrays.fill(key, (byte) 0);
            options.problem(option, "the key file " + file + " holds " + digits + " hex digits; it must hold "
                    + 2 * MIN_BYTES + " to " + 2 * MAX_BYTES + ", an even number (" + MIN_BYTES + " to " + MAX_BYTES + " bytes)");
            return null;
        }
        byte[] exact = Arrays.copyOf(key, digits / 2);
        Arrays.fill(key, (byte) 0);
        return new LinkKey(exact, file);
    }

    private static String octal(Set<PosixFilePermission> mode) {
        int bits = 0;
        for (PosixFilePermission p : mode) {
            bits |= 1 << (8 - p.ordinal());
        }
        return String.format("%04o", bits);
    }

    /** A fresh tag computer for one thread. */
    DatagramTag newTag() {
        return new DatagramTag(key);
    }

    /** The key file, for messages. */
    Path file() {
        return file;
    }

    /** Names the file, never the key. */
    @Override
    public String toString() {
        return "key from " + file;
    }
}
