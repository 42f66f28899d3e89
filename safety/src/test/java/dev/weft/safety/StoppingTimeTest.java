package dev.weft.safety;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** A stop from any admissible state reaches standstill within the analytic minimum stopping time plus two ticks. */
class StoppingTimeTest {

    @Test
    void analyticFormulaAgreesWithTheBookForZeroAcceleration() {
        SplittableRandom rng = new SplittableRandom(11);
        for (int i = 0; i < 1000; i++) {
            double v = rng.nextDouble() * 10 - 5;
            double amax = 0.5 + rng.nextDouble() * 20;
            double jmax = 5 + rng.nextDouble() * 500;
            assertThat(StopTimes.minimum(v, 0, amax, jmax))
                    .isCloseTo(StopTimes.fromRestAcceleration(v, amax, jmax), within(1e-12));
        }
    }

    @Test
    void brakeFromRandomStatesStopsWithinTheMinimumPlusTwoTicks() {
        SplittableRandom rng = new SplittableRandom(12);
        int withAcceleration = 0;
        long totalTicks = 0;
        for (int trial = 0; trial < 2000; trial++) {
            double dt = rng.nextBoolean() ? 1e-3 : 4e-3;
            double vmax = 0.2 + rng.nextDouble() * 5;
            double amax = 0.5 + rng.nextDouble() * 20;
            double jmax = 5 + rng.nextDouble() * 500;
            JointLimits limits = JointLimits.builder().joint("x", -1000, 1000, vmax, amax, jmax).build();
            JerkLimiter l = JerkLimiter.create(limits, dt);
            double v = (rng.nextDouble() * 2 - 1) * vmax;
            double a = trial % 2 == 0 ? 0 : (rng.nextDouble() * 2 - 1) * amax;
            // keep the state inside the velocity bounds for its whole stop (an admissible state)
            if (Math.abs(v + a * Math.abs(a) / (2 * jmax)) > vmax * 0.999) {
                a = 0;
            }
            if (a != 0) {
                withAcceleration++;
            }
            assertThat(l.reset(new double[] {0}, new double[] {v}, new double[] {a})).isTrue();
            double tmin = StopTimes.minimum(v, a, amax, jmax);
            double[] cmd = new double[1];
            int ticks = 0;
            while (!l.atRest() && ticks < 1_000_000) {
                l.brake(cmd);
                ticks++;
            }
            totalTicks += ticks;
            assertThat(ticks * dt).as("trial %d v=%s a=%s", trial, v, a)
                    .isLessThanOrEqualTo(tmin + 2 * dt)
                    .isGreaterThanOrEqualTo(tmin - dt);
        }
        assertThat(withAcceleration).isGreaterThan(500);
        System.out.println("stopping time: " + totalTicks + " braking ticks over 2000 states");
    }
    @Test
    void stoppingDistanceFromZeroAccelerationIsTheBookDecelerationSegment() {
        // A double-S deceleration segment from v to rest covers (v + 0) / 2 * Td (Biagiotti and
        // Melchiorri 2008, Section 3.4: the profile is symmetric in time about its midpoint).
        SplittableRandom rng = new SplittableRandom(13);
        for (int trial = 0; trial < 500; trial++) {
            double vmax = 0.2 + rng.nextDouble() * 5;
            double amax = 0.5 + rng.nextDouble() * 20;
            double jmax = 5 + rng.nextDouble() * 500;
            JointLimits limits = JointLimits.builder().joint("x", -100, 100, vmax, amax, jmax).build();
            JerkLimiter l = JerkLimiter.create(limits, 1e-3);
            double v = (rng.nextDouble() * 2 - 1) * vmax * 0.99;
            assertThat(l.reset(new double[] {0}, new double[] {v}, new double[] {0})).isTrue();
            double expected = v / 2 * StopTimes.fromRestAcceleration(v, amax, jmax);
            double predicted = l.restPosition(0);
            // The limiter plans with each bound lowered by its rounding margin (here at most 5e-5 of the
            // jerk bound), which moves the stopping point by a similar share.
            assertThat(predicted).isCloseTo(expected, within(1e-4 * Math.max(1, Math.abs(expected))));
            double[] cmd = new double[1];
            while (!l.atRest()) {
                l.brake(cmd);
            }
            // the emitted stop ends where the limiter predicted
            assertThat(cmd[0]).isCloseTo(predicted, within(1e-9 * Math.max(1, Math.abs(expected))));
        }
    }
}
