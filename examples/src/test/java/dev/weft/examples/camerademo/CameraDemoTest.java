package dev.weft.examples.camerademo;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.dryrun.DryRun;
import dev.weft.runtime.dryrun.GateThresholds;
import dev.weft.runtime.recording.RecordedFrames;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.Recordings;
import dev.weft.safety.WatchdogCondition;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The shipped seed-tray scenario dry-run through weft's loop with its camera replayed: the clean
 * episodes pass their gates with inference several control periods long (stale steps dropped),
 * the camera that stops stops the arm, the plan really comes from the image (another episode's
 * frames make the arm miss), and the shipped files are what the generator writes.
 */
class CameraDemoTest {

    static final Path DIR = Path.of("..", "examples", "camera-demo");
    /** Inference modelled as six ticks (30 ms) whatever this machine's timing: the same run every time. */
    static final long LATENCY_TICKS = 6;

    static WeftConfig config;
    static ConfiguredRun run;

    @TempDir
    static Path reports;

    @BeforeAll
    static void load() throws Exception {
        Path yaml = DIR.resolve("demo.yaml");
        config = WeftConfig.parse(Files.readString(yaml), DIR, yaml.toString());
        run = ConfiguredRun.of(config);
    }

    static Path recording(String name) {
        return DIR.resolve("recordings").resolve(name + ".h5");
    }

    static DryRun.Result dryRun(String name, List<RecordedFrames> frames, GateThresholds gates, String out)
            throws Exception {
        return dryRun(name, frames, gates, out, false);
    }

    static DryRun.Result dryRun(String name, List<RecordedFrames> frames, GateThresholds gates, String out,
                                boolean closedLoop) throws Exception {
        Recording rec = Recordings.read(recording(name), config.recordingSpec().orElseThrow());
        return DryRun.run(run, rec, frames, new DryRun.Options(reports.resolve(out), name, closedLoop, false,
                LATENCY_TICKS, gates, null));
    }

    static List<RecordedFrames> frames(String name) throws Exception {
        return Recordings.readCameras(recording(name), config.recordingSpec().orElseThrow());
    }

    @ParameterizedTest
    @ValueSource(strings = {"tray-01", "tray-02", "tray-03", "tray-04"})
    void everyCleanEpisodePassesItsGatesWithTheInferenceTakingSeveralPeriods(String name) throws Exception {
        DryRun.Result r = dryRun(name, frames(name), GateThresholds.of(config.gates()), name);
        assertThat(r.summary().passed()).as(r.summary().toString()).isTrue();
        assertThat(r.summary().stops()).isEmpty();
        // a chunk arrives six ticks after its observation: its first steps are stale and dropped
        assertThat(r.summary().staleDropped()).isPositive();
        assertThat(r.summary().deferredQueries()).isZero();
        // the inference figures the summary carries were measured on this machine, in ms
        assertThat(r.summary().inferenceMs().p50()).isPositive();
        assertThat(r.summary().inferenceMs().p99()).isGreaterThanOrEqualTo(r.summary().inferenceMs().p50());
        assertThat(r.trace().frames()).hasSize(4);
    }

    @Test
    void theCameraThatStopsStopsTheArmOnceItsLastFrameIsOlderThanItsBound() throws Exception {
        DryRun.Result r = dryRun("tray-05-glitch", frames("tray-05-glitch"),
                GateThresholds.of(config.gates()).withStops(1, -1), "glitch");
        assertThat(r.summary().passed()).isTrue();
        assertThat(r.summary().stops()).hasSize(1);
        assertThat(r.summary().stops().get(0).causeCode()).isEqualTo(WatchdogCondition.FRAME_STALE.code());
        // the last frame is at 2.963 s and the bound 0.15 s: stale from 3.113 s, the tick at 3.115 s
        assertThat(r.summary().stops().get(0).timeSeconds()).isBetween(3.11, 3.125);
    }

    @Test
    void thePlanComesFromTheImageAnotherEpisodesFramesMakeTheArmMiss() throws Exception {
        GateThresholds gates = GateThresholds.of(config.gates());
        // closed loop: the simulated arm follows weft's commands and the policy observes the arm, so
        // the plan has only the image to tell it where the tray is (replayed open loop, the recorded
        // states would carry it toward the right tray whatever the image)
        DryRun.Result own = dryRun("tray-04", frames("tray-04"), gates, "own", true);
        DryRun.Result swapped = dryRun("tray-04", frames("tray-01"), gates, "swapped", true);
        // where each run left the arm, against the two trays' poses (the generator's own geometry)
        List<BuildCameraDemo.Episode> shipped = BuildCameraDemo.episodes();
        double[] want = BuildCameraDemo.goal(shipped.get(3).x(), shipped.get(3).y());
        double[] other = BuildCameraDemo.goal(shipped.get(0).x(), shipped.get(0).y());
        double ownMiss = 0;
        double swappedMiss = 0;
        double swappedToOther = 0;
        for (int j = 0; j < 3; j++) {
            double[] a = own.trace().joints().get(j).command();
            double[] b = swapped.trace().joints().get(j).command();
            ownMiss = Math.max(ownMiss, Math.abs(a[a.length - 1] - want[j]));
            swappedMiss = Math.max(swappedMiss, Math.abs(b[b.length - 1] - want[j]));
            swappedToOther = Math.max(swappedToOther, Math.abs(b[b.length - 1] - other[j]));
        }
        String m = "own miss " + ownMiss + ", swapped miss " + swappedMiss + ", swapped to tray-01's pose " + swappedToOther;
        // measured here: own 0.058, swapped 0.84 from tray-04's pose and 0.095 from tray-01's (closed
        // loop the simulated arm lags and the fitted head was never shown its states, hence the
        // residual of a few centiradians either way)
        assertThat(ownMiss).as(m).isLessThan(0.1);
        assertThat(swappedMiss).as(m).isGreaterThan(0.5);
        assertThat(swappedToOther).as(m).isLessThan(0.15);
        assertThat(swapped.summary().passed()).isFalse();
    }

    @Test
    void theShippedFilesAreWhatTheGeneratorWrites(@TempDir Path fresh) throws Exception {
        BuildCameraDemo.main(new String[] {fresh.toString()});
        for (String f : List.of("demo.yaml", "models/tray-policy.onnx", "recordings/tray-01.h5",
                "recordings/tray-05-glitch.h5")) {
            assertThat(Files.mismatch(fresh.resolve(f), DIR.resolve(f))).as(f + " differs: regenerate").isEqualTo(-1);
        }
    }
}
