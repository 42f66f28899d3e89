package dev.weft.bench;

import dev.weft.filters.Interpolation;
import dev.weft.filters.TemporalEnsembleBlender;
import dev.weft.runtime.config.BlendingConfig;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.port.NullPort;
import dev.weft.safety.JerkLimiter;
import dev.weft.safety.JointLimits;
import dev.weft.safety.PlanPreview;

/**
 * The control tick as the benchmarks and the NumPy comparison run it: the plan's state from the
 * blender, the jerk-limited limiter following it, and the emit of one command frame to a port,
 * steps 4, 6 and 8 of the tick in the design, the way {@code ControlLoop.runTick} does them
 * (the observation, inference hand-off, smoother, supervisor, watchdog and telemetry steps are
 * not part of it; chunk acceptance is measured on its own).
 *
 * <p><b>Blender.</b> Temporal ensembling as the runtime configures it by default: oldest first,
 * weight rate {@link #WEIGHT_RATE}, step ratio 1, {@link Interpolation#CUBIC_SPLINE}, tapered
 * with {@code taperSteps = max(1, K/2)} ({@link #taperSteps(int)}, the runtime's default).
 *
 * <p><b>Plan.</b> {@link #CHUNKS} chunks of K actions of D joints, as from a policy queried every
 * tick without latency: chunk {@code c} comes from the observation of tick {@code c} and is
 * accepted at tick {@code c}, so its step {@code j} is meant for tick {@code c + j}. Its value
 * there is {@code centre(d) + A·sin(2π·(c + j)/WINDOW + phase(d)) + c·spread}: every chunk
 * follows the same motion and chunk {@code c} sits {@code c·spread} above it, so the ensemble
 * blends predictions that disagree, each on its own tapered weight (the chunks start on
 * different ticks, so their ramps in and out do not coincide and the taper shapes the plan).
 * Tick {@code n} reads plan tick {@link #FIRST_TICK}{@code + (n mod WINDOW)}, which every chunk
 * length in use covers (the plan runs from tick {@link #FIRST_TICK} to {@code K + 2}).
 *
 * <p>Each tick, as the loop does: {@code blender.stateAt} (position, velocity per tick,
 * acceleration per tick²), the derivatives multiplied by the tick rate {@code 1e9/periodNanos}
 * and its square to make them per second, then
 * {@link JerkLimiter#apply(double[], double[], double[], double[])}. The plan's positions repeat
 * every {@link #WINDOW} ticks up to the chunks' disagreement (the share each chunk has of a tick
 * depends on its taper, and so on K); its velocity and acceleration come from each chunk's natural
 * spline and from the taper's own rates, so they depend on K near a chunk's ends. On the
 * oscillating plan the limiter clamps them and feeds forward almost none of them, and the laws it
 * takes differ by at most 0.1 point between K = 16, 100 and 400 (below), so a difference in cost
 * between K comes from the blender, or from that remainder.
 *
 * <p><b>The two motions benchmarked.</b>
 * <ul>
 *   <li>{@link Motion#OSCILLATING}, A = {@link #AMPLITUDE} at 62.5 Hz (1 kHz loop), spread
 *   {@link #CHUNK_SPREAD}: a plan far faster and larger than the bounds let a joint follow (its
 *   velocity up to 196 rad/s, its acceleration up to 8–9·10⁴ rad/s²). Its derivatives are beyond
 *   their bounds on nearly every tick, so they are clamped and the share of them fed forward is
 *   almost nil, and its position is mostly so far from the command that the limiter leaves its
 *   linear zone for the minimum-time law toward the plan's position (the stop profile, the
 *   full-jerk successor checked against every bound, and a 24-step bisection over the jerk blend
 *   when full jerk would break a bound or pass the target). Measured over 4000 ticks from the
 *   start at D = 14 ({@code TickExport 14 K 4000 OSCILLATING} prints the flags and the finite
 *   differences; {@code numpy_tick.py} on that export, equal to weft's output bit for bit, counts
 *   the laws), at K = 16: <b>100 % of joint-ticks carry a bound flag</b> ({@link JerkLimiter#JERK}
 *   80.5 %, {@link JerkLimiter#VELOCITY} 99.1 %, {@link JerkLimiter#ACCELERATION} 94.7 %; no fault
 *   flag); the minimum-time law runs on 87 % of joint-ticks (full jerk 73 %, its bisection 14 %),
 *   the linear zone on 13 % (its shield's 16-step bisection on 1.1 %); and the finite differences
 *   of the emitted commands come within 1 % of the jerk bound on 56 %, of the acceleration bound
 *   on 17 % and of the velocity bound on 3 % of joint-ticks (each bound is
 *   reached exactly, none exceeded). The previous amplitude, 0.02 rad, no longer makes the
 *   limiter work: with it the new law stays in its linear zone, no joint-tick has the jerk flag
 *   and the commands' largest jerk is 62 rad/s³ (same measure, K = 16, with {@link #AMPLITUDE}
 *   set to 0.02).</li>
 *   <li>{@link Motion#HOLDING}: a constant pose (A = 0, spread 0) whose every coordinate is a
 *   power of two, so that the weighted mean of the identical predictions and the quotient-rule
 *   derivatives come out exactly as the pose and exactly 0 (see {@link #holdPose}). The limiter,
 *   reset onto the pose, then takes its hold path on every joint every tick (the plan at rest and
 *   the state at rest on it: 100 % of joint-ticks, no flag, counted the same way).</li>
 * </ul>
 * A constant pose of arbitrary doubles ({@link Motion#HOLDING_ANY_POSE}, the centres as they
 * are) is not read back exactly: over the window about half the joint-ticks' positions differ
 * from the pose by an ulp, and the derivatives are of order 10⁻¹³ rad/s and 10⁻¹⁰ rad/s² instead
 * of 0. The limiter counts a plan within its rounding slack of the held pose, with derivatives at
 * that level, as at rest, so it takes its hold path there too (100 % of joint-ticks, 1000 ticks,
 * K = 16; before that rule it took it on 8 % and cost five times as much).
 *
 * <p><b>Frame.</b> Each tick fills a {@link CommandFrame} as the loop does (tick, time, state,
 * limiter flags, positions, and velocities as the finite difference of the commands, with the
 * finite check) and hands it to a {@link NullPort}, which counts it: the emit costs what the port
 * interface costs, nothing more.
 *
 * <p>Threading: one thread. Allocation: construction only; {@link #tick}, {@link #setPointTick},
 * {@link #readOut} and {@link #emitOnly} allocate nothing.
 */
public final class TickWorkload {

    /** Plan ticks the read-out cycles over; the plan of the smallest K benchmarked is this long. */
    public static final int WINDOW = 16;
    /** Chunks ensembled into the plan. */
    public static final int CHUNKS = 4;
    /** The first tick of plan: chunk {@code c} is accepted at tick {@code c}, so this is the last arrival. */
    public static final int FIRST_TICK = CHUNKS - 1;
    /** Temporal-ensembling weight rate m. */
    public static final double WEIGHT_RATE = 0.1;
    /** Oscillation amplitude of every joint's plan, rad. */
    public static final double AMPLITUDE = 0.5;
    /** Offset between successive chunks' plans, rad. */
    public static final double CHUNK_SPREAD = 0.001;
    /** How far from the plan {@link Motion#CATCHING_UP} starts the limiter, rad (joints alternate in sign). */
    public static final double CATCH_UP_OFFSET = 0.2;

    /** The plans of the workload. */
    public enum Motion {
        /** Amplitude {@link #AMPLITUDE}, spread {@link #CHUNK_SPREAD}: beyond every bound. */
        OSCILLATING(AMPLITUDE, CHUNK_SPREAD, false, 0.0),
        /** Amplitude 0, spread 0, the {@link #holdPose}: a constant plan exactly at rest, held from the start. */
        HOLDING(0.0, 0.0, true, 0.0),
        /**
         * Amplitude 0, spread 0, the centres {@code 0.5·sin(0.7·d)} as they are: a constant pose the
         * ensemble reads back only to within rounding (see the class comment). Not in the default
         * benchmark set; for comparison with {@link #HOLDING}.
         */
        HOLDING_ANY_POSE(0.0, 0.0, false, 0.0),
        /**
         * For the NumPy comparison: amplitude 1 µrad, spread 0, a plan inside every bound (its jerk
         * about 60 rad/s³), with the limiter started {@link #CATCH_UP_OFFSET} away from it, so the
         * minimum-time law catches up in the frame of the plan's rate and the linear zone then
         * follows it with the plan's derivatives fed forward in full (the parts of the law the
         * benchmarked motions leave out): over the 1000 ticks {@code bench/compare} checks, at
         * K = 16, the minimum-time law on 4.7 % of joint-ticks and the linear zone on 95.3 %.
         * Benchmarked, its steady state is the linear zone following a plan inside the bounds. Not
         * in the default benchmark set.
         */
        CATCHING_UP(1e-6, 0.0, false, CATCH_UP_OFFSET);

        final double amplitude;
        final double spread;
        final boolean powerOfTwoPose;
        final double startOffset;

        Motion(double amplitude, double spread, boolean powerOfTwoPose, double startOffset) {
            this.amplitude = amplitude;
            this.spread = spread;
            this.powerOfTwoPose = powerOfTwoPose;
            this.startOffset = startOffset;
        }

        /** The oscillation amplitude of this plan, rad. */
        public double amplitude() {
            return amplitude;
        }

        /** The offset between successive chunks, rad. */
        public double spread() {
            return spread;
        }
    }

    /** Position bounds of every joint, rad. */
    public static final double POSITION_BOUND = 2.8;
    /** Velocity, acceleration and jerk bounds of every joint (rad/s, rad/s², rad/s³). */
    public static final double VELOCITY = 2.0;
    public static final double ACCELERATION = 8.0;
    public static final double JERK = 80.0;

    private final int joints;
    private final int steps;
    private final long periodNanos;
    private final double periodSeconds;
    /** Control ticks per second, {@code 1e9 / periodNanos}, as the loop computes it. */
    private final double tickRate;
    private final TemporalEnsembleBlender blender;
    private final JerkLimiter limiter;
    private final CommandPort port;
    private final CommandFrame frame;
    private final double[] target;
    private final double[] velocity;
    private final double[] acceleration;
    private final double[] command;
    /** The preview of {@link #previewTick}: where its runs end, and the plan ahead read per joint as the limiter asks. */
    private final int[] runEnds;
    private final PlanPreview preview;
    private long previewTick;
    private final double[] previousCommand;
    private final double[][] chunks;
    private int lastFlags;

    /**
     * @param joints D
     * @param steps K, at least {@link #WINDOW}
     * @param periodNanos the control period
     * @param motion {@link Motion#OSCILLATING} (the limiter at its bounds every tick) or
     *     {@link Motion#HOLDING} (a constant plan the limiter holds: its cheapest path)
     */
    public TickWorkload(int joints, int steps, long periodNanos, Motion motion) {
        if (steps < WINDOW) {
            throw new IllegalArgumentException("chunk length " + steps + " is shorter than the read-out window "
                    + WINDOW);
        }
        this.joints = joints;
        this.steps = steps;
        this.periodNanos = periodNanos;
        this.periodSeconds = periodNanos / 1e9;
        this.tickRate = 1e9 / periodNanos;
        this.blender = TemporalEnsembleBlender.oldestFirst(joints, steps, 1.0, Interpolation.CUBIC_SPLINE, WEIGHT_RATE,
                taperSteps(steps));
        this.chunks = new double[CHUNKS][];
        for (int c = 0; c < CHUNKS; c++) {
            chunks[c] = chunk(joints, steps, c, motion);
            int r = blender.accept(chunks[c], steps, c, c);
            if (r != steps) {
                throw new IllegalStateException("blender took " + r + " ticks of chunk " + c + ", expected " + steps);
            }
        }
        this.limiter = JerkLimiter.create(limits(joints), periodNanos * 1e-9);
        this.runEnds = limiter.previewRunEnds();
        this.preview = (joint, out) -> blender.previewMeans(previewTick, runEnds, joint, out);
        this.target = new double[joints];
        this.velocity = new double[joints];
        this.acceleration = new double[joints];
        this.command = new double[joints];
        this.previousCommand = new double[joints];
        if (!blender.actionAt(FIRST_TICK, target)) {
            throw new IllegalStateException("the workload's plan does not cover its first tick");
        }
        double[] start = target.clone();
        for (int i = 0; i < joints; i++) {
            start[i] += startOffset(motion, i);
        }
        if (!limiter.reset(start)) {
            throw new IllegalStateException("the workload's start pose is not valid");
        }
        limiter.position(previousCommand);
        this.port = new NullPort();
        this.frame = new CommandFrame(joints);
    }

    /** How far from the plan's first position joint {@code i} starts (0 but for {@link Motion#CATCHING_UP}). */
    public static double startOffset(Motion motion, int i) {
        return (i % 2 == 0 ? 1 : -1) * motion.startOffset;
    }

    /** The runtime's default taper for chunks of {@code steps} steps (half a chunk, whole steps, at least one). */
    public static double taperSteps(int steps) {
        return BlendingConfig.DEFAULTS.taperSteps(steps);
    }

    /** The limits every benchmark uses: {@code joints} equal joints (the values of an arm of common size). */
    public static JointLimits limits(int joints) {
        JointLimits.Builder b = JointLimits.builder();
        for (int i = 0; i < joints; i++) {
            b.joint("j" + i, -POSITION_BOUND, POSITION_BOUND, VELOCITY, ACCELERATION, JERK);
        }
        return b.build();
    }

    /**
     * The centre of joint {@code d}'s motion: {@code 0.5·sin(0.7·d)}, or for a plan without motion
     * (the hold pose) that value rounded to a signed power of two ({@code ±2^k}, or 0): the
     * weighted mean {@code Σ w·p / Σ w} of identical values {@code p = ±2^k} is exactly {@code p}
     * (multiplying by a power of two commutes with rounding), and the quotient-rule derivatives
     * {@code (Σ w'·p − p·Σ w')/Σ w} exactly 0, so the plan is at rest bit for bit.
     */
    public static double holdPose(int d) {
        double c = 0.5 * Math.sin(0.7 * d);
        if (Math.abs(c) < 0x1p-8) {
            return 0.0;
        }
        return Math.copySign(Math.pow(2.0, Math.rint(Math.log(Math.abs(c)) / Math.log(2.0))), c);
    }

    /** Chunk {@code c} of the plan of {@code motion}, row-major K × D (see the class comment). */
    public static double[] chunk(int joints, int steps, int c, Motion motion) {
        double[] v = new double[steps * joints];
        for (int j = 0; j < steps; j++) {
            for (int d = 0; d < joints; d++) {
                double centre = motion.powerOfTwoPose ? holdPose(d) : 0.5 * Math.sin(0.7 * d);
                double phase = 0.37 * d;
                v[j * joints + d] = centre + motion.amplitude * Math.sin(2.0 * Math.PI * (c + j) / WINDOW + phase)
                        + c * motion.spread;
            }
        }
        return v;
    }

    /** The plan tick that tick {@code tick} reads. */
    public static long planTick(long tick) {
        return FIRST_TICK + (tick & (WINDOW - 1));
    }

    /**
     * One tick: the plan's state at {@link #planTick}, its derivatives per second, the limiter
     * following it, frame, emit.
     *
     * @return a value depending on every result (limiter flags, plan remaining, emitted), for the
     *     benchmark to return
     */
    public int tick(long tick) {
        long remaining = readState(tick);
        int flags = limiter.apply(target, velocity, acceleration, command);
        lastFlags = flags;
        return emit(tick, flags) ^ (int) remaining;
    }

    /**
     * One tick as an armed loop without a smoother runs it: the same read-out, the limiter following
     * the plan and its preview (read per joint from the blender as the limiter asks,
     * {@link dev.weft.filters.ChunkBlender#previewMeans(long, int[], int, double[])}) (the
     * receding-horizon law wherever the plan is beyond 0.9 of a bound), frame, emit. {@link TickExport}
     * writes it with {@code PREVIEW} for the NumPy tick's check.
     */
    public int previewTick(long tick) {
        long remaining = readState(tick);
        previewTick = planTick(tick);
        int flags = limiter.apply(target, velocity, acceleration, remaining > 0 ? preview : null, command);
        lastFlags = flags;
        return emit(tick, flags) ^ (int) remaining;
    }

    /** Where the preview's runs end, in ticks ahead (a copy). */
    public int[] previewRunEnds() {
        return runEnds.clone();
    }

    /**
     * One tick under the set-point law: the same read-out, then
     * {@link JerkLimiter#apply(double[], double[])}, the plan's position as a target at rest (the
     * law toward a constant target, which the limiter ran every tick before it followed the plan's
     * derivatives).
     */
    public int setPointTick(long tick) {
        long remaining = readState(tick);
        int flags = limiter.apply(target, command);
        lastFlags = flags;
        return emit(tick, flags) ^ (int) remaining;
    }

    /** Step 4 as the loop does it; returns the plan remaining. */
    private long readState(long tick) {
        long planTick = planTick(tick);
        boolean planned = blender.stateAt(planTick, target, velocity, acceleration);
        long remaining = blender.ticksRemaining(planTick);
        if (!planned) {
            for (int i = 0; i < joints; i++) {
                target[i] = Double.NaN;
                velocity[i] = 0.0;
                acceleration[i] = 0.0;
            }
        } else {
            // the blender speaks per control tick; the limiter per second
            for (int i = 0; i < joints; i++) {
                velocity[i] *= tickRate;
                acceleration[i] *= tickRate * tickRate;
            }
        }
        return remaining;
    }

    /** The read-out alone (baseline): the plan's state and the plan remaining for {@code tick}. */
    public long readOut(long tick) {
        long planTick = planTick(tick);
        boolean planned = blender.stateAt(planTick, target, velocity, acceleration);
        return blender.ticksRemaining(planTick) + (planned ? 1 : 0);
    }

    /** The frame and emit alone (baseline), with the last command. */
    public int emitOnly(long tick) {
        return emit(tick, 0);
    }

    private int emit(long tick, int flags) {
        frame.tick = tick;
        frame.timeNanos = tick * periodNanos;
        frame.state = CommandFrame.STATE_ARMED;
        frame.stopCategory = CommandFrame.STOP_NONE;
        frame.removePower = false;
        frame.limiterFlags = flags;
        boolean finite = true;
        for (int i = 0; i < joints; i++) {
            double q = command[i];
            // as the loop sends it: the finite difference of the commands, the quantity the limiter bounds
            double v = (q - previousCommand[i]) / periodSeconds;
            finite &= Double.isFinite(q) && Double.isFinite(v);
            frame.positions[i] = q;
            frame.velocities[i] = v;
        }
        if (finite) {
            System.arraycopy(command, 0, previousCommand, 0, joints);
        }
        boolean emitted = finite && port.emit(frame);
        return emitted ? flags : ~flags;
    }

    /** The limiter's flags of the last tick, all joints or-ed ({@code JerkLimiter} constants). */
    public int lastFlags() {
        return lastFlags;
    }

    /** The flags of joint {@code i} at the last tick ({@code JerkLimiter} constants). */
    public int flags(int i) {
        return limiter.flags(i);
    }

    /** The plan's position of the last tick; live view, do not modify. */
    public double[] target() {
        return target;
    }

    /** The plan's velocity of the last tick, units/s, as the limiter got it; live view, do not modify. */
    public double[] targetVelocity() {
        return velocity;
    }

    /** The plan's acceleration of the last tick, units/s², as the limiter got it; live view, do not modify. */
    public double[] targetAcceleration() {
        return acceleration;
    }

    /** The command of the last tick; live view, do not modify. */
    public double[] command() {
        return command;
    }

    /** The velocity of the commanded trajectory of joint {@code i} at the last tick (the limiter's state). */
    public double velocity(int i) {
        return limiter.velocity(i);
    }

    /** The acceleration of the commanded trajectory of joint {@code i} at the last tick (the limiter's state). */
    public double acceleration(int i) {
        return limiter.acceleration(i);
    }

    /** The frame of the last emit; live view, do not modify. */
    public CommandFrame frame() {
        return frame;
    }

    /** Chunk {@code c} as accepted at construction; do not modify. */
    public double[] acceptedChunk(int c) {
        return chunks[c];
    }

    /** The taper length of the blender, in control ticks. */
    public long taperTicks() {
        return blender.taperTicks();
    }

    public int joints() {
        return joints;
    }

    public int steps() {
        return steps;
    }

    /** Frames the port took. */
    public long emitted() {
        return port.emitted();
    }
}
