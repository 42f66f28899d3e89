package dev.weft.examples.demo;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.dryrun.DryRun;
import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.runtime.dryrun.GateThresholds;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.Recordings;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.WatchdogCondition;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The shipped demo dry-run through weft's own loop, limiter and watchdog, judged by the gates of
 * its configuration: the clean episodes pass them, and the fault episode is stopped by its logger
 * dropout after the glitch was met while armed.
 */
class DemoDryRunTest {

    static final Path CONFIG = Path.of("..").resolve(BuildDemo.DEMO).resolve(BuildDemo.CONFIG);

    static WeftConfig config;
    static ConfiguredRun run;

    @TempDir
    static Path reports;

    @BeforeAll
    static void load() throws Exception {
        config = WeftConfig.parse(Files.readString(CONFIG), CONFIG.getParent(), CONFIG.toString());
        run = ConfiguredRun.of(config);
    }

    static Iterable<String> episodes() {
        return BuildDemo.names();
    }

    static DryRun.Result dryRun(String name, GateThresholds gates) throws Exception {
        Recording rec = Recordings.read(CONFIG.getParent().resolve(BuildDemo.RECORDINGS).resolve(name + ".csv"),
                config.recordingSpec().orElseThrow());
        // inference latency modelled as one tick, whatever this machine's timing: the same run every time
        return DryRun.run(run, rec, new DryRun.Options(reports.resolve(name), name, false, false, 1, gates, null));
    }

    @ParameterizedTest
    @MethodSource("episodes")
    void everyEpisodeMeetsTheGatesOfTheShippedConfiguration(String name) throws Exception {
        boolean fault = name.equals(BuildDemo.FAULT);
        GateThresholds gates = GateThresholds.of(config.gates());
        // the fault episode is meant to stop: at least one stop instead of none, as weft demo judges it
        DryRun.Result r = dryRun(name, fault ? gates.withStops(1, -1) : gates);
        DryRunSummary s = r.summary();
        assertThat(s.gates()).as("%s: the error gates are checked", name)
                .anyMatch(g -> g.name().equals("rms_error.lift") && g.threshold() == DemoConfig.RMS_ERROR_MAX);
        assertThat(s.gates()).as(name).allMatch(DryRunSummary.Gate::passed);
        assertThat(s.passed()).isTrue();
        assertThat(s.boundViolations()).isZero();
        for (double e : s.rmsError()) {
            assertThat(e).as(name).isFinite().isLessThanOrEqualTo(DemoConfig.RMS_ERROR_MAX);
        }
        if (fault) {
            assertThat(s.stops()).hasSize(1);
            DryRunSummary.Stop stop = s.stops().get(0);
            assertThat(stop.causeCode()).isEqualTo(WatchdogCondition.STALE_OBSERVATION.code());
            // the last sample before the dropout is at DROPOUT_TIME - 0.01 s; the observation age bound
            // (0.03 s) runs out a few ticks after DROPOUT_TIME
            assertThat(stop.timeSeconds()).isCloseTo(BuildDemo.DROPOUT_TIME + 0.02, within(0.01));
            // the glitch came while weft was armed, so the limiter (not the soft start) shaped it
            double[] time = r.trace().timeSeconds();
            int at = 0;
            while (time[at] < BuildDemo.GLITCH_TIME) {
                at++;
            }
            assertThat(r.trace().states()[at]).isEqualTo((byte) SupervisorState.ARMED.ordinal());
        } else {
            assertThat(s.stops()).isEmpty();
        }
    }
}
