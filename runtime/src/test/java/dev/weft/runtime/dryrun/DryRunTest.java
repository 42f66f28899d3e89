package dev.weft.runtime.dryrun;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.recording.Recording;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class DryRunTest {

    @TempDir
    Path dir;

    static final int K = 4;
    static final double SLOPE = 0.002;
    static final double M = 0.5;

    /** One joint with limits far above what the ramp needs, so the limiter passes it through. */
    private ConfiguredRun rampRun(String extra) throws Exception {
        Files.write(dir.resolve("ramp.onnx"), PolicyModels.rampPolicy(K, SLOPE));
        String yaml = """
                robot:
                  name: hand-check
                  joints:
                    - {name: x, position: {min: -10, max: 10}, velocity: 1000, acceleration: 1.0e6, jerk: 1.0e9}
                timing:
                  control_period: 0.01
                  query: {schedule: fixed, every_ticks: 1}
                policy:
                  model: ramp.onnx
                  observation_size: 1
                  inputs:
                    obs: {source: observation}
                  output: {layout: 1xKxD}
                blending:
                  method: ensemble
                  ensemble: {weight_rate: %s, favour: oldest, weights: published}
                watchdog:
                  observation_age_max: 0.05
                  inference_latency_max: 0.05
                  overruns_max: 5
                arming:
                  pose_distance_max: 1.0
                source: {kind: embedded}
                port: {kind: discard}
                """.formatted(M) + extra;
        return ConfiguredRun.of(WeftConfig.parse(yaml, dir, "hand-check.yaml"));
    }

    /** A recording whose observation at sample k is 0.01·k, sampled at the control period. */
    private static Recording ramp(int samples) {
        double[] t = new double[samples];
        double[] obs = new double[samples];
        double[] act = new double[samples];
        for (int k = 0; k < samples; k++) {
            t[k] = 0.01 * k;
            obs[k] = 0.01 * k;
            act[k] = 0.01 * k;
        }
        return new Recording("ramp", t, obs, act, List.of("q.x"), List.of("a.x"));
    }

    /**
     * Exponential temporal ensembling as published (Zhao et al., 2023, "Learning fine-grained
     * bimanual manipulation with low-cost hardware", action chunking with temporal ensembling):
     * every chunk covering tick t contributes its action for t, weighted exp(−m·i) with i = 0 the
     * oldest, normalised. With zero modelled latency a chunk is computed from the observation of
     * every tick o and covers o … o + K − 1; its action for t is x_o + (t − o)·slope.
     */
    static double ensembled(int t, double[] x) {
        double num = 0;
        double den = 0;
        int i = 0;
        for (int o = Math.max(0, t - K + 1); o <= t; o++) {
            double w = Math.exp(-M * i++);
            num += w * (x[o] + (t - o) * SLOPE);
            den += w;
        }
        return num / den;
    }

    @Test
    void commandsMatchTheEnsemblingFormulaComputedByHand() throws Exception {
        final int N = 200;
        ConfiguredRun run = rampRun("");
        Recording rec = ramp(N);
        DryRun.Result r = DryRun.run(run, rec, new DryRun.Options(dir.resolve("out"), "ramp", false, false, 0,
                GateThresholds.DEFAULTS, null));
        // the observation the model saw, rounded to float32 as the model's input is
        double[] x = new double[N];
        for (int k = 0; k < N; k++) {
            x[k] = (float) (0.01 * k);
        }
        List<String> rows = Files.readAllLines(r.commands());
        assertThat(rows).hasSize(N + 1);
        DryRunTrace.JointTrace j = r.trace().joints().get(0);
        double[] expectedTarget = new double[N];
        for (int t = 0; t < N; t++) {
            expectedTarget[t] = ensembled(t, x);
            // the blended target is the formula at every tick (float32 chunk values: 1e-6)
            assertThat(j.target()[t]).as("target at tick %d", t).isCloseTo(expectedTarget[t], within(1e-6));
        }
        // the expected commands: the formula's targets through the safety module's supervisor,
        // armed at tick 0 as the dry run arms at the first planned tick, holding at the start pose
        dev.weft.safety.JointLimits limits = run.limits();
        dev.weft.safety.Supervisor sup = dev.weft.safety.Supervisor.builder(limits, 0.01)
                .maxArmingOffset(1.0).armingTimeoutTicks(Math.round((run.rampTime() + 10) / 0.01))
                .armingRampTicks(Math.round(run.rampTime() / 0.01)).build(new double[] {0.0});
        double[] target = new double[1];
        // The plan's velocity and acceleration the loop passes on come from the blender: a blender of
        // the same kind, fed the same chunks (the model's float32 arithmetic: x_o + float(j·SLOPE),
        // rounded to float32), gives them here, and its position must be the loop's target exactly.
        dev.weft.filters.ChunkBlender blender = dev.weft.filters.TemporalEnsembleBlender.oldestFirst(1, K, 1.0,
                dev.weft.filters.Interpolation.CUBIC_SPLINE, M);
        double[] chunk = new double[K];
        double[] position = new double[1];
        double[] velocity = new double[1];
        double[] acceleration = new double[1];
        double[] command = new double[1];
        double gapAtHandOver = Double.NaN;
        for (int t = 0; t < N; t++) {
            for (int s = 0; s < K; s++) {
                chunk[s] = (float) ((float) x[t] + (float) (s * SLOPE));
            }
            assertThat(blender.accept(chunk, K, t, t)).isPositive();
            assertThat(blender.stateAt(t, position, velocity, acceleration)).isTrue();
            assertThat(position[0]).as("target at tick %d", t).isEqualTo(j.target()[t]);
            // per tick to per second: times 100 ticks per second, as the loop scales it
            velocity[0] *= 100.0;
            acceleration[0] *= 100.0 * 100.0;
            target[0] = j.target()[t];
            if (t == 0) {
                assertThat(sup.arm(0, 0, new double[] {x[0]}, target)).isZero();
            }
            sup.step(t, t, target, velocity, acceleration, 0, command);
            String[] f = rows.get(t + 1).split(",");
            assertThat(Double.parseDouble(f[6])).as("command at tick %d", t).isEqualTo(command[0]);
            if (t == Math.round(run.rampTime() / 0.01)) {
                gapAtHandOver = Math.abs(command[0] - expectedTarget[t]);
            }
        }
        // This plan is a staircase: each new chunk starts 0.008 above the last one's prediction, so the
        // plan climbs at 1 rad/s while every chunk's own slope is 0.2 rad/s. The limiter follows the
        // rate at which the plan really moves (not only its stated velocity), so after the soft start
        // the gap closes.
        double gapAtEnd = Math.abs(command[0] - expectedTarget[N - 1]);
        System.out.printf("hand check: gap to the target %.4f at the hand-over, %.4f at the end%n", gapAtHandOver, gapAtEnd);
        assertThat(gapAtEnd).isLessThan(gapAtHandOver / 2).isLessThan(0.02);
        assertThat(r.summary().boundViolations()).isZero();
        assertThat(r.summary().passed()).isTrue();
    }

    @Test
    void theSameInputsGiveTheSameCommandFileByteForByte() throws Exception {
        ConfiguredRun run = rampRun("");
        Recording rec = ramp(200);
        DryRun.Result a = DryRun.run(run, rec, new DryRun.Options(dir.resolve("a"), "ramp", false, false, 3,
                GateThresholds.DEFAULTS, null));
        DryRun.Result b = DryRun.run(run, rec, new DryRun.Options(dir.resolve("b"), "ramp", false, false, 3,
                GateThresholds.DEFAULTS, null));
        assertThat(Files.readAllBytes(a.commands())).isEqualTo(Files.readAllBytes(b.commands()));
        String sa = Files.readString(a.summaryFile()).replaceAll("(?s)\"inference_ms\" : \\{[^}]*}", "");
        String sb = Files.readString(b.summaryFile()).replaceAll("(?s)\"inference_ms\" : \\{[^}]*}", "");
        assertThat(sa).isEqualTo(sb);
        assertThat(a.summary().latencyTicks()).isEqualTo(3);
    }
}
