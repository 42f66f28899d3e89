package dev.weft.runtime.loop;

import dev.weft.filters.ChunkBlender;
import dev.weft.filters.Smoother;
import dev.weft.runtime.policy.InputBinding;
import dev.weft.runtime.policy.PolicyInput;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.source.ObservationSource;
import dev.weft.runtime.telemetry.CsvRecorder;
import dev.weft.runtime.telemetry.TelemetryRow;
import dev.weft.safety.Cause;
import dev.weft.safety.PlanPreview;
import dev.weft.safety.StopCategory;
import dev.weft.safety.Supervisor;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.TransitionListener;
import dev.weft.safety.Watchdog;
import dev.weft.safety.WatchdogCondition;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.atomic.AtomicReferenceArray;
import java.util.concurrent.locks.LockSupport;
import java.util.function.Function;
import org.HdrHistogram.Histogram;
import org.HdrHistogram.SingleWriterRecorder;

/**
 * The fixed-rate control loop: one thread, absolute deadlines {@code t0 + n·Δc}, each tick the
 * nine steps of the design (read the observation, request inference on schedule, drain finished
 * chunks into the blender, read the target, smooth, limit and supervise, check the watchdog,
 * emit, record telemetry).
 *
 * <p><b>Overruns.</b> A tick that ends after the next deadline is an overrun, counted, and the
 * consecutive count goes to the watchdog. The loop never catches up by running ticks back to
 * back: when it wakes more than one period late, the deadlines it missed are skipped (counted in
 * {@link LoopStatus#skipped()}), and it runs the tick whose deadline passed last, so tick numbers
 * stay tied to time and the plan is never shifted. Each executed tick sends one command and writes
 * one telemetry row.
 *
 * <p><b>Commands from other threads</b> ({@link #arm}, {@link #disarm}, {@link #reset},
 * {@link #operatorStop}) are handed to the loop thread through a one-slot mailbox and carried out
 * at the start of the next tick; the caller waits for the outcome, the loop never waits for the
 * caller.
 *
 * <p><b>Timing records</b> go into HdrHistogram recorders (period error with coordinated-omission
 * correction at the control period, compute time, inference latency), read by
 * {@link #histograms} from another thread without stopping the loop.
 *
 * <p>Threading: the loop thread runs every step; {@link #start}, {@link #shutdown}, {@link #close}
 * and the commands come from other threads. The steady-state tick allocates nothing and never
 * blocks.
 */
public final class ControlLoop implements AutoCloseable {

    /** Largest value the histograms record; larger values are clamped to it. */
    public static final long HISTOGRAM_MAX_NANOS = TimeUnit.SECONDS.toNanos(10);

    private static final int CMD_NONE = 0;
    private static final int CMD_ARM = 1;
    private static final int CMD_DISARM = 2;
    private static final int CMD_RESET = 3;

    /** {@link #arm} result: there was no plan covering the current tick to arm toward. */
    public static final int ARM_REFUSED_NO_PLAN = Cause.ARM_REFUSED_NO_PLAN;
    /** Result of a command the loop did not carry out within the caller's timeout. */
    public static final int COMMAND_TIMED_OUT = -1;
    /** Result of a command given when the loop is not running. */
    public static final int NOT_RUNNING = -2;
    /**
     * Between ticks the loop thread only waits for its deadline; a wait longer than the stall
     * bound by this margin means the thread is not being run at all.
     */
    static final long IDLE_STALL_MARGIN_NANOS = TimeUnit.MILLISECONDS.toNanos(250);

    private final LoopClock clock;
    private final WaitStrategy wait;
    private final LoopSettings settings;
    private final long period;
    private final ObservationSource source;
    private final dev.weft.runtime.source.FollowsCommands follower;
    private final Inference worker;
    private final ChunkBlender blender;
    private final Smoother smoother;
    private final Watchdog watchdog;
    private final Function<double[], Supervisor> supervisorFactory;
    private final CommandPort port;
    private final CsvRecorder<TelemetryRow> telemetry;
    private final int joints;
    private final int[] positionIndex;
    private final StopCategory stopCategory;
    private final boolean virtualTime;

    private final double[] observation;
    private final double[] measured;
    private final double[] target;
    /** The plan's velocity at this tick, units/s. */
    private final double[] targetVelocity;
    /** The plan's acceleration at this tick, units/s^2. */
    private final double[] targetAcceleration;
    /** The plan ahead for the limiter's receding-horizon law (not with a smoother: the preview would be unsmoothed). */
    private final BlenderPreview preview = new BlenderPreview();
    private final Smoother velocitySmoother;
    private final Smoother accelerationSmoother;
    /** Control ticks per second. */
    private final double tickRate;
    private final double[] command;
    private final double[] previousCommand;
    private final double periodSeconds;
    private final CommandFrame frame;
    private final Sink sink = new Sink();

    private final SingleWriterRecorder periodError = new SingleWriterRecorder(HISTOGRAM_MAX_NANOS, 3);
    private final SingleWriterRecorder compute = new SingleWriterRecorder(HISTOGRAM_MAX_NANOS, 3);
    private final SingleWriterRecorder inference = new SingleWriterRecorder(HISTOGRAM_MAX_NANOS, 3);

    private Supervisor supervisor;
    private Thread thread;
    private long t0;
    private volatile boolean running;
    private volatile boolean shutdownRequested;
    private volatile boolean operatorStopRequested;
    private volatile Throwable failure;

    // mailbox
    private final Object commandLock = new Object();
    private volatile int commandKind;
    private volatile long commandSeq;
    private volatile long resultSeq;
    private volatile int commandResult;
    private long handledSeq;

    // loop-thread state
    private long tick;
    private long consecutiveOverruns;
    private long lastLatencyNanos;
    private long requestedAtNanos = -1;
    private long newestOrigin = -1;
    private boolean nonFiniteThisTick;
    private long shutdownDeadline = -1;
    private boolean autoArmPending;
    private volatile int autoArmResult = Integer.MIN_VALUE;
    /** The next tick at which a query is due ({@link LoopSettings#queryEveryTicks()} > 0). */
    private long nextQueryTick;
    /** A query fell due and has not been issued yet (the worker was busy, or no new usable observation). */
    private boolean queryPending;
    /** The time stamp of the last observation queried; a query waits for a newer one. */
    private long lastQueriedStamp = Long.MIN_VALUE;
    /** The request handed to the worker, refilled in place. */
    private final PolicyInput query;
    /** The observation stream's samples, kept per tick for the policy's history grids; null without grids. */
    private final SampleHistory history;
    /** Watched cameras: each one's frame reader (the loop's own), its age bound, its latest age. */
    private Camera[] cameras = new Camera[0];
    /** Each watched camera's first frame stamp seen, or −1 before its first frame. */
    private long[] firstFrameStamp = new long[0];
    private long[] frameAge = new long[0];
    /** Watchdog bits of the conditions the loop itself saw this tick, before the watchdog check. */
    private int reportedNow;
    /** Bits seen after the check (the command had gone out): reported at the next tick's check. */
    private int reportedNext;
    /** What the loop reported at the previous check: a detail is written when a condition begins. */
    private int lastReported;
    private int consecutiveSupervisorFaults;
    private int consecutiveEscapes;
    /**
     * How old a queried observation may be with its history grids still complete: the sample ring
     * holds this much more than the grids' span (an older observation is stale long before).
     */
    private static final long HISTORY_LATENESS_NANOS = 1_000_000_000L;
    /** A tick that throws past every guard this many times in a row ends the loop (with the alarm). */
    private static final int ESCAPES_MAX = 3;
    private double[] rangeLow;
    private double[] rangeHigh;
    private String[] limitNames;

    // fault details and the loop monitor
    /** Detail text of each watchdog code's latest occurrence (index = code), written when it begins. */
    private final AtomicReferenceArray<String> details = new AtomicReferenceArray<>(WatchdogCondition.values().length + 1);
    /** Clock time at the end of the last completed tick (wall-clock runs), read by the monitor. */
    private final AtomicLong progressNanos = new AtomicLong();
    /** When the tick in progress began its work (after its wait); greater than progressNanos while in a tick. */
    private final AtomicLong tickBeganNanos = new AtomicLong();
    private final AtomicLong tickFaults = new AtomicLong();
    private final AtomicLong stalls = new AtomicLong();
    private final AtomicLong rejectedChunks = new AtomicLong();
    private volatile boolean stallActive;
    private volatile boolean stallPending;
    private volatile TransitionListener alarmListener = TransitionListener.NONE;
    private Thread monitor;

    // published counters (written by the loop thread with release semantics)
    private final AtomicLong ticks = new AtomicLong();
    private final AtomicLong overruns = new AtomicLong();
    private final AtomicLong skipped = new AtomicLong();
    private final AtomicLong planTicks = new AtomicLong();
    private final AtomicLong watchdogMask = new AtomicLong();
    private final AtomicLong inferences = new AtomicLong();
    private final AtomicLong inferenceFailures = new AtomicLong();
    private final AtomicLong deferredQueries = new AtomicLong();
    private volatile SupervisorState state = SupervisorState.DISARMED;

    /**
     * Assembles a loop from its parts; nothing runs until {@link #start}.
     *
     * @param supervisorFactory builds the supervisor once the first observation gives the measured
     *     pose it holds at; it must pass every transition to the listener it was built with
     * @param telemetry the telemetry recorder, or null for none
     */
    public ControlLoop(LoopClock clock, WaitStrategy wait, LoopSettings settings, ObservationSource source,
                       Inference worker, ChunkBlender blender, Smoother smoother, Watchdog watchdog,
                       Function<double[], Supervisor> supervisorFactory, StopCategory stopCategory, CommandPort port,
                       CsvRecorder<TelemetryRow> telemetry) {
        this.clock = clock;
        this.wait = wait;
        this.settings = settings;
        this.period = settings.periodNanos();
        this.source = source;
        this.follower = source instanceof dev.weft.runtime.source.FollowsCommands f ? f : null;
        this.worker = worker;
        this.blender = blender;
        this.smoother = smoother;
        // a smoother is linear (or close to it), so the plan's derivatives go through copies of it:
        // exactly the derivatives of the smoothed plan for a linear time-invariant filter
        this.velocitySmoother = smoother == null ? null : smoother.fresh();
        this.accelerationSmoother = smoother == null ? null : smoother.fresh();
        this.watchdog = watchdog;
        this.supervisorFactory = supervisorFactory;
        this.stopCategory = stopCategory;
        this.port = port;
        this.telemetry = telemetry;
        this.virtualTime = clock instanceof ManualClock;
        this.joints = blender.dimensions();
        this.positionIndex = settings.positionIndex();
        if (positionIndex.length != joints) {
            throw new IllegalArgumentException("position index has " + positionIndex.length + " entries for "
                    + joints + " joints");
        }
        for (int i : positionIndex) {
            if (i < 0 || i >= source.size()) {
                throw new IllegalArgumentException("position index " + i + " is outside the observation of "
                        + source.size() + " values");
            }
        }
        this.observation = new double[source.size()];
        this.measured = new double[joints];
        this.target = new double[joints];
        this.targetVelocity = new double[joints];
        this.targetAcceleration = new double[joints];
        this.command = new double[joints];
        this.previousCommand = new double[joints];
        this.periodSeconds = settings.periodNanos() / 1e9;
        this.tickRate = 1e9 / settings.periodNanos();
        this.frame = new CommandFrame(joints);
        java.util.List<InputBinding.History> grids = worker.histories();
        this.query = new PolicyInput(source.size(), grids);
        long span = 0;
        for (InputBinding.History g : grids) {
            span = Math.max(span, g.spanNanos());
        }
        this.history = grids.isEmpty() ? null
                : new SampleHistory(source.size(), SampleHistory.capacityFor(span, HISTORY_LATENESS_NANOS, period));
        primeRecorders();
    }

    /**
     * Records values across the whole range once, then discards them: every branch of the
     * histograms' recording code has been taken before the loop runs, so the compiler does not
     * meet a first-time branch (and deoptimise, with a pause) in the middle of a live run.
     */
    private void primeRecorders() {
        for (SingleWriterRecorder r : new SingleWriterRecorder[] {periodError, compute, inference}) {
            for (long v = 1; v > 0 && v <= HISTOGRAM_MAX_NANOS; v = v * 3 + 1) {
                r.recordValue(v);
                r.recordValueWithExpectedInterval(v, period);
            }
            r.recordValue(0);
            r.recordValue(HISTOGRAM_MAX_NANOS);
            r.getIntervalHistogram();
        }
    }

    /**
     * Waits for the first observation (up to the configured timeout), builds the supervisor at the
     * measured pose and starts the loop thread, disarmed.
     *
     * @throws IllegalStateException when no observation arrived in time or the pose is not accepted
     */
    public void start(String threadName) {
        prepare();
        thread = new Thread(this::run, threadName);
        // a loop thread stuck in a port must not keep the process alive after the run is given up
        thread.setDaemon(true);
        thread.start();
        if (!virtualTime) {
            monitor = new Thread(this::watchLoop, threadName + "-monitor");
            monitor.setDaemon(true);
            monitor.start();
        }
    }

    /** Everything {@link #start} does but starting the thread; tests then call {@link #runTick()}. */
    void prepare() {
        long waitStart = System.nanoTime();
        long time;
        while ((time = source.latest(observation)) < 0) {
            if (System.nanoTime() - waitStart > settings.firstObservationTimeoutNanos()) {
                throw new IllegalStateException("no observation arrived within "
                        + TimeUnit.NANOSECONDS.toMillis(settings.firstObservationTimeoutNanos()) + " ms from "
                        + source.describe());
            }
            if (clock instanceof ManualClock) {
                throw new IllegalStateException("no observation available at the start of a virtual-time run");
            }
            LockSupport.parkNanos(TimeUnit.MILLISECONDS.toNanos(1));
        }
        for (int i = 0; i < joints; i++) {
            measured[i] = observation[positionIndex[i]];
        }
        supervisor = supervisorFactory.apply(measured.clone());
        preview.runEnds = supervisor.previewRunEnds();
        dev.weft.safety.JointLimits limits = supervisor.limits();
        if (limits.count() != joints) {
            throw new IllegalArgumentException("the supervisor has " + limits.count() + " joints, the blender " + joints);
        }
        rangeLow = new double[joints];
        rangeHigh = new double[joints];
        limitNames = new String[joints];
        for (int i = 0; i < joints; i++) {
            rangeLow[i] = limits.positionMin(i) - settings.planRangeSlack();
            rangeHigh[i] = limits.positionMax(i) + settings.planRangeSlack();
            limitNames[i] = limits.name(i);
        }
        System.arraycopy(measured, 0, command, 0, joints);
        System.arraycopy(measured, 0, previousCommand, 0, joints);
        autoArmPending = settings.armWhenPlanned();
        running = true;
        t0 = clock.nanoTime();
        progressNanos.set(t0);
    }

    /**
     * With {@link LoopSettings#armWhenPlanned()}: 0 when the loop armed by itself, a refusal cause
     * when it tried and was refused, {@link Integer#MIN_VALUE} while it has not tried yet.
     */
    public int autoArmResult() {
        return autoArmResult;
    }

    private void run() {
        try {
            while (true) {
                if (settings.maxTicks() > 0 && tick >= settings.maxTicks()) {
                    break;
                }
                if (shutdownRequested && atRestOrDisarmed()) {
                    break;
                }
                runTick();
            }
        } catch (Throwable t) {
            failure = t;
            // the loop cannot go on: no command goes out from here, so raise the alarm now
            raiseStall(tick, "the loop thread ended: " + t);
        } finally {
            running = false;
        }
    }

    /**
     * The loop monitor (wall-clock runs only): raises the loop-stalled alarm when a tick has been
     * at work for more than {@link LoopSettings#stallPeriods()} periods without completing (a port,
     * a source or a callback blocking), or when no tick has begun for that bound plus
     * {@link #IDLE_STALL_MARGIN_NANOS} (a loop thread that does not wake at all; the first tick,
     * which runs cold, gets this bound too); clears the
     * alarm's state once ticks complete again (the supervisor has latched the fault by then). A
     * loop that is merely woken late between ticks is not stalled: that is an overrun, counted
     * and bounded by the watchdog's overrun condition.
     */
    private void watchLoop() {
        long bound = settings.stallPeriods() * period;
        long poll = Math.max(TimeUnit.MICROSECONDS.toNanos(100), Math.min(period / 2, TimeUnit.MILLISECONDS.toNanos(5)));
        long seen = progressNanos.get();
        while (running) {
            LockSupport.parkNanos(poll);
            long last = progressNanos.get();
            if (stallActive) {
                if (last != seen) {
                    stallActive = false;
                }
            } else {
                // read in this order: if the tick that began at `began` had not completed when
                // `last` was read, it was at work at `now`, for now - began at least
                long began = tickBeganNanos.get();
                long now = clock.nanoTime();
                last = progressNanos.get();
                boolean inTick = began > last;
                long gap = inTick ? now - began : now - last;
                // the first tick runs cold (class loading, the interpreter): it gets the long bound
                long limit = inTick && ticks.get() > 0 ? bound : bound + IDLE_STALL_MARGIN_NANOS;
                if (gap > limit && running) {
                    raiseStall(tick, (inTick ? "tick " + tick + " has been at work for " : "no tick has begun for ")
                            + String.format(java.util.Locale.ROOT, "%.1f", gap / 1e6) + " ms (bound "
                            + settings.stallPeriods() + " periods = "
                            + String.format(java.util.Locale.ROOT, "%.1f", bound / 1e6) + " ms"
                            + (limit == bound ? "" : " + " + IDLE_STALL_MARGIN_NANOS / 1_000_000 + " ms")
                            + "); the loop thread is at " + topFrame());
                }
            }
            seen = last;
        }
    }

    private String topFrame() {
        Thread t = thread;
        StackTraceElement[] st = t == null ? new StackTraceElement[0] : t.getStackTrace();
        for (StackTraceElement e : st) {
            String c = e.getClassName();
            if (!c.startsWith("java.") && !c.startsWith("jdk.") && !c.startsWith("sun.")) {
                return e.toString();
            }
        }
        return st.length > 0 ? st[0].toString() : "an unknown place";
    }

    /** Raises the loop-stalled alarm: the counter, the state, the port's hook, then the event. Any thread. */
    private synchronized void raiseStall(long atTick, String why) {
        details.set(WatchdogCondition.LOOP_STALLED.code(), why);
        stalls.incrementAndGet();
        stallActive = true;
        stallPending = true;
        SupervisorState from = state;
        // the port first: it is the one part that may still act on the hardware
        try {
            port.loopStalled(atTick);
        } catch (Throwable ignored) {
            // documented: the hook's exceptions are ignored
        }
        try {
            alarmListener.onTransition(atTick, atTick * period, from, SupervisorState.STALLED,
                    WatchdogCondition.LOOP_STALLED.code());
        } catch (RuntimeException ignored) {
            // a listener's failure must not end the monitor
        }
    }

    private boolean atRestOrDisarmed() {
        SupervisorState s = supervisor.state();
        if (s == SupervisorState.DISARMED || s == SupervisorState.FAULTED) {
            return true;
        }
        if (shutdownDeadline < 0) {
            shutdownDeadline = clock.nanoTime() + settings.shutdownStopTimeoutNanos();
            supervisor.requestDisarm();
        }
        return clock.nanoTime() > shutdownDeadline;
    }

    /**
     * One tick; package-visible for tests that drive the loop on their own thread. Every step is
     * guarded: an exception becomes its own watchdog cause (policy, port, telemetry, any other step)
     * with its class and message kept as the detail, and the tick still ends with its command sent
     * (where the port can take it), its telemetry row and the next deadline.
     */
    void runTick() {
        long n = tick;
        try {
            tickBody(n);
            consecutiveEscapes = 0;
        } catch (Throwable t) {
            // only a failure of the guards themselves gets here (an Error while building a detail,
            // say); the next tick reports it, and a loop that cannot get through a tick at all
            // gives up with the loop-stalled alarm rather than spin
            tickFaults.lazySet(tickFaults.get() + 1);
            reportedNext |= WatchdogCondition.TICK_EXCEPTION.bit();
            if (++consecutiveEscapes >= ESCAPES_MAX) {
                throw new IllegalStateException("control tick " + n + " failed " + consecutiveEscapes
                        + " times in a row: " + t, t);
            }
        } finally {
            advance(n);
        }
    }

    private void tickBody(long n) {
        long deadline = t0 + n * period;
        wait.awaitDeadline(clock, deadline);
        long start = clock.nanoTime();
        if (!virtualTime) {
            tickBeganNanos.lazySet(start);
        }
        long lateness = start - deadline;
        reportedNow = 0;

        // 1 observation: stamped in the loop's clock, checked before anything uses it
        long obsTime;
        try {
            obsTime = source.latest(observation);
        } catch (Throwable t) {
            obsTime = -1;
            fault(WatchdogCondition.TICK_EXCEPTION, "observation source", t);
        }
        boolean usable = obsTime >= 0;
        long ahead = usable ? lead(obsTime, start) : 0;
        if (ahead > 0) {
            usable = false;
            if (begins(WatchdogCondition.OBSERVATION_AHEAD)) {
                detail(WatchdogCondition.OBSERVATION_AHEAD, "the observation is stamped "
                        + String.format(java.util.Locale.ROOT, "%.3f", ahead / 1e6)
                        + " ms ahead of the loop clock (tolerance "
                        + String.format(java.util.Locale.ROOT, "%.3f", settings.observationAheadMaxNanos() / 1e6)
                        + " ms): the source must stamp samples with the loop's clock (System.nanoTime), not wall-clock"
                        + " or another machine's time");
            }
            reportedNow |= WatchdogCondition.OBSERVATION_AHEAD.bit();
        }
        if (usable) {
            int bad = firstNonFinite(observation);
            if (bad >= 0) {
                usable = false;
                if (begins(WatchdogCondition.NON_FINITE_OBSERVATION)) {
                    detail(WatchdogCondition.NON_FINITE_OBSERVATION, "observation value " + bad + " is "
                            + observation[bad] + " (from " + source.describe() + ")");
                }
                reportedNow |= WatchdogCondition.NON_FINITE_OBSERVATION.bit();
            }
        }
        long obsAge = obsTime < 0 ? -1 : Math.max(0, start - obsTime);
        if (cameras.length > 0) {
            checkCameras(start);
        }

        handleCommand(n, deadline);

        // the history grids' samples: kept per tick from the stream, never per inference call
        if (usable && history != null) {
            history.keep(obsTime, observation);
        }

        // 3 finished chunks, drained before the request so that a worker that finished is free
        // for it at this tick; 2 the request on schedule; 3 again, for a result ready at once
        nonFiniteThisTick = false;
        sink.now = n;
        drain(n);
        request(n, start, usable, obsTime);
        drain(n);

        // 4 the plan's state at this tick, 5 smoothing
        boolean planned;
        long remaining;
        try {
            planned = blender.stateAt(n, target, targetVelocity, targetAcceleration);
            remaining = blender.ticksRemaining(n);
            preview.tick = n;
            if (planned) {
                // the blender speaks per control tick; the limiter per second
                for (int i = 0; i < joints; i++) {
                    targetVelocity[i] *= tickRate;
                    targetAcceleration[i] *= tickRate * tickRate;
                }
                if (smoother != null) {
                    smoother.apply(target, target);
                    velocitySmoother.apply(targetVelocity, targetVelocity);
                    accelerationSmoother.apply(targetAcceleration, targetAcceleration);
                }
            }
        } catch (Throwable t) {
            planned = false;
            remaining = 0;
            fault(WatchdogCondition.TICK_EXCEPTION, smoother == null ? "blender" : "blender or smoother", t);
        }
        if (!planned) {
            for (int i = 0; i < joints; i++) {
                target[i] = Double.NaN;
                targetVelocity[i] = 0.0;
                targetAcceleration[i] = 0.0;
            }
        }

        if (autoArmPending && planned && watchdog.lastCode() == 0 && supervisor.state() == SupervisorState.DISARMED) {
            autoArmPending = false;
            for (int i = 0; i < joints; i++) {
                measured[i] = observation[positionIndex[i]];
            }
            autoArmResult = supervisor.arm(n, deadline - t0, measured, target);
        }

        // 7 watchdog (before the supervisor, so a fault seen at tick n shapes tick n's command);
        // faults seen after the command went out (port, telemetry) arrive through reportedNext
        boolean portFault;
        try {
            portFault = port.faulted();
        } catch (Throwable t) {
            portFault = false;
            fault(WatchdogCondition.PORT_EXCEPTION, "port.faulted()", t);
        }
        if (telemetry != null && telemetry.faulted()) {
            if (begins(WatchdogCondition.TELEMETRY_FAULT)) {
                detail(WatchdogCondition.TELEMETRY_FAULT, "the telemetry recorder could not write to "
                        + telemetry.file());
            }
            reportedNow |= WatchdogCondition.TELEMETRY_FAULT.bit();
        }
        if (stallPending) {
            stallPending = false;
            reportedNow |= WatchdogCondition.LOOP_STALLED.bit();
        }
        int reported = reportedNow | reportedNext;
        reportedNext = 0;
        long inFlight = requestedAtNanos >= 0 ? start - requestedAtNanos : 0;
        long latency = Math.max(lastLatencyNanos, inFlight);
        int code = watchdog.check(n, obsAge, (int) Math.min(remaining, Integer.MAX_VALUE), latency,
                (int) Math.min(consecutiveOverruns, Integer.MAX_VALUE), portFault, nonFiniteThisTick,
                operatorStopRequested, reported);
        lastReported = reported;

        // 6 limiter, inside the supervisor: hold when disarmed or faulted, soft start, stop. Without
        // a plan the target is NaN, which the supervisor treats as a fault while moving and ignores
        // while holding, so starvation stops the robot even with PLAN_STARVED switched off.
        SupervisorState s;
        boolean supervised;
        try {
            s = supervisor.step(n, deadline - t0, target, targetVelocity, targetAcceleration,
                    planned && smoother == null ? preview : null, code, command);
            supervised = true;
            consecutiveSupervisorFaults = 0;
        } catch (Throwable t) {
            // the safety core itself failed: no command it did not compute goes out; the drives'
            // own timeouts take over while the next tick tries again with the fault, and a core
            // that keeps failing ends the loop with the loop-stalled alarm
            s = supervisor.state();
            supervised = false;
            postFault(WatchdogCondition.TICK_EXCEPTION, "supervisor", t);
            if (++consecutiveSupervisorFaults > settings.stallPeriods()) {
                throw new IllegalStateException("the supervisor failed " + consecutiveSupervisorFaults
                        + " ticks in a row, the last at tick " + n + ": " + t, t);
            }
        }

        // 8 emit (invariant 2: nothing non-finite reaches the port)
        frame.tick = n;
        frame.timeNanos = deadline - t0;
        frame.state = (byte) s.ordinal();
        frame.stopCategory = s == SupervisorState.STOPPING || s == SupervisorState.FAULTED
                ? (stopCategory == StopCategory.CATEGORY_1 ? CommandFrame.STOP_CATEGORY_1 : CommandFrame.STOP_CATEGORY_2)
                : CommandFrame.STOP_NONE;
        frame.removePower = supervisor.powerRemovalRequested();
        frame.limiterFlags = supervisor.limiterFlags();
        boolean finite = supervised;
        for (int i = 0; i < joints; i++) {
            double q = command[i];
            // the velocity sent is the finite difference of the commands, the quantity the
            // limiter bounds; the limiter's internal continuous velocity can differ from it
            double v = (q - previousCommand[i]) / periodSeconds;
            finite &= Double.isFinite(q) && Double.isFinite(v);
            frame.positions[i] = q;
            frame.velocities[i] = v;
        }
        if (finite) {
            System.arraycopy(command, 0, previousCommand, 0, joints);
        }
        boolean emitted = false;
        if (finite) {
            try {
                emitted = port.emit(frame);
            } catch (Throwable t) {
                postFault(WatchdogCondition.PORT_EXCEPTION, "port.emit", t);
            }
            if (follower != null) {
                try {
                    follower.followed(frame);
                } catch (Throwable t) {
                    postFault(WatchdogCondition.TICK_EXCEPTION, "observation source (followed)", t);
                }
            }
        }

        long end = clock.nanoTime();
        long computeNanos = end - start;
        boolean overrun = end - deadline > period;
        if (overrun) {
            consecutiveOverruns++;
            overruns.lazySet(overruns.get() + 1);
        } else {
            consecutiveOverruns = 0;
        }

        // 9 telemetry
        if (telemetry != null) {
            try {
                // on virtual time there is no deadline to keep: wait for the recorder rather than lose a row
                TelemetryRow row = virtualTime ? telemetry.claimWaiting() : telemetry.claim();
                if (row != null) {
                    row.tick = n;
                    row.timeNanos = deadline - t0;
                    row.periodErrorNanos = lateness;
                    row.computeNanos = computeNanos;
                    row.state = s.ordinal();
                    row.watchdogMask = watchdog.activeMask();
                    row.limiterFlags = supervisor.limiterFlags();
                    row.planTicks = remaining;
                    row.chunkAgeTicks = newestOrigin < 0 ? -1 : n - newestOrigin;
                    row.emitted = emitted;
                    System.arraycopy(target, 0, row.target, 0, joints);
                    System.arraycopy(command, 0, row.command, 0, joints);
                    for (int i = 0; i < joints; i++) {
                        row.jointFlags[i] = supervisor.limiterFlags(i);
                    }
                    System.arraycopy(frameAge, 0, row.frameAgeNanos, 0, Math.min(frameAge.length,
                            row.frameAgeNanos.length));
                    telemetry.publish();
                }
            } catch (Throwable t) {
                postFault(WatchdogCondition.TELEMETRY_FAULT, "telemetry hand-over", t);
            }
        }

        periodError.recordValueWithExpectedInterval(clamp(lateness), period);
        compute.recordValue(clamp(computeNanos));
        state = s;
        planTicks.lazySet(remaining);
        watchdogMask.lazySet(watchdog.activeMask());
        ticks.lazySet(ticks.get() + 1);
    }

    /** Next tick: the one whose deadline passed last, never one already past by a period. */
    private void advance(long n) {
        long next = n + 1;
        long now = clock.nanoTime();
        long behind = (now - t0) / period;
        if (behind > next) {
            skipped.lazySet(skipped.get() + (behind - next));
            next = behind;
        }
        tick = next;
        if (!virtualTime) {
            progressNanos.lazySet(now);
        }
    }

    private static int firstNonFinite(double[] values) {
        for (int i = 0; i < values.length; i++) {
            if (!Double.isFinite(values[i])) {
                return i;
            }
        }
        return -1;
    }

    /** Whether {@code c} was absent at the last check and not yet reported this tick: its detail is written then, once. */
    private boolean begins(WatchdogCondition c) {
        return ((lastReported | reportedNow | reportedNext) & c.bit()) == 0;
    }

    private void detail(WatchdogCondition c, String text) {
        details.set(c.code(), text);
    }

    /** A fault seen before this tick's watchdog check: it shapes this tick's command. */
    /** A step that threw before the tick's command went out: reported at this tick. */
    private void fault(WatchdogCondition c, String step, Throwable t) {
        reportedNow |= caught(c, step, t);
    }

    /** A step that threw once the command had gone out (emit, telemetry): reported at the next tick. */
    private void postFault(WatchdogCondition c, String step, Throwable t) {
        reportedNext |= caught(c, step, t);
    }

    /** Counts a caught exception and keeps it as the cause's detail when the cause begins; its bit. */
    private int caught(WatchdogCondition c, String step, Throwable t) {
        tickFaults.lazySet(tickFaults.get() + 1);
        if (begins(c)) {
            detail(c, step + ": " + t);
        }
        return c.bit();
    }

    private static long clamp(long v) {
        return v < 0 ? 0 : Math.min(v, HISTOGRAM_MAX_NANOS);
    }

    private void handleCommand(long n, long deadline) {
        long seq = commandSeq;
        if (seq == handledSeq) {
            return;
        }
        handledSeq = seq;
        int result;
        switch (commandKind) {
            case CMD_ARM -> {
                for (int i = 0; i < joints; i++) {
                    measured[i] = observation[positionIndex[i]];
                }
                if (blender.actionAt(n, target)) {
                    result = supervisor.arm(n, deadline - t0, measured, target);
                } else {
                    result = ARM_REFUSED_NO_PLAN;
                }
            }
            case CMD_DISARM -> {
                supervisor.requestDisarm();
                result = 0;
            }
            case CMD_RESET -> result = supervisor.reset(n, deadline - t0);
            default -> result = 0;
        }
        commandResult = result;
        resultSeq = seq;
    }

    private final class Sink implements ChunkSink {
        long now;

        @Override
        public void onChunk(double[] chunk, int steps, long originTick, long latencyNanos, int status) {
            inferences.lazySet(inferences.get() + 1);
            lastLatencyNanos = latencyNanos;
            requestedAtNanos = worker.idle() ? -1 : clock.nanoTime();
            inference.recordValue(clamp(latencyNanos));
            if (status != OK) {
                inferenceFailures.lazySet(inferenceFailures.get() + 1);
                if (status == FAILED) {
                    if (begins(WatchdogCondition.POLICY_FAILED)) {
                        String why = worker.lastFailure();
                        detail(WatchdogCondition.POLICY_FAILED, "chunk from tick " + originTick + ": "
                                + (why == null ? "no detail kept" : why));
                    }
                    reportedNow |= WatchdogCondition.POLICY_FAILED.bit();
                } else {
                    nonFiniteThisTick = true;
                }
                return;
            }
            int outside = outsideRange(chunk, steps);
            if (outside >= 0) {
                if (begins(WatchdogCondition.PLAN_OUT_OF_RANGE)) {
                    int j = outside % joints;
                    detail(WatchdogCondition.PLAN_OUT_OF_RANGE, "chunk from tick " + originTick + ", action "
                            + outside / joints + ": joint " + limitNames[j] + " = " + chunk[outside] + " lies outside ["
                            + rangeLow[j] + ", " + rangeHigh[j] + "] (position bounds widened by the slack of "
                            + settings.planRangeSlack() + ")");
                }
                reportedNow |= WatchdogCondition.PLAN_OUT_OF_RANGE.bit();
                rejectedChunks.lazySet(rejectedChunks.get() + 1);
                return;
            }
            int r = blender.accept(chunk, steps, originTick, now);
            if (r == ChunkBlender.REJECTED_NON_FINITE) {
                nonFiniteThisTick = true;
            } else if (r >= 0) {
                newestOrigin = Math.max(newestOrigin, originTick);
            }
        }
    }

    /**
     * A camera whose frames the loop watches: the age of its latest frame is checked every tick
     * against {@code ageMaxNanos} (the frame-stale condition; no frame yet counts as stale) and
     * recorded in telemetry. The reader must be the loop's own (readers are single-threaded); the
     * loop only reads stamps, never copies a frame.
     */
    public record Camera(String name, dev.weft.runtime.image.FrameSource reader, long ageMaxNanos) {
        public Camera {
            if (ageMaxNanos <= 0) {
                throw new IllegalArgumentException("camera " + name + ": the age bound must be > 0 ns, got "
                        + ageMaxNanos);
            }
        }
    }

    /** Cameras to watch from the first tick on; call before {@link #start} or {@link #prepare}. */
    public void watchCameras(java.util.List<Camera> watched) {
        if (running) {
            throw new IllegalStateException("cameras are watched from the start of a run");
        }
        this.cameras = watched.toArray(new Camera[0]);
        this.frameAge = new long[cameras.length];
        java.util.Arrays.fill(frameAge, -1);
        this.firstFrameStamp = new long[cameras.length];
        java.util.Arrays.fill(firstFrameStamp, -1);
    }

    /**
     * How far a time stamp lies ahead of the loop's clock when that is beyond the tolerance, else 0.
     * Compared with the clock read again after the stamp was read: a source stamping with the loop's
     * clock while it answers may be later than the tick's start by a preemption.
     */
    private long lead(long stamp, long start) {
        long tolerance = settings.observationAheadMaxNanos();
        if (stamp - start <= tolerance) {
            return 0;
        }
        long ahead = stamp - clock.nanoTime();
        return ahead > tolerance ? ahead : 0;
    }

    /** Step 1, cameras: each watched camera's latest frame age, and the frame-stale condition. */
    private void checkCameras(long start) {
        for (int i = 0; i < cameras.length; i++) {
            Camera c = cameras[i];
            long stamp;
            try {
                stamp = c.reader().latestStamp();
            } catch (Throwable t) {
                fault(WatchdogCondition.TICK_EXCEPTION, "camera " + c.name(), t);
                continue;
            }
            long ahead = stamp < 0 ? 0 : lead(stamp, start);
            if (ahead > 0) {
                // stamped in another clock domain (wall-clock epoch time, say): its age would read 0
                // for ever, so a camera that stops would never be seen stale
                frameAge[i] = -1;
                if (begins(WatchdogCondition.FRAME_STALE)) {
                    detail(WatchdogCondition.FRAME_STALE, "camera " + c.name() + ": the latest frame is stamped "
                            + String.format(java.util.Locale.ROOT, "%.3f", ahead / 1e6) + " ms ahead of the loop"
                            + " clock: the camera must stamp frames with CLOCK_MONOTONIC (System.nanoTime)");
                }
                reportedNow |= WatchdogCondition.FRAME_STALE.bit();
                continue;
            }
            if (stamp >= 0 && firstFrameStamp[i] < 0) {
                firstFrameStamp[i] = stamp;
            }
            long age = stamp < 0 ? -1 : Math.max(0, start - stamp);
            frameAge[i] = age;
            if (age < 0 || age > c.ageMaxNanos()) {
                if (begins(WatchdogCondition.FRAME_STALE)) {
                    detail(WatchdogCondition.FRAME_STALE, age < 0 ? "camera " + c.name() + ": no frame yet ("
                            + c.reader().describe() + ")" : "camera " + c.name() + ": latest frame "
                            + String.format(java.util.Locale.ROOT, "%.3f", age / 1e9) + " s old (bound "
                            + String.format(java.util.Locale.ROOT, "%.3f", c.ageMaxNanos() / 1e9) + " s)");
                }
                reportedNow |= WatchdogCondition.FRAME_STALE.bit();
            }
        }
    }

    /**
     * Step 2. With a fixed schedule a query falls due on its grid of ticks (a due tick that was
     * skipped falls due at the next tick that runs); a due query the busy worker cannot take is
     * counted as deferred and issued as soon as the worker is free, while the grid stays where it
     * is (due ticks the busy worker misses are each counted and merged into one request). With either
     * schedule a query is issued only for an observation newer than the last one queried, so a
     * stream slower than the queries is not queried (and ensembled) twice. The request's origin is
     * its observation's time.
     */
    private void request(long n, long start, boolean usable, long obsTime) {
        int every = settings.queryEveryTicks();
        try {
            if (every > 0) {
                if (n >= nextQueryTick) {
                    nextQueryTick = (n / every + 1) * every;
                    if (!worker.idle()) {
                        deferredQueries.lazySet(deferredQueries.get() + 1);
                    }
                    queryPending = true;
                }
            } else {
                queryPending = true;
            }
            if (queryPending && usable && obsTime > lastQueriedStamp && framesBefore(obsTime) && worker.idle()) {
                long origin = originTick(obsTime, n);
                if (origin >= 0) {
                    System.arraycopy(observation, 0, query.observation(), 0, observation.length);
                    query.stamp(origin, obsTime);
                    if (history != null) {
                        for (int g = 0; g < query.grids().size(); g++) {
                            InputBinding.History grid = query.grids().get(g);
                            history.gather(grid, obsTime, Math.min(grid.spacingNanos() / 2, period), query.history(g));
                        }
                    }
                    worker.request(query, n);
                    queryPending = false;
                    lastQueriedStamp = obsTime;
                    if (requestedAtNanos < 0) {
                        requestedAtNanos = start;
                    }
                }
            }
        } catch (Throwable t) {
            fault(WatchdogCondition.TICK_EXCEPTION, "inference request", t);
        }
    }

    /**
     * Whether every watched camera has a frame stamped at or before {@code obsTime}: a policy's
     * camera inputs read the newest such frame, so a query waits until there is one (the first
     * frame of a camera that starts after the joint state).
     */
    private boolean framesBefore(long obsTime) {
        for (long first : firstFrameStamp) {
            if (first < 0 || first > obsTime) {
                return false;
            }
        }
        return true;
    }

    /** Step 3: every finished chunk into the sink (never blocks). */
    private void drain(long n) {
        try {
            worker.drain(n, sink);
        } catch (Throwable t) {
            fault(WatchdogCondition.TICK_EXCEPTION, "inference drain", t);
        }
    }

    /**
     * The control tick nearest to an observation's time (tick {@code k} is at {@code t0 + k·Δc}),
     * at most {@code now}; −1 for an observation taken more than half a period before tick 0,
     * whose chunk would begin before the loop did (the query then waits for a newer one).
     */
    private long originTick(long obsTime, long now) {
        long k = Math.floorDiv(obsTime - t0 + period / 2, period);
        return k < 0 ? -1 : Math.min(k, now);
    }

    /** Index of the first value of the chunk outside its joint's widened position range, or -1 (NaN is left to the blender). */
    private int outsideRange(double[] chunk, int steps) {
        int n = steps * joints;
        for (int k = 0; k < n; k++) {
            double x = chunk[k];
            int j = k % joints;
            if (x < rangeLow[j] || x > rangeHigh[j]) {
                return k;
            }
        }
        return -1;
    }

    // ------------------------------------------------------------------ commands from other threads

    /**
     * Asks the loop to arm (soft start from the measured pose toward the plan).
     *
     * @return 0 when arming started; a refusal cause code ({@code dev.weft.safety.Cause},
     *     {@link #ARM_REFUSED_NO_PLAN}); {@link #COMMAND_TIMED_OUT} or {@link #NOT_RUNNING}
     */
    public int arm(long timeoutNanos) {
        return command(CMD_ARM, timeoutNanos);
    }

    /** Asks for a controlled stop to disarmed (not a fault). */
    public int disarm(long timeoutNanos) {
        return command(CMD_DISARM, timeoutNanos);
    }

    /** Asks to clear a latched fault; refused while the fault condition is present. */
    public int reset(long timeoutNanos) {
        return command(CMD_RESET, timeoutNanos);
    }

    /** Raises the operator-stop condition: a controlled stop that latches as a fault. Any thread. */
    public void operatorStop() {
        operatorStopRequested = true;
    }

    /** Clears the operator-stop condition, so that a later {@link #reset} can succeed. */
    public void releaseOperatorStop() {
        operatorStopRequested = false;
    }

    private int command(int kind, long timeoutNanos) {
        synchronized (commandLock) {
            if (!running) {
                return NOT_RUNNING;
            }
            commandKind = kind;
            long seq = commandSeq + 1;
            commandSeq = seq;
            long until = System.nanoTime() + timeoutNanos;
            while (resultSeq != seq) {
                if (!running) {
                    return NOT_RUNNING;
                }
                if (System.nanoTime() > until) {
                    return COMMAND_TIMED_OUT;
                }
                LockSupport.parkNanos(TimeUnit.MICROSECONDS.toNanos(50));
            }
            return commandResult;
        }
    }

    // ------------------------------------------------------------------ lifecycle and readouts

    /** Joints per command. */
    public int supervisorJoints() {
        return joints;
    }

    /** True while the loop thread runs. */
    public boolean running() {
        return running;
    }

    /**
     * Asks the loop to end: a moving robot is brought to a controlled stop first (up to the
     * configured timeout), then the loop thread ends. Any thread; returns at once.
     */
    public void shutdown() {
        shutdownRequested = true;
    }

    /** Waits up to {@code timeoutNanos} for the loop thread to end; true when it has. */
    public boolean awaitEnd(long timeoutNanos) throws InterruptedException {
        if (thread == null) {
            return true;
        }
        thread.join(Math.max(1, TimeUnit.NANOSECONDS.toMillis(timeoutNanos)));
        return !thread.isAlive();
    }

    /** What ended the loop thread abnormally, or null. */
    public Throwable failure() {
        return failure;
    }

    /** The supervisor (null before {@link #start}); for readouts on the loop's own terms. */
    public Supervisor supervisor() {
        return supervisor;
    }

    /**
     * The current state as last published by the loop thread, or {@link SupervisorState#STALLED}
     * while the monitor sees the loop stalled and once the loop thread has ended abnormally.
     */
    public SupervisorState state() {
        return stallActive || failure != null ? SupervisorState.STALLED : state;
    }

    /**
     * Where loop-stalled alarms go (from the monitor's thread, or the loop thread when it ends
     * abnormally): the transition from the state last published to {@link SupervisorState#STALLED},
     * cause {@link WatchdogCondition#LOOP_STALLED}. Set before {@link #start}; the listener must
     * accept calls from more than one thread.
     */
    public void alarmListener(TransitionListener listener) {
        this.alarmListener = listener == null ? TransitionListener.NONE : listener;
    }

    /**
     * The detail of a watchdog code's latest occurrence (an exception's class and message, the
     * value out of range, the stall's place), or null when it has none. Any thread.
     */
    public String faultDetail(int code) {
        return code > 0 && code < details.length() ? details.get(code) : null;
    }

    /** Exceptions caught in the tick so far (each became a watchdog cause). */
    public long tickFaults() {
        return tickFaults.get();
    }

    /** Loop-stalled alarms raised so far. */
    public long stalls() {
        return stalls.get();
    }

    /** Chunks refused because an action lay outside the joint range. */
    public long rejectedChunks() {
        return rejectedChunks.get();
    }

    /** A snapshot of the loop's counters. Any thread. */
    public LoopStatus status() {
        return new LoopStatus(state.name().toLowerCase(java.util.Locale.ROOT), ticks.get(), overruns.get(),
                skipped.get(), planTicks.get(), (int) watchdogMask.get(), blender.acceptedChunks(), blender.staleSteps(),
                inferences.get(), inferenceFailures.get(), deferredQueries.get(), port.dropped(), telemetry == null ? null : telemetry.counts());
    }

    /** The three timing histograms, moved out of the recorders since the previous call. */
    public record Histograms(Histogram periodError, Histogram compute, Histogram inference) {
    }

    /**
     * Takes the values recorded since the last call, adding them into {@code into}'s histograms.
     * Call from one reader thread; it never stops the loop.
     */
    public void histograms(Histograms into) {
        into.periodError().add(periodError.getIntervalHistogram());
        into.compute().add(compute.getIntervalHistogram());
        into.inference().add(inference.getIntervalHistogram());
    }

    /** Empty histograms shaped like the loop's, for {@link #histograms(Histograms)}. */
    public static Histograms newHistograms() {
        return new Histograms(new Histogram(HISTOGRAM_MAX_NANOS, 3), new Histogram(HISTOGRAM_MAX_NANOS, 3),
                new Histogram(HISTOGRAM_MAX_NANOS, 3));
    }

    /**
     * Shuts down, waits for the loop thread and stops the worker; idempotent. Does not close the port.
     *
     * @throws IllegalStateException when the loop thread did not end in time (stuck in a port or a
     *     callback); the message says where it is
     */
    @Override
    public void close() {
        shutdown();
        boolean ended;
        try {
            // a stalled loop will not come back for a stop: do not wait the stop's timeout for it
            long wait = stallActive ? TimeUnit.SECONDS.toNanos(1)
                    : settings.shutdownStopTimeoutNanos() + TimeUnit.SECONDS.toNanos(5);
            ended = awaitEnd(wait);
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            ended = thread == null || !thread.isAlive();
        }
        worker.close();
        if (!ended) {
            throw new IllegalStateException("the control loop thread " + thread.getName() + " did not end; it is at "
                    + topFrame() + " (tick " + tick + "); no command goes out from it");
        }
    }

    /** The blender's plan ahead of the current tick, read per joint when the limiter asks for it. */
    private final class BlenderPreview implements PlanPreview {
        long tick;
        int[] runEnds;

        @Override
        public boolean runMeans(int joint, double[] out) {
            return blender.previewMeans(tick, runEnds, joint, out);
        }
    }
}
