package dev.weft.examples;

import dev.weft.runtime.Weft;
import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.port.CommandFrame;
import dev.weft.runtime.port.CommandPort;
import dev.weft.safety.JointLimits;
import dev.weft.safety.Watchdog;
import java.util.Locale;
import java.util.concurrent.atomic.AtomicBoolean;

/**
 * weft embedded in a controller process of your own, with a Java-coded policy, port and source.
 *
 * <p>The invented scene: a two-axis camera head ("pan" and "tilt") on a bench, whose driver
 * thread reports joint angles every 2 ms and takes one position command per tick. The policy plans
 * chunks of 40 steps that sweep the head toward a point of interest. Run it with
 *
 * <pre>mvn -q -pl examples -am install -DskipTests
 * mvn -q -pl examples exec:java -Dexec.mainClass=dev.weft.examples.EmbeddingExample</pre>
 */
public final class EmbeddingExample {

    private EmbeddingExample() {
    }

    /** What the run ended with. */
    public record Outcome(String state, long ticks, double[] finalPose, long framesToDriver) {
    }

    /** The bench head's driver: takes commands from weft's port and reports its angles. */
    static final class HeadDriver implements CommandPort {
        private final double[] angle = new double[2];
        private final double[] commanded = new double[2];
        private volatile long frames;

        @Override
        public void open(int joints) {
            if (joints != 2) {
                throw new IllegalArgumentException("the head has 2 joints, not " + joints);
            }
        }

        @Override
        public boolean emit(CommandFrame frame) {
            // copy what we need; never block: the loop's thread is calling
            synchronized (commanded) {
                commanded[0] = frame.positions[0];
                commanded[1] = frame.positions[1];
            }
            frames++;
            return true;
        }

        /** The driver's own 2 ms cycle: a stiff servo that reaches 20 % of the way each cycle. */
        void cycle(double[] measuredOut) {
            synchronized (commanded) {
                for (int i = 0; i < 2; i++) {
                    angle[i] += 0.2 * (commanded[i] - angle[i]);
                }
            }
            measuredOut[0] = angle[0];
            measuredOut[1] = angle[1];
        }

        @Override
        public boolean faulted() {
            return false;
        }

        @Override
        public long emitted() {
            return frames;
        }

        @Override
        public long dropped() {
            return 0;
        }

        @Override
        public String describe() {
            return "bench head driver, " + frames + " frames";
        }

        @Override
        public void close() {
        }
    }

    /** Plans 40 steps from the observed pose toward a point of interest, at most 0.01 rad a step. */
    static final class LookAt implements Policy {
        // 80 ms of plan per chunk: the inference thread may be held off the CPU for tens of
        // milliseconds on a shared machine before the plan runs out (plan starvation)
        private static final int STEPS = 40;
        private final double[] goal;

        LookAt(double[] goal) {
            this.goal = goal.clone();
        }

        @Override
        public int observationSize() {
            return 2;
        }

        @Override
        public int chunkLength() {
            return STEPS;
        }

        @Override
        public int actionSize() {
            return 2;
        }

        @Override
        public void infer(double[] observation, long tick, double[] chunk) {
            for (int j = 0; j < STEPS; j++) {
                for (int i = 0; i < 2; i++) {
                    double step = Math.max(-0.01 * (j + 1), Math.min(0.01 * (j + 1), goal[i] - observation[i]));
                    chunk[j * 2 + i] = observation[i] + step;
                }
            }
        }

        @Override
        public void close() {
        }
    }

    /** Runs the scene for {@code seconds} of arming and returns how it ended. */
    public static Outcome run(double seconds) throws Exception {
        JointLimits limits = JointLimits.builder()
                .joint("pan", -2.5, 2.5, 1.5, 6.0, 60.0, 0.05)
                .joint("tilt", -0.8, 1.2, 1.0, 4.0, 40.0, 0.05)
                .build();
        HeadDriver driver = new HeadDriver();
        AtomicBoolean driving = new AtomicBoolean(true);
        try (Weft weft = Weft.builder(limits, 0.002)
                .policy(new LookAt(new double[] {0.6, 0.3}))
                .port(driver)
                // a chunk sweeps 0.01 rad a step while the head holds, so when arm() is called the
                // plan lies 0.01 rad further from the held pose for every tick its chunk came late
                // (more than the default 0.05 whenever the inference thread was late by a few ticks);
                // the soft start closes that gap
                .armingOffset(0.25)
                // this example runs on desktops and shared CI machines, which can hold a thread off
                // the CPU for several 2 ms periods; on a tuned robot computer keep the default of 3
                .stallPeriods(25)
                // for the same reason, allow as many overrun ticks in a row before the overrun fault
                // (default 3)
                .watchdog(Watchdog.builder().maxConsecutiveOverruns(25).build())
                .listener((tick, time, from, to, cause, message) ->
                        System.out.printf(Locale.ROOT, "tick %d: %s -> %s (%s)%n", tick, from, to, message))
                .build()) {
            // the driver thread: one observation every 2 ms, on its own clock
            Thread driverThread = new Thread(() -> {
                double[] measured = new double[2];
                while (driving.get()) {
                    driver.cycle(measured);
                    weft.offer(System.nanoTime(), measured);
                    java.util.concurrent.locks.LockSupport.parkNanos(2_000_000);
                }
            }, "head-driver");
            driverThread.start();
            weft.start();
            int armed;
            long until = System.nanoTime() + 2_000_000_000L;
            do {
                armed = weft.arm();
                Thread.sleep(5);
                // refused while there is no plan yet, or (on a busy machine) while the plan is
                // further than the offset above: ask again until it holds, for up to 2 s
            } while (armed != 0 && System.nanoTime() < until);
            System.out.println("arm: " + (armed == 0 ? "soft start" : Weft.describe(armed)));
            Thread.sleep((long) (seconds * 1000));
            weft.disarm();
            // a fault on the way (a stall, overruns) ends in FAULTED, not DISARMED: stop waiting then too
            while (weft.state() != dev.weft.safety.SupervisorState.DISARMED
                    && weft.state() != dev.weft.safety.SupervisorState.FAULTED && weft.running()) {
                Thread.sleep(5);
            }
            int cause = weft.loop().supervisor().latchedCause();
            if (cause != 0) {
                System.out.println("stopped by: " + Weft.describe(cause));
            }
            // end the run before reading its counters: the loop keeps ticking (holding) until then, so a
            // tick count read while it runs can be one ahead of the frames the driver has had
            String state = weft.state().name().toLowerCase(Locale.ROOT);
            weft.close();
            driving.set(false);
            driverThread.join();
            double[] pose = new double[2];
            driver.cycle(pose);
            return new Outcome(state, weft.status().ticks(), pose, driver.emitted());
        }
    }

    public static void main(String[] args) throws Exception {
        double seconds = args.length > 0 ? Double.parseDouble(args[0]) : 3.0;
        Outcome o = run(seconds);
        System.out.printf(Locale.ROOT, "ended %s after %d ticks; head at pan %.3f rad, tilt %.3f rad%n", o.state(),
                o.ticks(), o.finalPose()[0], o.finalPose()[1]);
    }
}
