package dev.weft.filters;

import java.util.Arrays;

/**
 * The chunk timeline shared by every blender: validation, stale-prefix accounting, resampling of a
 * chunk's curve (position, and its derivatives per tick) onto control ticks, a power-of-two ring of
 * per-tick slots, and the plan bounds. Subclasses decide only how a chunk's per-tick state is merged into
 * a slot and how a slot is read.
 *
 * <p>Ring invariant: every tick of plan lies in {@code [lastNow, planEnd]} with
 * {@code planEnd − lastNow < capacity}, so the slot {@code tick & mask} of such a tick holds that tick
 * ({@code slotTick} records which tick a slot holds, so a stale slot is recognised, never misread).
 * Single-threaded; allocation-free after construction.
 */
abstract class AbstractChunkBlender implements ChunkBlender {

    /** Tolerance in ticks when deciding whether a step time lands on or before a tick (absorbs j·r rounding). */
    static final double TICK_EPSILON = 1e-9;
    static final long NO_TICK = Long.MIN_VALUE;
    /** Largest ring, in doubles (ticks × dimensions): 128 MiB. */
    static final long MAX_RING_VALUES = 1L << 24;

    private static final int SHAPE_NULL = 1;
    private static final int SHAPE_STEPS = 2;
    private static final int SHAPE_LENGTH = 3;
    private static final int TICKS_NEGATIVE = 4;
    private static final int TICKS_ORIGIN_AFTER_NOW = 5;
    private static final int TICKS_BACKWARDS = 6;

    final int dims;
    final int maxSteps;
    final double stepRatio;
    final Interpolation interpolation;
    final int capacity;
    final int mask;
    /** Which tick each slot currently holds, or NO_TICK. */
    final long[] slotTick;
    /** {@code r²}, for converting d²/du² into a rate per tick². */
    private final double stepRatioSquared;
    private final ChunkCurve curve;
    private final double[] point;
    private final double[] pointVelocity;
    private final double[] pointAcceleration;
    /**
     * Running sums of the plan's positions: for a slot holding tick t, the sum over ticks
     * {@code sumBase..t}, formed by {@link #accept} over the whole plan after each merge.
     */
    private final double[] runningSum;
    /** First tick of the running sums (the nowTick of the latest merge), or NO_TICK. */
    private long sumBase = NO_TICK;

    /** nowTick of the latest non-rejected accept call, or NO_TICK. */
    long lastNow = NO_TICK;
    /** Last tick covered by the plan, or NO_TICK. */
    long planEnd = NO_TICK;
    /** Largest origin tick that contributed to the plan, or NO_TICK. */
    long planOrigin = NO_TICK;

    private long accepted;
    private long expired;
    private long rejected;
    private long superseded;
    private long stale;

    private int rejectCode;
    private int rejectDetail;
    private int rejectStep = -1;
    private int rejectJoint = -1;
    private double rejectValue;
    private long rejectOrigin;
    private long rejectNow;
    private long rejectSteps;
    private long rejectLength;
    private long rejectPreviousNow;

    AbstractChunkBlender(String kind, int dims, int maxSteps, double stepRatio, Interpolation interpolation) {
        if (dims < 1) {
            throw new IllegalArgumentException(kind + ": dimensions must be >= 1, got " + dims);
        }
        if (maxSteps < 1) {
            throw new IllegalArgumentException(kind + ": maxSteps must be >= 1, got " + maxSteps);
        }
        if (!(stepRatio > 0.0) || Double.isInfinite(stepRatio)) {
            throw new IllegalArgumentException(kind + ": stepRatio (policy step / control period) must be finite and > 0, got "
                    + stepRatio);
        }
        if (interpolation == null) {
            throw new IllegalArgumentException(kind + ": interpolation must not be null");
        }
        if ((long) maxSteps * dims > MAX_RING_VALUES) {
            throw new IllegalArgumentException(kind + ": maxSteps " + maxSteps + " x " + dims
                    + " dimensions exceeds the limit of " + MAX_RING_VALUES + " values per chunk");
        }
        double span = Math.floor((maxSteps - 1) * stepRatio + TICK_EPSILON);
        long ticks = Long.highestOneBit((long) span + 1);
        if (ticks < (long) span + 1) {
            ticks <<= 1;
        }
        if (span + 1 > MAX_RING_VALUES || ticks * dims > MAX_RING_VALUES) {
            throw new IllegalArgumentException(kind + ": maxSteps " + maxSteps + " at stepRatio " + stepRatio + " with "
                    + dims + " dimensions needs a ring of " + (long) (span + 1) + " ticks x " + dims
                    + " values, more than the limit of " + MAX_RING_VALUES + " values");
        }
        this.dims = dims;
        this.maxSteps = maxSteps;
        this.stepRatio = stepRatio;
        this.interpolation = interpolation;
        this.capacity = (int) ticks;
        this.mask = capacity - 1;
        this.slotTick = new long[capacity];
        Arrays.fill(slotTick, NO_TICK);
        this.stepRatioSquared = stepRatio * stepRatio;
        this.curve = new ChunkCurve(dims, maxSteps, interpolation);
        this.point = new double[dims];
        this.pointVelocity = new double[dims];
        this.pointAcceleration = new double[dims];
        this.runningSum = new double[capacity * dims];
    }

    /** How many leading steps of a {@code steps}-long chunk may be executed at all. */
    int executableSteps(int steps) {
        return steps;
    }

    /** Whether a chunk from an older observation than the current plan is dropped. */
    abstract boolean dropsOlderOrigins();

    /**
     * Called once per accepted chunk before its ticks are merged.
     *
     * @param firstTick the first tick the chunk covers (its arrival, {@code nowTick})
     * @param lastTick  the last tick the chunk covers
     */
    void beginChunk(long originTick, long firstTick, long lastTick) {
    }

    /**
     * Merges the chunk's state for {@code tick} into {@code slot}: its position, velocity per tick and
     * acceleration per tick² (read only).
     *
     * @param hadPlan whether the slot held plan for this tick before this chunk
     */
    abstract void mergeTick(long tick, int slot, double[] position, double[] velocity, double[] acceleration,
            boolean hadPlan);

    /** Plan end after merging a chunk that covers ticks up to {@code chunkEnd}. */
    abstract long planEndAfter(long chunkEnd);

    /** Writes the position held in {@code slot} into {@code out}. */
    abstract void readPosition(int slot, double[] out);

    /** The position of one dimension held in {@code slot}: bit for bit what {@link #readPosition(int, double[])} writes there. */
    abstract double readPosition(int slot, int dimension);

    /**
     * Writes the state held in {@code slot}; the position must be bit for bit what
     * {@link #readPosition} writes.
     */
    abstract void readState(int slot, double[] position, double[] velocity, double[] acceleration);

    /** Subclass state reset. */
    void resetSlots() {
    }

    /** Last tick offset (from the origin) covered by the first {@code points} steps. */
    final long lastOffset(int points) {
        return (long) Math.floor((points - 1) * stepRatio + TICK_EPSILON);
    }

    @Override
    public final int accept(double[] chunk, int steps, long originTick, long nowTick) {
        if (chunk == null) {
            return rejectShape(SHAPE_NULL, steps, -1, originTick, nowTick);
        }
        if (steps < 1 || steps > maxSteps) {
            return rejectShape(SHAPE_STEPS, steps, chunk.length, originTick, nowTick);
        }
        int values = steps * dims;
        if (values > chunk.length) {
            return rejectShape(SHAPE_LENGTH, steps, chunk.length, originTick, nowTick);
        }
        if (originTick < 0 || nowTick < 0) {
            return rejectTicks(TICKS_NEGATIVE, originTick, nowTick);
        }
        if (originTick > nowTick) {
            return rejectTicks(TICKS_ORIGIN_AFTER_NOW, originTick, nowTick);
        }
        if (lastNow != NO_TICK && nowTick < lastNow) {
            rejectPreviousNow = lastNow;
            return rejectTicks(TICKS_BACKWARDS, originTick, nowTick);
        }
        for (int i = 0; i < values; i++) {
            double v = chunk[i];
            if (!Double.isFinite(v)) {
                rejected++;
                rejectCode = REJECTED_NON_FINITE;
                rejectStep = i / dims;
                rejectJoint = i % dims;
                rejectValue = v;
                rejectOrigin = originTick;
                rejectNow = nowTick;
                return REJECTED_NON_FINITE;
            }
        }
        if (dropsOlderOrigins() && planOrigin != NO_TICK && originTick < planOrigin) {
            superseded++;
            lastNow = nowTick;
            return SUPERSEDED;
        }
        long firstOffset = nowTick - originTick;
        int points = executableSteps(steps);
        stale += staleCount(firstOffset, points);
        long span = lastOffset(points);
        lastNow = nowTick;
        if (firstOffset > span) {
            expired++;
            return 0;
        }
        curve.prepare(chunk, points);
        long end = originTick + span;
        beginChunk(originTick, nowTick, end);
        long oldEnd = planEnd;
        for (long t = nowTick; t <= end; t++) {
            double u = (t - originTick) / stepRatio;
            curve.evaluate(chunk, points, u, point, pointVelocity, pointAcceleration);
            for (int d = 0; d < dims; d++) {
                pointVelocity[d] /= stepRatio;
                pointAcceleration[d] /= stepRatioSquared;
            }
            int slot = (int) (t & mask);
            boolean hadPlan = oldEnd != NO_TICK && t <= oldEnd && slotTick[slot] == t;
            mergeTick(t, slot, point, pointVelocity, pointAcceleration, hadPlan);
            slotTick[slot] = t;
        }
        planEnd = planEndAfter(end);
        formRunningSums(nowTick);
        if (originTick > planOrigin) {
            planOrigin = originTick;
        }
        accepted++;
        return (int) (end - nowTick + 1);
    }

    /**
     * Number of steps j in [0, steps) with j·r before {@code firstOffset} (the arrival), with tolerance;
     * {@code steps} is the number of executable steps, so steps that are never executed anyway do not count.
     */
    private int staleCount(long firstOffset, int steps) {
        if (firstOffset <= 0) {
            return 0;
        }
        double count = Math.ceil((firstOffset - TICK_EPSILON) / stepRatio);
        return count >= steps ? steps : (int) count;
    }

    /** The running sums of the plan's positions from {@code from} to the plan's end. */
    private void formRunningSums(long from) {
        sumBase = from;
        for (int d = 0; d < dims; d++) {
            double sum = 0.0;
            for (long t = from; t <= planEnd; t++) {
                int slot = (int) (t & mask);
                sum += readPosition(slot, d);
                runningSum[slot * dims + d] = sum;
            }
        }
    }

    @Override
    public final boolean previewMeans(long tick, int[] runEnds, double[] out) {
        checkRuns(runEnds, out, (long) runEnds.length * dims);
        if (!hasPlan(tick)) {
            return false;
        }
        int runs = runEnds.length;
        for (int d = 0; d < dims; d++) {
            runMeans(tick, runEnds, d, out, d * runs);
        }
        return true;
    }

    @Override
    public final boolean previewMeans(long tick, int[] runEnds, int dimension, double[] out) {
        if (dimension < 0 || dimension >= dims) {
            throw new IllegalArgumentException("previewMeans: dimension must be in [0, " + dims + "), got " + dimension);
        }
        checkRuns(runEnds, out, runEnds == null ? 0 : runEnds.length);
        if (!hasPlan(tick)) {
            return false;
        }
        runMeans(tick, runEnds, dimension, out, 0);
        return true;
    }

    private void checkRuns(int[] runEnds, double[] out, long needed) {
        if (runEnds == null || runEnds.length == 0) {
            throw new IllegalArgumentException("previewMeans: runEnds must hold at least one run");
        }
        for (int b = 0; b < runEnds.length; b++) {
            if (runEnds[b] <= (b == 0 ? 0 : runEnds[b - 1])) {
                throw new IllegalArgumentException("previewMeans: runEnds must increase strictly from at least 1, got "
                        + runEnds[b] + " at run " + b);
            }
        }
        if (out == null || out.length < needed) {
            throw new IllegalArgumentException("previewMeans: out must hold at least " + needed
                    + " values, got " + (out == null ? "null" : out.length + " values"));
        }
    }

    /** The run means of dimension d ahead of tick into out[at ..]; the plan covers tick. */
    private void runMeans(long tick, int[] runEnds, int d, double[] out, int at) {
        int endSlot = (int) (planEnd & mask);
        double endPosition = readPosition(endSlot, d);
        double before = sumThrough(tick - 1, d, endSlot, endPosition);
        int start = 0;
        for (int b = 0; b < runEnds.length; b++) {
            double after = sumThrough(tick + runEnds[b] - 1, d, endSlot, endPosition);
            out[at + b] = (after - before) / (runEnds[b] - start);
            before = after;
            start = runEnds[b];
        }
    }

    /** The running sum of joint d through tick t (t at least sumBase - 1); past the plan's end, its last position held. */
    private double sumThrough(long t, int d, int endSlot, double endPosition) {
        if (t < sumBase) {
            return 0.0;
        }
        if (t <= planEnd) {
            return runningSum[(int) (t & mask) * dims + d];
        }
        return runningSum[endSlot * dims + d] + (t - planEnd) * endPosition;
    }

    private boolean hasPlan(long tick) {
        return planEnd != NO_TICK && tick >= lastNow && tick <= planEnd && slotTick[(int) (tick & mask)] == tick;
    }

    @Override
    public final boolean actionAt(long tick, double[] out) {
        if (out == null || out.length < dims) {
            throw new IllegalArgumentException("actionAt: out must hold at least " + dims + " values, got "
                    + (out == null ? "null" : out.length + " values"));
        }
        if (!hasPlan(tick)) {
            return false;
        }
        readPosition((int) (tick & mask), out);
        return true;
    }

    @Override
    public final boolean stateAt(long tick, double[] position, double[] velocity, double[] acceleration) {
        checkStateArray("position", position);
        checkStateArray("velocity", velocity);
        checkStateArray("acceleration", acceleration);
        if (position == velocity || position == acceleration || velocity == acceleration) {
            throw new IllegalArgumentException("stateAt: position, velocity and acceleration must be three different arrays");
        }
        if (!hasPlan(tick)) {
            return false;
        }
        readState((int) (tick & mask), position, velocity, acceleration);
        return true;
    }

    private void checkStateArray(String name, double[] array) {
        if (array == null || array.length < dims) {
            throw new IllegalArgumentException("stateAt: " + name + " must hold at least " + dims + " values, got "
                    + (array == null ? "null" : array.length + " values"));
        }
    }

    @Override
    public final long ticksRemaining(long tick) {
        return hasPlan(tick) ? planEnd - tick + 1 : 0;
    }

    @Override
    public final void reset() {
        Arrays.fill(slotTick, NO_TICK);
        lastNow = NO_TICK;
        planEnd = NO_TICK;
        planOrigin = NO_TICK;
        sumBase = NO_TICK;
        resetSlots();
    }

    private int rejectShape(int detail, long steps, long length, long origin, long now) {
        rejected++;
        rejectCode = REJECTED_SHAPE;
        rejectDetail = detail;
        rejectSteps = steps;
        rejectLength = length;
        rejectOrigin = origin;
        rejectNow = now;
        rejectStep = -1;
        rejectJoint = -1;
        return REJECTED_SHAPE;
    }

    private int rejectTicks(int detail, long origin, long now) {
        rejected++;
        rejectCode = REJECTED_TICKS;
        rejectDetail = detail;
        rejectOrigin = origin;
        rejectNow = now;
        rejectStep = -1;
        rejectJoint = -1;
        return REJECTED_TICKS;
    }

    @Override
    public final String describeLastRejection() {
        String ticks = " (origin tick " + rejectOrigin + ", now tick " + rejectNow + ")";
        switch (rejectCode) {
            case 0:
                return "no chunk rejected";
            case REJECTED_NON_FINITE:
                return "chunk rejected: non-finite value " + rejectValue + " at step " + rejectStep + ", joint "
                        + rejectJoint + ticks;
            case REJECTED_SHAPE:
                if (rejectDetail == SHAPE_NULL) {
                    return "chunk rejected: chunk array is null" + ticks;
                }
                if (rejectDetail == SHAPE_STEPS) {
                    return "chunk rejected: steps " + rejectSteps + " outside [1, " + maxSteps + "]" + ticks;
                }
                return "chunk rejected: array holds " + rejectLength + " values, but " + rejectSteps + " steps x " + dims
                        + " joints need " + rejectSteps * dims + ticks;
            default:
                if (rejectDetail == TICKS_NEGATIVE) {
                    return "chunk rejected: ticks must be >= 0" + ticks;
                }
                if (rejectDetail == TICKS_ORIGIN_AFTER_NOW) {
                    return "chunk rejected: origin tick is after now tick" + ticks;
                }
                return "chunk rejected: now tick went backwards, previous now tick " + rejectPreviousNow + ticks;
        }
    }

    @Override
    public final int dimensions() {
        return dims;
    }

    @Override
    public final int maxSteps() {
        return maxSteps;
    }

    @Override
    public final double stepRatio() {
        return stepRatio;
    }

    @Override
    public final Interpolation interpolation() {
        return interpolation;
    }

    @Override
    public final long acceptedChunks() {
        return accepted;
    }

    @Override
    public final long expiredChunks() {
        return expired;
    }

    @Override
    public final long rejectedChunks() {
        return rejected;
    }

    @Override
    public final long supersededChunks() {
        return superseded;
    }

    @Override
    public final long staleSteps() {
        return stale;
    }

    @Override
    public final int lastRejection() {
        return rejectCode;
    }

    @Override
    public final int lastRejectedStep() {
        return rejectStep;
    }

    @Override
    public final int lastRejectedJoint() {
        return rejectJoint;
    }
}
