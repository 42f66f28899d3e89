package dev.weft.runtime.telemetry;

/**
 * What became of the rows handed to a {@link CsvRecorder}: {@code handed = written + lost +
 * pending}, always; {@code pending} is 0 once the recorder is closed.
 *
 * @param handed rows the producer handed over (claimed), including those the full ring refused
 * @param written whole rows the writer wrote to the file (a row cut short by a failed write is not one)
 * @param lost rows that will never be in the file: the ring was full, a write failed, or closing
 *     gave up waiting for the writer
 * @param pending rows handed over and not yet written or lost (in the ring or the write buffer)
 */
public record RowCounts(long handed, long written, long lost, long pending) {

    /** No rows. */
    public static final RowCounts NONE = new RowCounts(0, 0, 0, 0);

    public RowCounts {
        if (handed != written + lost + pending || written < 0 || lost < 0 || pending < 0) {
            throw new IllegalArgumentException("row counts do not add up: handed " + handed + ", written " + written
                    + ", lost " + lost + ", pending " + pending);
        }
    }

    @Override
    public String toString() {
        return handed + " rows handed over, " + written + " written, " + lost + " lost"
                + (pending == 0 ? "" : ", " + pending + " pending");
    }
}
