package dev.weft.runtime.telemetry;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.LinkOption;
import java.nio.file.Path;

/**
 * A file a {@link CsvRecorder} may write, checked before anything is created: the configured path
 * resolved ({@code ../} and symbolic links followed), the folder it lands in, and the partial file
 * beside it ({@code <name>.incomplete}) that the recorder writes during the run and moves onto the
 * final name when it closes, so nobody reading the folder ever sees a half-written file under the
 * final name.
 *
 * <p>Refused: a folder that does not exist or cannot be written, a target that is a folder or not
 * a regular file (a FIFO, a device, a socket), a symbolic link to nothing, an existing file unless
 * replacing was asked for, and a partial file already in the way (a run that did not finish leaves
 * one; its rows are never overwritten). Checking creates and changes nothing.
 *
 * <p>Immutable.
 */
public final class TargetFile {

    /** The suffix of the file written during a run, beside the target. */
    public static final String PARTIAL_SUFFIX = ".incomplete";

    /** Why a target was refused. */
    public enum Reason {
        FOLDER_MISSING, FOLDER_NOT_WRITABLE, IS_FOLDER, NOT_REGULAR, DANGLING_LINK, EXISTS, PARTIAL_IN_THE_WAY
    }

    /** A refused target: the reason and a message naming the resolved path. */
    public static final class Refused extends IOException {
        private static final long serialVersionUID = 1L;
        private final Reason reason;

        Refused(Reason reason, String message) {
            super(message);
            this.reason = reason;
        }

        public Reason reason() {
            return reason;
        }
    }

    private final Path configured;
    private final Path file;
    private final Path partial;
    private final boolean replace;

    private TargetFile(Path configured, Path file, boolean replace) {
        this.configured = configured;
        this.file = file;
        this.partial = file.resolveSibling(file.getFileName() + PARTIAL_SUFFIX);
        this.replace = replace;
    }

    /**
     * Resolves and checks {@code configured}.
     *
     * @param replace whether an existing regular file may be replaced (at close, by the move)
     * @throws Refused naming the resolved path and why it cannot be written
     */
    public static TargetFile resolve(Path configured, boolean replace) throws Refused {
        Path abs = configured.toAbsolutePath();
        Path name = abs.getFileName();
        Path parent = abs.getParent();
        if (name == null || parent == null) {
            throw new Refused(Reason.IS_FOLDER, "is a folder, not a file: " + abs);
        }
        Path folder;
        try {
            folder = parent.toRealPath();
        } catch (IOException e) {
            throw new Refused(Reason.FOLDER_MISSING, "folder not found: " + parent.normalize());
        }
        if (!Files.isDirectory(folder)) {
            throw new Refused(Reason.FOLDER_MISSING, "folder not found: " + parent.normalize());
        }
        Path lexical = folder.resolve(name);
        Path file = lexical;
        if (Files.exists(lexical, LinkOption.NOFOLLOW_LINKS)) {
            if (!Files.exists(lexical)) {
                throw new Refused(Reason.DANGLING_LINK, lexical + " is a symbolic link to a file that does not exist");
            }
            try {
                file = lexical.toRealPath();
            } catch (IOException e) {
                throw new Refused(Reason.DANGLING_LINK, lexical + " cannot be resolved: " + e.getMessage());
            }
            String shown = file.equals(lexical) ? file.toString() : lexical + " (resolves to " + file + ")";
            if (Files.isDirectory(file)) {
                throw new Refused(Reason.IS_FOLDER, "is a folder, not a file: " + shown);
            }
            if (!Files.isRegularFile(file)) {
                throw new Refused(Reason.NOT_REGULAR, shown + " is not a regular file (a FIFO, device or socket);"
                        + " rows are written to a regular file only");
            }
            if (!replace) {
                throw new Refused(Reason.EXISTS, shown + " exists");
            }
            folder = file.getParent();
        }
        if (!Files.isWritable(folder)) {
            throw new Refused(Reason.FOLDER_NOT_WRITABLE, file + ": its folder " + folder + " is not writable");
        }
        TargetFile t = new TargetFile(configured, file, replace);
        if (Files.exists(t.partial, LinkOption.NOFOLLOW_LINKS)) {
            throw new Refused(Reason.PARTIAL_IN_THE_WAY, t.partial + " is in the way (left by a run that did not"
                    + " finish?); move it away or delete it");
        }
        return t;
    }

    /**
     * Proves the folder takes a new file, as the recorder will need: creates the partial file and
     * deletes it again. Catches what permission bits do not show (a read-only mount, a folder where
     * even root cannot create files, an ACL). Leaves nothing behind.
     *
     * @throws Refused when the partial file cannot be created
     */
    public void probe() throws Refused {
        try {
            Files.delete(Files.createFile(partial));
        } catch (IOException e) {
            throw new Refused(Reason.FOLDER_NOT_WRITABLE, file + ": cannot create files in its folder "
                    + file.getParent() + " (" + why(e) + ")");
        }
    }

    /** Why a file operation failed, in the system's words, without the exception's class. */
    static String why(Throwable e) {
        if (e instanceof java.nio.file.FileAlreadyExistsException) {
            return "it exists";
        }
        if (e instanceof java.nio.file.AccessDeniedException) {
            return "permission denied";
        }
        if (e instanceof java.nio.file.NoSuchFileException) {
            return "no such file or folder";
        }
        if (e instanceof java.nio.file.FileSystemException fs && fs.getReason() != null) {
            return fs.getReason();
        }
        return e.getMessage() != null ? e.getMessage() : e.getClass().getSimpleName();
    }

    /** The path as configured. */
    public Path configured() {
        return configured;
    }

    /** The resolved final file: real folder, links followed. */
    public Path file() {
        return file;
    }

    /** The file written during the run, beside {@link #file()}. */
    public Path partial() {
        return partial;
    }

    /** Whether an existing file at {@link #file()} is replaced when the recorder closes. */
    public boolean replace() {
        return replace;
    }
}
