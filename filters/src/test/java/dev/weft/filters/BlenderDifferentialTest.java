package dev.weft.filters;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.Random;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * Each blender against {@link ReferenceBlender} on seeded random schedules: random K, D, step ratio
 * (integer and not), arrival latencies (including chunks that arrive entirely stale and chunks that
 * arrive out of order), gaps with no chunks (starvation), malformed chunks, weight rate m, executed
 * steps, fade length and taper (for the ensembles: none, the published weights, in a third of the
 * schedules). Every tick compares accept results, counters, the plan's state (position, velocity and
 * acceleration) and the ticks remaining, and also the plan a few ticks ahead.
 */
class BlenderDifferentialTest {

    private static final int SCHEDULES = 150;
    private static final double[] RATIOS = {1.0, 1.0, 2.0, 3.0, 0.5, 2.5, 7.3, 1.0 / 3.0};

    @ParameterizedTest
    @EnumSource(ReferenceBlender.Kind.class)
    void agreesWithPlainReferenceOnRandomSchedules(ReferenceBlender.Kind kind) {
        long comparedActions = 0;
        for (int seed = 0; seed < SCHEDULES; seed++) {
            comparedActions += runSchedule(kind, seed, Double.NaN, 24, 300, 0.1, 0.5);
        }
        // The schedules must actually exercise the plan, not only starvation.
        assertThat(comparedActions).isGreaterThan(SCHEDULES * 50L);
    }

    /** A 10 Hz policy driving a 500 Hz loop: r = 50, a chunk every few dozen ticks. */
    @ParameterizedTest
    @EnumSource(ReferenceBlender.Kind.class)
    void agreesWithPlainReferenceAtTenHertzPolicyFiveHundredHertzLoop(ReferenceBlender.Kind kind) {
        long comparedActions = 0;
        for (int seed = 0; seed < 20; seed++) {
            comparedActions += runSchedule(kind, 1000 + seed, 50.0, 6, 600, 0.01, 0.04);
        }
        assertThat(comparedActions).isGreaterThan(20 * 100L);
    }

    /**
     * One seeded schedule.
     *
     * @param ratio NaN for a random step ratio
     * @return how many actions were compared
     */
    private static long runSchedule(ReferenceBlender.Kind kind, long seed, double ratio, int stepsLimit, int ticks,
            double minArrivalRate, double maxArrivalRate) {
        Random rnd = new Random(seed * 7919 + kind.ordinal());
        int dims = 1 + rnd.nextInt(6);
        int maxSteps = 1 + rnd.nextInt(stepsLimit);
        double r = !Double.isNaN(ratio) ? ratio
                : rnd.nextInt(4) == 0 ? 0.3 + 9.7 * rnd.nextDouble() : RATIOS[rnd.nextInt(RATIOS.length)];
        Interpolation interp = Interpolation.values()[rnd.nextInt(Interpolation.values().length)];
        double m = rnd.nextInt(5) == 0 ? 0.0 : 1.5 * rnd.nextDouble();
        int executed = 1 + rnd.nextInt(maxSteps);
        int fade = rnd.nextInt(1 + maxSteps);
        double taper = rnd.nextInt(3) == 0 ? 0.0 : 0.5 * maxSteps * rnd.nextDouble();
        ChunkBlender blender;
        switch (kind) {
            case OLDEST_FIRST:
                blender = taper == 0.0 ? TemporalEnsembleBlender.oldestFirst(dims, maxSteps, r, interp, m)
                        : TemporalEnsembleBlender.oldestFirst(dims, maxSteps, r, interp, m, taper);
                break;
            case NEWEST_FIRST:
                blender = taper == 0.0 ? TemporalEnsembleBlender.newestFirst(dims, maxSteps, r, interp, m)
                        : TemporalEnsembleBlender.newestFirst(dims, maxSteps, r, interp, m, taper);
                break;
            case LATEST:
                blender = LatestChunkBlender.firstSteps(dims, maxSteps, r, interp, executed);
                break;
            default:
                blender = CrossfadeBlender.of(dims, maxSteps, r, interp, fade);
        }
        boolean ensemble = kind == ReferenceBlender.Kind.OLDEST_FIRST || kind == ReferenceBlender.Kind.NEWEST_FIRST;
        ReferenceBlender reference = new ReferenceBlender(kind, dims, maxSteps, r, interp, m, executed, fade,
                ensemble ? taper : 0.0);
        long span = (long) Math.floor((maxSteps - 1) * r + 1e-9);
        double[] chunk = new double[maxSteps * dims + rnd.nextInt(3)];
        double[] got = new double[dims];
        double[] want = new double[dims];
        double[] gotVelocity = new double[dims];
        double[] wantVelocity = new double[dims];
        double[] gotAcceleration = new double[dims];
        double[] wantAcceleration = new double[dims];
        double[] action = new double[dims];
        double arrivalRate = minArrivalRate + (maxArrivalRate - minArrivalRate) * rnd.nextDouble();
        long compared = 0;
        long start = rnd.nextInt(30);
        long gapLength = Math.max(40, ticks / 8);
        for (long now = start; now < start + ticks; now++) {
            boolean gap = (now / gapLength) % 3 == 2;
            int arrivals = gap ? 0 : (rnd.nextDouble() < arrivalRate ? 1 + rnd.nextInt(3) : 0);
            for (int a = 0; a < arrivals; a++) {
                int steps = 1 + rnd.nextInt(maxSteps);
                long latency = rnd.nextInt(4) == 0 ? rnd.nextInt((int) span + 8) : rnd.nextInt(1 + (int) Math.min(span, 6));
                long origin = Math.max(0, now - latency);
                fill(chunk, steps * dims, rnd);
                if (rnd.nextInt(40) == 0) {
                    chunk[rnd.nextInt(steps * dims)] = rnd.nextBoolean() ? Double.NaN : Double.NEGATIVE_INFINITY;
                }
                int gotCode = blender.accept(chunk, steps, origin, now);
                int wantCode = reference.accept(chunk, steps, origin, now);
                assertThat(gotCode).as("accept result, seed %d tick %d", seed, now).isEqualTo(wantCode);
            }
            assertThat(blender.staleSteps()).as("stale steps, seed %d", seed).isEqualTo(reference.stale);
            assertThat(blender.expiredChunks()).as("expired, seed %d", seed).isEqualTo(reference.expired);
            assertThat(blender.supersededChunks()).as("superseded, seed %d", seed).isEqualTo(reference.superseded);
            assertThat(blender.rejectedChunks()).as("rejected, seed %d", seed).isEqualTo(reference.rejected);
            for (long ahead = -1; ahead <= 3; ahead++) {
                // -1 probes history: ticks before the latest accepted now tick are gone for both.
                long tick = ahead < 0 ? now - 1 : now + ahead * (1 + rnd.nextInt(5));
                boolean gotPlan = blender.stateAt(tick, got, gotVelocity, gotAcceleration);
                boolean wantPlan = reference.stateAt(tick, want, wantVelocity, wantAcceleration);
                assertThat(gotPlan).as("has plan, seed %d now %d tick %d", seed, now, tick).isEqualTo(wantPlan);
                assertThat(blender.actionAt(tick, action)).isEqualTo(gotPlan);
                if (gotPlan) {
                    for (int d = 0; d < dims; d++) {
                        assertThat(action[d]).as("actionAt is stateAt's position").isEqualTo(got[d]);
                        assertThat(got[d]).as("action, seed %d now %d tick %d joint %d", seed, now, tick, d)
                                .isCloseTo(want[d], within(Tolerances.REFERENCE));
                        assertThat(gotVelocity[d]).as("velocity, seed %d now %d tick %d joint %d", seed, now, tick, d)
                                .isCloseTo(wantVelocity[d], within(Tolerances.reference(wantVelocity[d])));
                        assertThat(gotAcceleration[d]).as("acceleration, seed %d now %d tick %d joint %d", seed, now, tick, d)
                                .isCloseTo(wantAcceleration[d], within(Tolerances.reference(wantAcceleration[d])));
                    }
                    compared++;
                }
                assertThat(blender.ticksRemaining(tick)).as("ticks remaining, seed %d now %d tick %d", seed, now, tick)
                        .isEqualTo(reference.ticksRemaining(tick));
            }
        }
        return compared;
    }

    /** Smooth-ish random values with plateaus (equal neighbours) to exercise the interpolation. */
    private static void fill(double[] chunk, int count, Random rnd) {
        for (int i = 0; i < count; i++) {
            int mode = rnd.nextInt(4);
            chunk[i] = mode == 0 && i > 0 ? chunk[i - 1] : 2.0 * rnd.nextDouble() - 1.0;
        }
    }
}
