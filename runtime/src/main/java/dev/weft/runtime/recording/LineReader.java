package dev.weft.runtime.recording;

import java.io.Closeable;
import java.io.IOException;
import java.io.InputStream;
import java.nio.ByteBuffer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CharsetDecoder;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;

/**
 * Reads UTF-8 text one line at a time, decoding each line by itself so that a byte sequence that
 * is not UTF-8 is reported on its own line (a reader that decodes ahead in blocks would fail
 * before handing over the lines before it). Lines end with {@code \n} or {@code \r\n}. A line
 * longer than the bound (1 MiB unless told) is refused as soon as the bound is passed, before it is
 * held whole. Not thread-safe.
 */
final class LineReader implements Closeable {

    private final InputStream in;
    private final CharsetDecoder decoder = StandardCharsets.UTF_8.newDecoder()
            .onMalformedInput(CodingErrorAction.REPORT)
            .onUnmappableCharacter(CodingErrorAction.REPORT);
    private final byte[] chunk = new byte[1 << 16];
    private int chunkPos;
    private int chunkEnd;
    private byte[] line = new byte[256];
    private final int maxLineBytes;

    /** Longest line a recording may hold, in bytes without its line end: 1 MiB. */
    static final int MAX_LINE_BYTES = 1 << 20;

    LineReader(InputStream in) {
        this(in, MAX_LINE_BYTES);
    }

    LineReader(InputStream in, int maxLineBytes) {
        this.in = in;
        this.maxLineBytes = maxLineBytes;
    }

    /** A line longer than the reader's bound; thrown before the line is held in memory. */
    static final class LineTooLongException extends IOException {
        final int limit;

        LineTooLongException(int limit) {
            super("a line is longer than " + limit + " bytes");
            this.limit = limit;
        }
    }

    /**
     * @return the next line without its line end, or null at the end of the input
     * @throws CharacterCodingException when the line is not UTF-8
     */
    String next() throws IOException {
        int n = 0;
        boolean any = false;
        while (true) {
            if (chunkPos == chunkEnd) {
                chunkEnd = in.read(chunk, 0, chunk.length);
                chunkPos = 0;
                if (chunkEnd <= 0) {
                    chunkEnd = 0;
                    if (!any) {
                        return null;
                    }
                    break;
                }
            }
            any = true;
            int start = chunkPos;
            int end = start;
            while (end < chunkEnd && chunk[end] != '\n') {
                end++;
            }
            int len = end - start;
            if ((long) n + len > maxLineBytes + 1L) {
                // one byte more than the bound may be a \r before the \n
                throw new LineTooLongException(maxLineBytes);
            }
            if (n + len > line.length) {
                line = Arrays.copyOf(line, Math.max(line.length * 2, n + len));
            }
            System.arraycopy(chunk, start, line, n, len);
            n += len;
            if (end < chunkEnd) {
                chunkPos = end + 1;
                break;
            }
            chunkPos = chunkEnd;
        }
        if (n > 0 && line[n - 1] == '\r') {
            n--;
        }
        if (n > maxLineBytes) {
            throw new LineTooLongException(maxLineBytes);
        }
        return decoder.decode(ByteBuffer.wrap(line, 0, n)).toString();
    }

    @Override
    public void close() throws IOException {
        in.close();
    }
}
