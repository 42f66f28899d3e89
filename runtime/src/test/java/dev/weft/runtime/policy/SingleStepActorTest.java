package dev.weft.runtime.policy;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.dryrun.DryRun;
import dev.weft.runtime.dryrun.GateThresholds;
import dev.weft.runtime.recording.Recording;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A single-step actor (one action per call, as value-based and actor-critic policies give) runs
 * with its action held: each action stays the target until the next one replaces it, and the plan
 * never runs out between two queries.
 */
class SingleStepActorTest {

    private static final double PERIOD = 0.002;
    /** The actor's step: 10 control ticks. */
    private static final int STEP_TICKS = 10;
    private static final int SAMPLES = 300;
    private static final int LATENCY = 2;

    @TempDir
    Path dir;

    private ConfiguredRun run(PolicyModels.Built actor, String hold) throws Exception {
        Files.write(dir.resolve("actor.onnx"), actor.bytes());
        String yaml = """
                robot:
                  name: actor-check
                  joints:
                    - {name: a, position: {min: -3, max: 3}, velocity: 100, acceleration: 1.0e4, jerk: 1.0e7}
                    - {name: b, position: {min: -3, max: 3}, velocity: 100, acceleration: 1.0e4, jerk: 1.0e7}
                timing:
                  control_period: %s
                  policy_step: %s
                  query: {schedule: fixed, every_ticks: %d}
                policy:
                  model: actor.onnx
                  observation_size: 3
                  inputs:
                    obs: {source: observation}
                  output: {layout: 1xD%s}
                blending:
                  method: latest
                  interpolation: linear
                watchdog:
                  observation_age_max: 0.05
                  inference_latency_max: 0.015
                  plan_remaining_min: 0.004
                  overruns_max: 5
                arming:
                  pose_distance_max: 3.0
                source: {kind: embedded}
                port: {kind: discard}
                """.formatted(PERIOD, STEP_TICKS * PERIOD, STEP_TICKS, hold);
        return ConfiguredRun.of(WeftConfig.parse(yaml, dir, "actor-check.yaml"));
    }

    private static Recording recording() {
        double[] t = new double[SAMPLES];
        double[] obs = new double[SAMPLES * 3];
        double[] act = new double[SAMPLES * 2];
        for (int i = 0; i < SAMPLES; i++) {
            t[i] = i * PERIOD;
            for (int j = 0; j < 3; j++) {
                obs[i * 3 + j] = 0.5 * Math.sin(3.0 * t[i] + j);
            }
        }
        return new Recording("sines", t, obs, act, List.of("o0", "o1", "o2"), List.of("a", "b"));
    }

    @Test
    void eachActionIsHeldUntilTheNextReplacesItAndThePlanNeverRunsOut() throws Exception {
        PolicyModels.Built actor = PolicyModels.singleActionPolicy(3, 8, 2, 17);
        ConfiguredRun run = run(actor, "");
        try (OnnxPolicy p = run.loadPolicy()) {
            // one action, held for the default two steps: three equal actions per call
            assertThat(p.chunkLength()).isEqualTo(1 + OutputSpec.DEFAULT_HOLD_STEPS);
        }
        Recording rec = recording();
        DryRun.Result r = DryRun.run(run, rec, new DryRun.Options(dir.resolve("out"), "actor", false, false, LATENCY,
                GateThresholds.DEFAULTS, null));
        // armed at the first planned tick, the plan never ran out: each held action outlasts the
        // query interval plus the latency
        assertThat(r.summary().starvedTicks()).as("armed ticks without a plan").isZero();
        assertThat(r.summary().stops()).isEmpty();
        double[] obs = new double[3];
        int ticks = r.trace().joints().get(0).target().length;
        for (int t = LATENCY; t < ticks; t++) {
            // the query made at the latest step tick whose result has arrived (LATENCY ticks later)
            int n = (t - LATENCY) / STEP_TICKS * STEP_TICKS;
            rec.observation(n, obs);
            // the actor's forward pass by EJML, an outside reference for the float32 model
            double[] want = EjmlReference.forward(actor.mlp(), obs);
            for (int j = 0; j < 2; j++) {
                assertThat(r.trace().joints().get(j).target()[t]).as("tick %d joint %d", t, j)
                        .isCloseTo(want[j], within(1e-5));
            }
        }
    }

    @Test
    void theHoldIsConfiguredForASingleStepActorOnly() throws Exception {
        PolicyModels.Built actor = PolicyModels.singleActionPolicy(3, 8, 2, 17);
        try (OnnxPolicy p = run(actor, ", hold_steps: 4").loadPolicy()) {
            assertThat(p.chunkLength()).isEqualTo(5);
        }
        Files.write(dir.resolve("chunk.onnx"), PolicyModels.chunkPolicy(3, 8, 4, 2, 3).bytes());
        dev.weft.runtime.BadInputException e = org.assertj.core.api.Assertions.catchThrowableOfType(
                () -> WeftConfig.parse("""
                        robot:
                          name: actor-check
                          joints:
                            - {name: a, position: {min: -3, max: 3}, velocity: 1, acceleration: 10, jerk: 100}
                            - {name: b, position: {min: -3, max: 3}, velocity: 1, acceleration: 10, jerk: 100}
                        timing: {control_period: 0.002}
                        policy:
                          model: chunk.onnx
                          observation_size: 3
                          inputs: {obs: {source: observation}}
                          output: {layout: 1xKxD, hold_steps: 2}
                        watchdog: {observation_age_max: 0.05, inference_latency_max: 0.004, overruns_max: 5}
                        arming: {pose_distance_max: 0.1}
                        source: {kind: embedded}
                        port: {kind: discard}
                        """, dir, "chunk.yaml"), dev.weft.runtime.BadInputException.class);
        assertThat(e.problems()).map(Object::toString)
                .contains("policy.output.hold_steps (line 11): is for layout 1xD (a single-step actor), the layout is 1xKxD");
    }
}
