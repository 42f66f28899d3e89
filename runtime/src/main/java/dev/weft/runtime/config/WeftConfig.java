package dev.weft.runtime.config;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.policy.PolicySpec;
import dev.weft.runtime.port.PortOptions;
import java.io.IOException;
import java.nio.charset.CharacterCodingException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Optional;
import dev.weft.runtime.recording.RecordingSpec;

/**
 * One run's configuration, read from one YAML file: the robot, timing, the policy, blending,
 * smoothing, the watchdog, arming, the observation source, the command port, telemetry, and for
 * dry runs the layout of recordings and the gates a dry run is judged by.
 * Every key and its unit is described in {@code docs/configuration.md}.
 *
 * <p>Reading checks the whole file before returning: every problem (a wrong type, a value out of
 * range, an unknown key, a missing key, a rule between keys) is reported at once, each with its key
 * path and line, in one {@link BadInputException}, such as
 * {@code robot.joints[3].jerk (line 14): must be > 0, got -2}. Nothing is returned half-checked.
 *
 * <p>Immutable and thread-safe. The ONNX model is not opened here; only its path is checked.
 *
 * @param robot the joints and their limits
 * @param timing control period, policy step and query schedule
 * @param cameras the camera streams ({@code cameras}), in document order; empty when there are none
 * @param policy the policy section, mapped onto the records the ONNX adapter takes
 * @param blending how chunks are blended
 * @param smoothing the optional smoothing filter
 * @param watchdog the watchdog's bounds
 * @param arming arming and stopping
 * @param source the observation source
 * @param port the command port
 * @param telemetry telemetry recording
 * @param recording where recordings keep their values, or empty when the file has no {@code recording}
 *     section (a dry run needs one)
 * @param gates the thresholds a dry run is judged by ({@link GatesConfig#DEFAULTS} when not given)
 */
public record WeftConfig(RobotConfig robot, TimingConfig timing, List<CameraConfig> cameras, PolicySpec policy, BlendingConfig blending,
                         SmoothingConfig smoothing, WatchdogConfig watchdog, ArmingConfig arming, EndpointConfig source,
                         EndpointConfig port, TelemetryConfig telemetry, Optional<RecordingConfig> recording,
                         GatesConfig gates) {

    /** Spin window when none is configured (capped at half the control period), in seconds. */
    public static final double DEFAULT_SPIN_WINDOW = 0.0002;

    /** Standard deviation of a noise input when none is configured (a standard normal draw). */
    public static final double DEFAULT_NOISE_STDDEV = 1.0;

    /** One Euro derivative cutoff when none is configured, in Hz. */
    public static final double DEFAULT_DERIVATIVE_CUTOFF = 1.0;

    public WeftConfig {
        if (robot == null || timing == null || cameras == null || policy == null || blending == null || smoothing == null
                || watchdog == null || arming == null || source == null || port == null || telemetry == null
                || recording == null || gates == null) {
            throw new IllegalArgumentException("every section of a configuration must be given");
        }
        cameras = List.copyOf(cameras);
    }

    /** A configuration with no {@code recording} section and the default gates. */
    public WeftConfig(RobotConfig robot, TimingConfig timing, PolicySpec policy, BlendingConfig blending,
                      SmoothingConfig smoothing, WatchdogConfig watchdog, ArmingConfig arming, EndpointConfig source,
                      EndpointConfig port, TelemetryConfig telemetry) {
        this(robot, timing, List.of(), policy, blending, smoothing, watchdog, arming, source, port, telemetry, Optional.empty(),
                GatesConfig.DEFAULTS);
    }

    /** This configuration with another telemetry section (the command line's {@code --overwrite}). */
    public WeftConfig withTelemetry(TelemetryConfig t) {
        return new WeftConfig(robot, timing, cameras, policy, blending, smoothing, watchdog, arming, source, port, t, recording,
                gates);
    }

    /** Largest configuration file read: 1 MiB. */
    public static final int MAX_FILE_BYTES = 1 << 20;

    /**
     * Reads and checks a configuration file. Relative paths in it resolve against the file's folder.
     *
     * @param file a YAML file, UTF-8
     * @return the checked configuration
     * @throws BadInputException naming the file when it cannot be read, is larger than 1 MiB, or is
     *     not valid YAML (with line and column), or listing every problem with its key path and line
     */
    public static WeftConfig load(Path file) throws BadInputException {
        Path abs = file.toAbsolutePath().normalize();
        String text;
        try (java.io.InputStream in = Files.newInputStream(abs)) {
            // read at most one byte past the bound, so a huge file (or an endless stream) is refused
            // without being held in memory
            byte[] bytes = in.readNBytes(MAX_FILE_BYTES + 1);
            if (bytes.length > MAX_FILE_BYTES) {
                throw new BadInputException(file.toString(), "is larger than " + MAX_FILE_BYTES
                        + " bytes; a configuration may hold at most 1 MiB");
            }
            text = java.nio.charset.StandardCharsets.UTF_8.newDecoder()
                    .onMalformedInput(java.nio.charset.CodingErrorAction.REPORT)
                    .onUnmappableCharacter(java.nio.charset.CodingErrorAction.REPORT)
                    .decode(java.nio.ByteBuffer.wrap(bytes)).toString();
        } catch (NoSuchFileException e) {
            throw new BadInputException(file.toString(), "file not found");
        } catch (CharacterCodingException e) {
            throw new BadInputException(file.toString(), "is not UTF-8 text");
        } catch (IOException e) {
            throw new BadInputException(file.toString(), "cannot be read: " + e.getMessage());
        }
        return parse(text, abs.getParent(), file.toString());
    }

    /**
     * Reads and checks a configuration given as text.
     *
     * @param yaml the YAML text
     * @param baseDir the folder relative paths resolve against (normally the file's folder)
     * @param sourceName how messages about the text as a whole name it (normally the file name)
     * @return the checked configuration
     * @throws BadInputException as {@link #load(Path)}
     */
    public static WeftConfig parse(String yaml, Path baseDir, String sourceName) throws BadInputException {
        YamlTree tree = YamlTree.read(yaml, sourceName);
        return new ConfigParser(tree, baseDir.toAbsolutePath().normalize()).parse();
    }

    /**
     * The policy section as the ONNX adapter takes it. The action size D is the configured
     * {@code policy.output.action_size}, or the number of joints when that is not given.
     */
    public PolicySpec policySpec() {
        return policy;
    }

    /** A fresh reader of {@code port.options}, for the port provider of {@code port.kind}. */
    public PortOptions portOptions() {
        return port.reader();
    }

    /** A fresh reader of {@code source.options}, for the source of {@code source.kind}. */
    public PortOptions sourceOptions() {
        return source.reader();
    }

    /**
     * What {@link dev.weft.runtime.recording.Recordings#read} needs to read a recording for this
     * configuration: the {@code recording} section with the policy's observation size and the
     * joint names in action order.
     *
     * @return the spec, or empty when the file has no {@code recording} section
     */
    public Optional<RecordingSpec> recordingSpec() {
        if (recording.isEmpty()) {
            return Optional.empty();
        }
        RecordingConfig c = recording.get();
        List<String> joints = new ArrayList<>();
        for (JointConfig j : robot.joints()) {
            joints.add(j.name());
        }
        return Optional.of(new RecordingSpec(c.format(), c.time(), c.observation(), c.action(),
                policy.observationSize(), joints, c.cameras()));
    }
}
