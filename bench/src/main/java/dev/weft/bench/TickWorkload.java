package dev.weft.bench;

import dev.weft.filters.Interpolation;
import dev.weft.filters.TemporalEnsembleBlender;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.port.NullPort;
import dev.weft.safety.JerkLimiter;
import dev.weft.safety.JointLimits;

/**
 * The control tick as the benchmarks and the NumPy comparison run it: the blend read-out, the
 * jerk-limited limiter and the emit of one command frame to a port, steps 4, 6 and 8 of the
 * tick in the design (the observation, inference hand-off and telemetry steps are not part of
 * it; chunk acceptance is measured on its own).
 *
 * <p><b>Plan.</b> {@link #CHUNKS} chunks of K actions of D joints, all from the observation of
 * tick 0, are ensembled once at construction (oldest first, weight rate {@link #WEIGHT_RATE},
 * step ratio 1, linear interpolation). Joint {@code d}, step {@code j} of chunk {@code c} is
 * {@code centre(d) + A·sin(2π·j/WINDOW + phase(d)) + c·CHUNK_SPREAD}, A the motion's amplitude. Tick {@code n}
 * reads plan tick {@code n mod WINDOW}: the plan is periodic over {@link #WINDOW} ticks, which
 * every K in use covers, so the limiter gets the same target sequence whatever K is and a
 * difference in cost between K values can only come from the blender. The oscillation
 * (62.5 Hz at 1 kHz) is faster than the jerk bound lets a joint follow, so the limiter works at
 * its jerk bound on every joint every tick (each tick checks the full-jerk successor of every
 * joint against every bound), and on about 1.5 % of ticks some joint runs the 24-step bisection
 * over the jerk blend: a demanding workload.
 * {@link Motion#HOLDING} is the other end: a constant plan the limiter already holds, its
 * cheapest path.
 *
 * <p><b>Frame.</b> Each tick fills a {@link CommandFrame} (tick, time, limiter flags, positions
 * and velocities, with the finite check the loop makes) and hands it to a {@link NullPort},
 * which counts it: the emit costs what the port interface costs, nothing more.
 *
 * <p>Threading: one thread. Allocation: construction only; {@link #tick} allocates nothing.
 */
public final class TickWorkload {

    /** Plan ticks the read-out cycles over; no larger than the smallest K benchmarked. */
    public static final int WINDOW = 16;
    /** Chunks ensembled into the plan. */
    public static final int CHUNKS = 4;
    /** Temporal-ensembling weight rate m. */
    public static final double WEIGHT_RATE = 0.1;
    /** Oscillation amplitude of every joint's plan, rad. */
    public static final double AMPLITUDE = 0.02;
    /** The two plans of the workload. */
    public enum Motion {
        /** Amplitude {@link #AMPLITUDE}: faster than the jerk bound lets a joint follow. */
        OSCILLATING(AMPLITUDE),
        /** Amplitude 0: a constant pose per joint, reached at the start. */
        HOLDING(0.0);

        final double amplitude;

        Motion(double amplitude) {
            this.amplitude = amplitude;
        }

        /** The oscillation amplitude of this plan, rad. */
        public double amplitude() {
            return amplitude;
        }
    }

    /** Offset between successive chunks' plans, rad. */
    public static final double CHUNK_SPREAD = 0.001;
    /** Position bounds of every joint, rad. */
    public static final double POSITION_BOUND = 2.8;
    /** Velocity, acceleration and jerk bounds of every joint (rad/s, rad/s², rad/s³). */
    public static final double VELOCITY = 2.0;
    public static final double ACCELERATION = 8.0;
    public static final double JERK = 80.0;

    private final int joints;
    private final int steps;
    private final long periodNanos;
    private final TemporalEnsembleBlender blender;
    private final JerkLimiter limiter;
    private final CommandPort port;
    private final CommandFrame frame;
    private final double[] target;
    private final double[] command;
    private final double[][] chunks;
    private int lastFlags;

    /**
     * @param joints D
     * @param steps K, at least {@link #WINDOW}
     * @param periodNanos the control period
     * @param motion {@link Motion#OSCILLATING} (the dearest limiter path every tick) or
     *     {@link Motion#HOLDING} (a constant plan the limiter has reached: its cheapest path)
     */
    public TickWorkload(int joints, int steps, long periodNanos, Motion motion) {
        if (steps < WINDOW) {
            throw new IllegalArgumentException("chunk length " + steps + " is shorter than the read-out window "
                    + WINDOW);
        }
        this.joints = joints;
        this.steps = steps;
        this.periodNanos = periodNanos;
        this.blender = TemporalEnsembleBlender.oldestFirst(joints, steps, 1.0, Interpolation.LINEAR, WEIGHT_RATE);
        this.chunks = new double[CHUNKS][];
        for (int c = 0; c < CHUNKS; c++) {
            chunks[c] = chunk(joints, steps, c, motion.amplitude);
            int r = blender.accept(chunks[c], steps, 0, 0);
            if (r != steps) {
                throw new IllegalStateException("blender took " + r + " ticks of chunk " + c + ", expected " + steps);
            }
        }
        this.limiter = JerkLimiter.create(limits(joints), periodNanos * 1e-9);
        this.target = new double[joints];
        this.command = new double[joints];
        if (!blender.actionAt(0, target) || !limiter.reset(target)) {
            throw new IllegalStateException("the workload's first action is not a valid start pose");
        }
        this.port = new NullPort();
        this.frame = new CommandFrame(joints);
    }

    /** The limits every benchmark uses: {@code joints} equal joints (the values of an arm of common size). */
    public static JointLimits limits(int joints) {
        JointLimits.Builder b = JointLimits.builder();
        for (int i = 0; i < joints; i++) {
            b.joint("j" + i, -POSITION_BOUND, POSITION_BOUND, VELOCITY, ACCELERATION, JERK);
        }
        return b.build();
    }

    /** Chunk {@code c} of the plan, row-major K × D, with the given oscillation amplitude. */
    public static double[] chunk(int joints, int steps, int c, double amplitude) {
        double[] v = new double[steps * joints];
        for (int j = 0; j < steps; j++) {
            for (int d = 0; d < joints; d++) {
                double centre = 0.5 * Math.sin(0.7 * d);
                double phase = 0.37 * d;
                v[j * joints + d] = centre + amplitude * Math.sin(2.0 * Math.PI * j / WINDOW + phase) + c * CHUNK_SPREAD;
            }
        }
        return v;
    }

    /**
     * One tick: read-out of plan tick {@code tick mod WINDOW}, limiter, frame, emit.
     *
     * @return a value depending on every result (limiter flags, plan remaining, emitted), for the
     *     benchmark to return
     */
    public int tick(long tick) {
        long planTick = tick & (WINDOW - 1);
        boolean planned = blender.actionAt(planTick, target);
        long remaining = blender.ticksRemaining(planTick);
        if (!planned) {
            for (int i = 0; i < joints; i++) {
                target[i] = Double.NaN;
            }
        }
        int flags = limiter.apply(target, command);
        lastFlags = flags;
        return emit(tick, flags) ^ (int) remaining;
    }

    /** The read-out alone (baseline): the blended action and the plan remaining for {@code tick}. */
    public long readOut(long tick) {
        long planTick = tick & (WINDOW - 1);
        boolean planned = blender.actionAt(planTick, target);
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
        frame.limiterFlags = flags;
        boolean finite = true;
        for (int i = 0; i < joints; i++) {
            double q = command[i];
            double v = limiter.velocity(i);
            finite &= Double.isFinite(q) && Double.isFinite(v);
            frame.positions[i] = q;
            frame.velocities[i] = v;
        }
        boolean emitted = finite && port.emit(frame);
        return emitted ? flags : ~flags;
    }

    /** The limiter's flags of the last {@link #tick}, all joints or-ed ({@code JerkLimiter} constants). */
    public int lastFlags() {
        return lastFlags;
    }

    /** The target of the last tick (the blender's read-out); live view, do not modify. */
    public double[] target() {
        return target;
    }

    /** The command of the last tick; live view, do not modify. */
    public double[] command() {
        return command;
    }

    /** The commanded velocity of joint {@code i} at the last tick. */
    public double velocity(int i) {
        return limiter.velocity(i);
    }

    /** Chunk {@code c} as accepted at construction; do not modify. */
    public double[] acceptedChunk(int c) {
        return chunks[c];
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
