package dev.weft.runtime.cli;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.ConfiguredRun;
import dev.weft.runtime.config.WeftConfig;
import dev.weft.runtime.dryrun.DryRun;
import dev.weft.runtime.dryrun.GateThresholds;
import dev.weft.runtime.recording.RecordedFrames;
import dev.weft.runtime.recording.Recording;
import dev.weft.runtime.recording.RecordingSpec;
import dev.weft.runtime.recording.Recordings;
import dev.weft.runtime.report.HtmlReport;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import java.util.stream.Stream;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;

/**
 * {@code weft demo}: the dry runs of the demo scenarios shipped in {@code examples/demo} (an invented
 * glaze dip cell, joint state only) and {@code examples/camera-demo} (an invented cell whose policy
 * sees a camera), every episode, the fault episodes included, with one report for the whole demo.
 */
@Command(name = "demo", mixinStandardHelpOptions = true,
        description = "Dry-run the shipped demo scenarios (examples/demo and examples/camera-demo: every recorded"
                + " episode, the fault episodes included) and write one report for them (exit 0 every episode passed, 1 one failed, 2 could not run).")
final class DemoCommand implements Callable<Integer> {

    /** Episodes whose name holds this are meant to make weft stop: they pass when it does. */
    static final String FAULT_MARK = "-glitch";

    @Option(names = "--report", paramLabel = "DIR", defaultValue = "weft-demo",
            description = "where to write the report (default ${DEFAULT-VALUE})")
    Path report;

    @Option(names = "--demo", paramLabel = "DIR",
            description = "one scenario's folder (default: both of examples/demo and examples/camera-demo of this"
                    + " weft checkout)")
    Path demo;

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    static Path defaultDemo() {
        String home = System.getenv("WEFT_HOME");
        return (home != null ? Path.of(home) : Path.of(".")).resolve("examples").resolve("demo");
    }

    /** The shipped scenarios, each a folder under {@code examples}: the glaze dip cell, then the camera cell. */
    static final List<String> SCENARIOS = List.of("demo", "camera-demo");

    @Override
    public Integer call() {
        PrintWriter out = spec.commandLine().getOut();
        PrintWriter err = spec.commandLine().getErr();
        Caution.print(out);
        List<Path> dirs = new ArrayList<>();
        if (demo != null) {
            dirs.add(demo);
        } else {
            Path examples = defaultDemo().getParent();
            for (String sc : SCENARIOS) {
                dirs.add(examples.resolve(sc));
            }
        }
        try {
            List<HtmlReport.Episode> episodes = new ArrayList<>();
            List<Object> scenarios = new ArrayList<>();
            boolean all = true;
            for (Path dir : dirs) {
                String prefix = dirs.size() > 1 ? dir.getFileName().toString() + "/" : "";
                all &= scenario(dir, prefix, out, episodes, scenarios);
            }
            Path html = report.resolve("report.html");
            HtmlReport.write(html, "weft demo", episodes);
            Map<String, Object> summary = new LinkedHashMap<>();
            summary.put("verdict", all ? "pass" : "fail");
            summary.put("scenarios", scenarios);
            Files.writeString(report.resolve("summary.json"),
                    new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT).writeValueAsString(summary) + "\n");
            out.println((all ? "PASS" : "FAIL") + "      the demo, " + dirs.size() + " scenario"
                    + (dirs.size() == 1 ? "" : "s") + ", " + episodes.size() + " episodes");
            out.println("report    " + html.toAbsolutePath().normalize());
            out.println("summary   " + report.resolve("summary.json").toAbsolutePath().normalize());
            out.flush();
            return all ? 0 : WeftCommand.VERDICT_FAILED;
        } catch (BadInputException e) {
            err.println("weft demo: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        } catch (IOException | RuntimeException e) {
            err.println("weft demo: could not run: " + e.getMessage());
            err.flush();
            return WeftCommand.COULD_NOT_RUN;
        }
    }

    /**
     * One scenario: every recording in {@code dir/recordings} ({@code *.csv} or {@code *.h5}, with
     * its cameras), dry-run under {@code report/<prefix><episode>}.
     *
     * @return whether every episode passed
     */
    private boolean scenario(Path dir, String prefix, PrintWriter out, List<HtmlReport.Episode> episodes,
                             List<Object> scenarios) throws BadInputException, IOException {
        Path config = dir.resolve("demo.yaml");
        WeftConfig c = WeftConfig.load(config);
        ConfiguredRun run = ConfiguredRun.of(c);
        List<Path> recordings;
        try (Stream<Path> files = Files.list(dir.resolve("recordings"))) {
            recordings = files.filter(p -> p.toString().endsWith(".csv") || p.toString().endsWith(".h5")).sorted()
                    .toList();
        } catch (IOException e) {
            throw new BadInputException(dir.resolve("recordings").toString(), "cannot list the demo's recordings: "
                    + e.getMessage());
        }
        if (recordings.isEmpty()) {
            throw new BadInputException(dir.resolve("recordings").toString(), "holds no recording (*.csv or *.h5)");
        }
        RecordingSpec spec = c.recordingSpec().orElseThrow(() ->
                new BadInputException(config.toString(), "the demo configuration has no recording section"));
        GateThresholds gates = GateThresholds.of(c.gates());
        out.println("demo      " + c.robot().name() + ", " + recordings.size() + " episodes from " + dir);
        out.flush();
        List<Object> index = new ArrayList<>();
        boolean all = true;
        for (Path file : recordings) {
            String name = file.getFileName().toString().replaceFirst("\\.(csv|h5)$", "");
            Recording rec = Recordings.read(file, spec);
            List<RecordedFrames> frames = file.toString().endsWith(".h5") ? Recordings.readCameras(file, spec)
                    : List.of();
            DryRunCommand.cameraNotes(frames, c).forEach(out::println);
            boolean fault = name.contains(FAULT_MARK);
            GateThresholds g = fault ? gates.withStops(1, -1) : gates;
            DryRun.Result r = DryRun.run(run, rec, frames, new DryRun.Options(report.resolve(prefix + name),
                    prefix + name, false, false, -1, g, System.console() != null ? out : null));
            DryRunCommand.printVerdict(out, r.summary());
            out.flush();
            episodes.add(new HtmlReport.Episode(r.summary(), r.trace()));
            all &= r.summary().passed();
            Map<String, Object> e = new LinkedHashMap<>();
            e.put("name", name);
            e.put("meant_to_stop", fault);
            e.put("verdict", r.summary().passed() ? "pass" : "fail");
            e.put("summary", prefix + name + "/summary.json");
            index.add(e);
        }
        Map<String, Object> sc = new LinkedHashMap<>();
        sc.put("scenario", c.robot().name());
        sc.put("folder", dir.getFileName().toString());
        sc.put("verdict", all ? "pass" : "fail");
        sc.put("episodes", index);
        scenarios.add(sc);
        return all;
    }
}
