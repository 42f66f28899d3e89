package dev.weft.runtime.recording;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.catchThrowableOfType;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import dev.weft.runtime.config.GatesConfig;
import dev.weft.runtime.config.RecordingConfig;
import dev.weft.runtime.config.WeftConfig;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Optional;
import java.util.OptionalDouble;
import java.util.OptionalLong;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The configuration's recording and gates sections, and a recording read with the spec they give. */
class RecordingSectionsTest {

    /** Two joints, observation size 3; the recording and gates sections are appended from line 31 on. */
    static final String BASE = """
            robot:
              name: arm
              joints:
                - name: shoulder
                  position: {min: -2.8, max: 2.8}
                  velocity: 2.0
                  acceleration: 8.0
                  jerk: 80.0
                - name: elbow
                  position: {min: -2.0, max: 2.0}
                  velocity: 2.5
                  acceleration: 10.0
                  jerk: 100.0
            timing:
              control_period: 0.002
            policy:
              model: arm.onnx
              observation_size: 3
              inputs:
                obs: {source: observation}
              output:
                layout: 1xKxD
            watchdog:
              observation_age_max: 0.02
              inference_latency_max: 0.05
              overruns_max: 5
            arming:
              pose_distance_max: 0.05
            source: {kind: sim}
            port: {kind: sim}
            """;

    @TempDir
    Path dir;

    @BeforeEach
    void model() throws Exception {
        Files.writeString(dir.resolve("arm.onnx"), "the configuration reader only checks that the file exists");
    }

    private WeftConfig parse(String sections) throws BadInputException {
        return WeftConfig.parse(BASE + sections, dir, "weft.yaml");
    }

    private List<String> problems(String sections) {
        BadInputException e = catchThrowableOfType(() -> parse(sections), BadInputException.class);
        assertThat(e).as("the configuration must be refused").isNotNull();
        return e.problems().stream().map(Problem::toString).toList();
    }

    @Test
    void bothSectionsAreOptional() throws Exception {
        WeftConfig c = parse("");
        assertThat(c.recording()).isEmpty();
        assertThat(c.recordingSpec()).isEmpty();
        assertThat(c.gates()).isEqualTo(GatesConfig.DEFAULTS);
        assertThat(c.gates().gatesRmsError()).isFalse();
        assertThat(c.gates().stopsMax()).isZero();
        assertThat(c.gates().starvedTicksMax()).isZero();
    }

    @Test
    void aCsvLayoutGivesASpecWithTheJointNamesAndObservationSize() throws Exception {
        WeftConfig c = parse("""
                recording:
                  format: csv
                  time: t
                  observation: [q0, q1, 2]
                  action: [a.shoulder, a.elbow]
                """);
        RecordingConfig rc = c.recording().orElseThrow();
        assertThat(rc.format()).contains(RecordingFormat.CSV);
        assertThat(rc.observation()).isEqualTo(Columns.list(List.of("q0", "q1", "2")));
        RecordingSpec spec = c.recordingSpec().orElseThrow();
        assertThat(spec.observationSize()).isEqualTo(3);
        assertThat(spec.jointNames()).containsExactly("shoulder", "elbow");

        Path f = dir.resolve("bench.csv");
        Files.writeString(f, "t,q0,q1,2,a.shoulder,a.elbow\n0,1,2,3,4,5\n0.5,6,7,8,9,10\n");
        Recording r = Recordings.read(f, spec);
        double[] obs = new double[3];
        r.observation(1, obs);
        assertThat(obs).containsExactly(6.0, 7.0, 8.0);
        assertThat(r.actionNames()).containsExactly("shoulder", "elbow");
    }

    @Test
    void anHdf5LayoutMayNameOneMatrixAndLeaveTheFormatToTheExtension() throws Exception {
        WeftConfig c = parse("""
                recording:
                  time: /episode/time
                  observation: /episode/observation
                  action: [/episode/cmd/shoulder, /episode/cmd/elbow]
                """);
        RecordingConfig rc = c.recording().orElseThrow();
        assertThat(rc.format()).isEmpty();
        assertThat(rc.observation()).isEqualTo(Columns.matrix("/episode/observation"));
        assertThat(rc.action().matrix()).isFalse();
    }

    @Test
    void recordingProblemsAreReportedWithKeyPathAndLine() {
        assertThat(problems("""
                recording:
                  format: parquet
                  observation: [q0, q0, {name: q2}]
                  action: []
                  layout: wide
                """)).containsExactly(
                "recording.time (line 31): is required",
                "recording.format (line 32): must be one of csv, hdf5, got \"parquet\"",
                "recording.observation[1] (line 33): \"q0\" is already named by recording.observation[0]",
                "recording.observation[2] (line 33): must be a column name or dataset path, got a map",
                "recording.action (line 34): must name at least one column",
                "recording.layout (line 35): unknown key");
    }

    @Test
    void columnCountsMustMatchThePolicyAndTheJoints() {
        assertThat(problems("""
                recording:
                  time: time
                  observation: [q0, q1]
                  action: [a0, a1, a2]
                """)).containsExactly(
                "recording.observation (line 33): must name one column per observation value "
                        + "(policy.observation_size = 3), got 2",
                "recording.action (line 34): must name one column per joint, in joint order (2 in robot.joints), got 3");
    }

    @Test
    void csvNeedsColumnNamesNotOneDataset() {
        assertThat(problems("""
                recording:
                  format: csv
                  time: time
                  observation: state
                  action: [a0, a1]
                """)).containsExactly(
                "recording.observation (line 34): must be a list of column names with format csv (one name stands "
                        + "for a 2-D HDF5 dataset), got \"state\"");
    }

    @Test
    void gatesTakeOneNumberForEveryJointOrOnePerJoint() throws Exception {
        GatesConfig g = parse("""
                gates:
                  rms_error_max: 0.01
                  max_error_max: [0.05, 0.1]
                  stops_max: 1
                  starved_ticks_max: 25
                  inference_p99_max: 0.004
                  stale_dropped_max: 100
                """).gates();
        assertThat(g.rmsErrorMax()).containsExactly(0.01, 0.01);
        assertThat(g.maxErrorMax()).containsExactly(0.05, 0.1);
        assertThat(g.stopsMax()).isEqualTo(1);
        assertThat(g.starvedTicksMax()).isEqualTo(25);
        assertThat(g.inferenceP99Max()).isEqualTo(OptionalDouble.of(0.004));
        assertThat(g.staleDroppedMax()).isEqualTo(OptionalLong.of(100));
        assertThat(g.gatesRmsError()).isTrue();
        assertThat(g.gatesMaxError()).isTrue();
    }

    @Test
    void gateProblemsAreReportedWithKeyPathAndLine() {
        assertThat(problems("""
                gates:
                  rms_error_max: [0.01]
                  max_error_max: [0.05, -0.1]
                  stops_max: 1.5
                  starved_ticks_max: -1
                  inference_p99_max: 0
                  stale_dropped_max: lots
                  bound_violations_max: 3
                """)).containsExactly(
                "gates.rms_error_max (line 32): must have one number per joint (2 in robot.joints), got 1",
                "gates.max_error_max[1] (line 33): must be >= 0, got -0.1",
                "gates.stops_max (line 34): must be a whole number, got 1.5",
                "gates.starved_ticks_max (line 35): must be >= 0, got -1",
                "gates.inference_p99_max (line 36): must be > 0, got 0",
                "gates.stale_dropped_max (line 37): must be a whole number, got \"lots\"",
                "gates.bound_violations_max (line 38): cannot be configured: a dry run in which any command leaves "
                        + "the limiter's bounds always fails");
        assertThat(problems("gates:\n  rms_error_max: {shoulder: 0.1}\n")).containsExactly(
                "gates.rms_error_max (line 32): must be a number or a list of numbers (one per joint), got a map");
    }

    @Test
    void theSpecKeepsTheFormatGiven() throws Exception {
        RecordingSpec spec = parse("""
                recording:
                  format: hdf5
                  time: t
                  observation: obs
                  action: act
                """).recordingSpec().orElseThrow();
        assertThat(spec.format()).isEqualTo(Optional.of(RecordingFormat.HDF5));
        assertThat(spec.action()).isEqualTo(Columns.matrix("act"));
    }
}
