package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.runtime.dryrun.DryRunTrace;
import dev.weft.safety.JerkLimiter;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.WatchdogCondition;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;

/**
 * Invented dry runs for the renderer's tests: smooth joint motions, a command that follows its
 * target under a simple rate bound (flags raised where the bound bites), arming at the start and,
 * optionally, a fault that stops the run. The numbers only need to look like a run; no part of
 * weft produced them.
 */
final class Synthetic {

    static final double PERIOD = 0.002;

    private Synthetic() {
    }

    /** Builder of one invented episode. */
    static final class Run {
        String name = "synthetic";
        String[] joints = {"shoulder", "elbow"};
        int ticks = 2000;
        long seed = 7;
        int faultTick = -1;
        boolean realtime;
        boolean closedLoop;
        boolean passed = true;
        double lower = -1.2;
        double upper = 1.2;
        double amplitude = 0.9;
        double rateBound = 4.5;

        Run name(String v) {
            name = v;
            return this;
        }

        Run joints(String... v) {
            joints = v;
            return this;
        }

        Run ticks(int v) {
            ticks = v;
            return this;
        }

        Run fault(int tick) {
            faultTick = tick;
            return this;
        }

        Run realtime(boolean v) {
            realtime = v;
            return this;
        }

        Run failed() {
            passed = false;
            return this;
        }

        Run bounds(double lo, double hi) {
            lower = lo;
            upper = hi;
            return this;
        }

        Run amplitude(double v) {
            amplitude = v;
            return this;
        }

        HtmlReport.Episode build() {
            Random random = new Random(seed);
            int n = ticks;
            double[] time = new double[n];
            for (int i = 0; i < n; i++) {
                time[i] = i * PERIOD;
            }
            byte[] states = new byte[n];
            int[] masks = new int[n];
            int armingEnd = Math.min(n, 150);
            for (int i = 0; i < n; i++) {
                SupervisorState s;
                if (i < 40) {
                    s = SupervisorState.DISARMED;
                } else if (i < armingEnd) {
                    s = SupervisorState.ARMING;
                } else if (faultTick < 0 || i < faultTick) {
                    s = SupervisorState.ARMED;
                } else if (i < faultTick + 120) {
                    s = SupervisorState.STOPPING;
                } else {
                    s = SupervisorState.FAULTED;
                }
                states[i] = (byte) s.ordinal();
                if (i < 20) {
                    masks[i] |= WatchdogCondition.PLAN_STARVED.bit();
                }
                if (i >= 20 && i < 35) {
                    masks[i] |= WatchdogCondition.PLAN_LOW.bit();
                }
                if (faultTick >= 0 && i >= faultTick && i < faultTick + 60) {
                    masks[i] |= WatchdogCondition.INFERENCE_LATE.bit();
                }
            }
            List<DryRunTrace.JointTrace> traces = new ArrayList<>();
            double[] rms = new double[joints.length];
            double[] max = new double[joints.length];
            long pos = 0;
            long vel = 0;
            for (int j = 0; j < joints.length; j++) {
                double[] recorded = new double[n];
                double[] target = new double[n];
                double[] command = new double[n];
                int[] flags = new int[n];
                double freq = 0.35 + 0.2 * j;
                double phase = random.nextDouble() * Math.PI;
                double q = 0;
                double sum = 0;
                int counted = 0;
                for (int i = 0; i < n; i++) {
                    double t = time[i];
                    recorded[i] = amplitude * Math.sin(2 * Math.PI * freq * t + phase)
                            + 0.08 * Math.sin(2 * Math.PI * 3.1 * t);
                    target[i] = i < 20 ? Double.NaN
                            : amplitude * Math.sin(2 * Math.PI * freq * (t - 0.01) + phase)
                            + 0.08 * Math.sin(2 * Math.PI * 3.1 * (t - 0.01)) + 0.004 * random.nextGaussian();
                    double want = Double.isFinite(target[i]) ? target[i] : q;
                    if (faultTick >= 0 && i >= faultTick) {
                        want = q;
                    }
                    if (want > upper) {
                        want = upper;
                        flags[i] |= JerkLimiter.POSITION;
                    } else if (want < lower) {
                        want = lower;
                        flags[i] |= JerkLimiter.POSITION;
                    }
                    double step = rateBound * PERIOD;
                    if (Math.abs(want - q) > step) {
                        want = q + Math.signum(want - q) * step;
                        flags[i] |= JerkLimiter.VELOCITY;
                    }
                    q = want;
                    command[i] = q;
                    double e = command[i] - recorded[i];
                    sum += e * e;
                    counted++;
                    max[j] = Math.max(max[j], Math.abs(e));
                    if ((flags[i] & JerkLimiter.POSITION) != 0) {
                        pos++;
                    }
                    if ((flags[i] & JerkLimiter.VELOCITY) != 0) {
                        vel++;
                    }
                }
                rms[j] = Math.sqrt(sum / Math.max(1, counted));
                traces.add(new DryRunTrace.JointTrace(joints[j], lower, upper, recorded, target, command, flags));
            }
            int calls = Math.max(1, n / 10);
            double[] latency = new double[calls];
            for (int i = 0; i < calls; i++) {
                latency[i] = 1.4 + 0.25 * Math.abs(random.nextGaussian()) + (i % 97 == 0 ? 3.5 : 0);
            }
            double[] period = null;
            if (realtime) {
                period = new double[n];
                for (int i = 0; i < n; i++) {
                    period[i] = 0.01 * random.nextGaussian() + (i % 500 == 0 ? 0.2 : 0);
                }
            }
            List<DryRunSummary.Stop> stops = new ArrayList<>();
            if (faultTick >= 0 && faultTick < n) {
                stops.add(new DryRunSummary.Stop(faultTick, time[faultTick], 7, "INFERENCE_LATE: "
                        + WatchdogCondition.INFERENCE_LATE.message()));
            }
            List<DryRunSummary.Gate> gates = List.of(
                    new DryRunSummary.Gate("bound violations", 0, 0, true),
                    new DryRunSummary.Gate("worst RMS error", 0.05, max(rms), passed),
                    new DryRunSummary.Gate("stops", faultTick >= 0 ? 1 : 0, stops.size(), true));
            DryRunSummary summary = new DryRunSummary(name, "/data/" + name + ".h5", List.of(joints), closedLoop,
                    realtime, PERIOD, realtime ? -1 : 3, n, n, n, n, 0, 0, rms, max,
                    new DryRunSummary.LimitCounts(pos, vel, 0, 0), 12, 0, 20, 3, stops,
                    new DryRunSummary.Percentiles(1.55, 5.0, 5.4),
                    realtime ? new DryRunSummary.Percentiles(0.0, 0.03, 0.2) : null, passed, gates);
            DryRunTrace trace = new DryRunTrace(time, traces, states, masks, latency, period);
            return new HtmlReport.Episode(summary, trace);
        }

        private static double max(double[] v) {
            double m = 0;
            for (double x : v) {
                m = Math.max(m, x);
            }
            return m;
        }
    }

    static Run run() {
        return new Run();
    }

    /** The episode with joint {@code j}'s trace replaced (summary unchanged). */
    static HtmlReport.Episode withJoint(HtmlReport.Episode e, int j, DryRunTrace.JointTrace joint) {
        DryRunTrace t = e.trace();
        List<DryRunTrace.JointTrace> joints = new ArrayList<>(t.joints());
        joints.set(j, joint);
        return new HtmlReport.Episode(e.summary(), new DryRunTrace(t.timeSeconds(), joints, t.states(),
                t.watchdogMasks(), t.inferenceLatencyMs(), t.periodErrorMs()));
    }

    /** A copy of the joint trace with other limiter flags. */
    static DryRunTrace.JointTrace withFlags(DryRunTrace.JointTrace j, int[] flags) {
        return new DryRunTrace.JointTrace(j.name(), j.lower(), j.upper(), j.recorded(), j.target(), j.command(), flags);
    }

    /** A copy of the joint trace with another command series. */
    static DryRunTrace.JointTrace withCommand(DryRunTrace.JointTrace j, double[] command) {
        return new DryRunTrace.JointTrace(j.name(), j.lower(), j.upper(), j.recorded(), j.target(), command,
                j.limiterFlags());
    }
}
