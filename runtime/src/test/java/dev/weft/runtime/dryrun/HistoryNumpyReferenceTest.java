package dev.weft.runtime.dryrun;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import dev.weft.onnxkit.PolicyModels;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.recording.Recording;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.junit.jupiter.api.io.TempDir;

/**
 * A model that takes the current state and the k previous states, oldest first, one control
 * period apart, configured and dry-run; its blended targets are checked against an independent
 * NumPy forward pass with naive exponential temporal ensembling (Zhao, Kumar, Levine and Finn,
 * 2023), written from the time model, in {@code history_ensemble_reference.py} beside this test.
 * Needs {@code python3} with NumPy (Debian: python3-numpy; {@code .ci/run} installs it).
 */
class HistoryNumpyReferenceTest {

    private static final int S = 3;
    private static final int DEPTH = 3;
    private static final int HIDDEN = 10;
    private static final int K = 8;
    private static final double M = 0.1;
    private static final double PERIOD = 0.002;
    private static final int SAMPLES = 600;

    @TempDir
    Path dir;

    private static Recording recording() {
        double[] t = new double[SAMPLES];
        double[] obs = new double[SAMPLES * S];
        for (int i = 0; i < SAMPLES; i++) {
            t[i] = i * PERIOD;
            for (int j = 0; j < S; j++) {
                // a different motion per joint, so a history slot out of place shows
                obs[i * S + j] = 0.4 * Math.sin(2.1 * (j + 1) * t[i] + j) + 0.05 * Math.cos(11.0 * t[i]);
            }
        }
        return new Recording("three-sines", t, obs, obs.clone(), List.of("q0", "q1", "q2"), List.of("a0", "a1", "a2"));
    }

    @ParameterizedTest(name = "latency {0} ticks, a query every {1} ticks")
    @CsvSource({"0, 1", "2, 2", "2, 3"})
    void blendedTargetsMatchANumpyForwardPassWithNaiveTemporalEnsembling(int latency, int every) throws Exception {
        PolicyModels.Built model = PolicyModels.stateAndHistoryPolicy64(S, DEPTH, HIDDEN, K, S, 31);
        Files.write(dir.resolve("state-history.onnx"), model.bytes());
        String yaml = """
                robot:
                  name: reference-check
                  joints:
                    - {name: a, position: {min: -3, max: 3}, velocity: 100, acceleration: 1.0e4, jerk: 1.0e7}
                    - {name: b, position: {min: -3, max: 3}, velocity: 100, acceleration: 1.0e4, jerk: 1.0e7}
                    - {name: c, position: {min: -3, max: 3}, velocity: 100, acceleration: 1.0e4, jerk: 1.0e7}
                timing:
                  control_period: %s
                  query: {schedule: fixed, every_ticks: %d}
                policy:
                  model: state-history.onnx
                  observation_size: 3
                  inputs:
                    state: {source: observation}
                    history: {source: history, depth: %d, spacing: %s, with_current: false}
                  output: {layout: 1xKxD}
                blending:
                  method: ensemble
                  interpolation: linear
                  ensemble: {weight_rate: %s, favour: oldest, weights: published}
                watchdog:
                  observation_age_max: 0.05
                  inference_latency_max: 0.05
                  overruns_max: 5
                arming:
                  pose_distance_max: 3.0
                source: {kind: embedded}
                port: {kind: discard}
                """.formatted(PERIOD, every, DEPTH, PERIOD, M);
        ConfiguredRun run = ConfiguredRun.of(WeftConfig.parse(yaml, dir, "reference-check.yaml"));
        Recording rec = recording();
        DryRun.Result r = DryRun.run(run, rec, new DryRun.Options(dir.resolve("out"), "reference", false, false,
                latency, GateThresholds.DEFAULTS, null));
        int ticks = r.trace().joints().get(0).target().length;
        assertThat(ticks).isGreaterThan(SAMPLES - 10);
        assertThat(r.summary().deferredQueries()).isZero();

        JsonNode ref = numpyReference(model.mlp(), rec, latency, every, ticks);
        JsonNode targets = ref.get("targets");
        int compared = 0;
        for (int t = 0; t < ticks; t++) {
            JsonNode want = targets.get(t);
            for (int j = 0; j < S; j++) {
                double got = r.trace().joints().get(j).target()[t];
                if (want.isNull()) {
                    assertThat(got).as("tick %d joint %d: NumPy has no plan yet", t, j).isNaN();
                } else {
                    assertThat(got).as("tick %d joint %d", t, j).isCloseTo(want.get(j).asDouble(), within(1e-6));
                    compared++;
                }
            }
        }
        // the plan covered nearly every tick and the chunks overlapped (the ensemble had work to do)
        assertThat(compared).isGreaterThan(S * (ticks - 10));
        assertThat(ref.get("queries").size()).isGreaterThan(ticks / every - 2);
    }

    private JsonNode numpyReference(PolicyModels.Mlp mlp, Recording rec, int latency, int every, int ticks)
            throws Exception {
        ObjectMapper json = new ObjectMapper();
        ObjectNode spec = json.createObjectNode();
        spec.put("state", S).put("depth", DEPTH).put("hidden", HIDDEN).put("K", K).put("D", S)
                .put("every", every).put("latency", latency).put("m", M).put("ticks", ticks);
        ArrayNode obs = spec.putArray("observations");
        double[] o = new double[S];
        for (int i = 0; i < rec.length(); i++) {
            rec.observation(i, o);
            ArrayNode row = obs.addArray();
            for (double v : o) {
                row.add(v);
            }
        }
        put(spec.putArray("w1"), mlp.w1());
        put(spec.putArray("b1"), mlp.b1());
        put(spec.putArray("w2"), mlp.w2());
        put(spec.putArray("b2"), mlp.b2());
        Path specFile = dir.resolve("spec.json");
        Path outFile = dir.resolve("numpy.json");
        json.writeValue(specFile.toFile(), spec);
        Path script = dir.resolve("history_ensemble_reference.py");
        try (InputStream in = getClass().getResourceAsStream("history_ensemble_reference.py")) {
            assertThat(in).as("the reference script beside this test").isNotNull();
            Files.copy(in, script, StandardCopyOption.REPLACE_EXISTING);
        }
        Process p = new ProcessBuilder(dev.weft.runtime.Python3.withNumpy(), script.toString(), specFile.toString(),
                outFile.toString())
                .redirectErrorStream(true).start();
        String printed = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
        assertThat(p.waitFor(120, TimeUnit.SECONDS)).as("the NumPy reference finished").isTrue();
        assertThat(p.exitValue()).as("python3 with NumPy (Debian: python3-numpy) ran the reference: %s", printed)
                .isZero();
        return json.readTree(outFile.toFile());
    }

    private static void put(ArrayNode a, float[] v) {
        for (float x : v) {
            a.add((double) x);
        }
    }
}
