package dev.weft.runtime.report;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import dev.weft.runtime.dryrun.DryRunSummary;
import dev.weft.runtime.dryrun.DryRunTrace;
import dev.weft.safety.JerkLimiter;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.WatchdogCondition;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashSet;
import java.util.List;
import java.util.Random;
import java.util.Set;
import java.util.stream.Collectors;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.w3c.dom.Document;
import org.w3c.dom.Element;
import org.w3c.dom.Node;

/**
 * The report is read back with the JDK's XML parser (the whole document, as XHTML) and its parts
 * are found by the classes the renderer puts on them.
 */
class HtmlReportTest {

    private static final String XHTML = "http://www.w3.org/1999/xhtml";
    private static final String SVG = "http://www.w3.org/2000/svg";

    private static String one(HtmlReport.Episode e) {
        return HtmlReport.render("test report", List.of(e));
    }

    private static List<Element> jointFigures(Document d) {
        return Xhtml.all(d, "//figure" + Xhtml.hasClass("joint"));
    }

    /** x of time t in a joint plot of a trace that starts at 0 and has its last tick at tEnd. */
    private static double jointX(double t, double tEnd) {
        return JointPlot.LEFT + t / tEnd * JointPlot.COLUMNS;
    }

    /** y of value v from the plot's own axis labels (label y is the tick's y + 4). */
    private static double axisY(Element svg, double v) {
        List<Element> ticks = Xhtml.all(svg, ".//text" + Xhtml.hasClass("tick") + "[@text-anchor='end']");
        assertThat(ticks).hasSizeGreaterThanOrEqualTo(2);
        double v0 = Double.parseDouble(ticks.get(0).getTextContent());
        double y0 = Xhtml.number(ticks.get(0), "y") - 4;
        double v1 = Double.parseDouble(ticks.get(ticks.size() - 1).getTextContent());
        double y1 = Xhtml.number(ticks.get(ticks.size() - 1), "y") - 4;
        return y0 + (v - v0) / (v1 - v0) * (y1 - y0);
    }

    @Test
    void shouldBeWellFormedXhtmlWithEveryFigureInTheSvgNamespace() {
        HtmlReport.Episode e = Synthetic.run().joints("a", "b", "c").realtime(true).fault(1500).build();
        Document d = Xhtml.parse(one(e), true);
        assertThat(d.getDocumentElement().getNamespaceURI()).isEqualTo(XHTML);
        assertThat(d.getDocumentElement().getLocalName()).isEqualTo("html");
        // three joints, latency, period error, timeline
        assertThat(d.getElementsByTagNameNS(SVG, "svg").getLength()).isEqualTo(6);
        assertThat(d.getElementsByTagNameNS(XHTML, "svg").getLength()).isZero();
    }

    @Test
    void shouldOpenWithTheVerdictAndTheCautionBeforeAnyPlot() {
        Document d = Xhtml.parse(one(Synthetic.run().build()));
        Element verdict = Xhtml.one(d, "//*[@id='verdict']");
        Element caution = Xhtml.one(d, "//div" + Xhtml.hasClass("caution"));
        Element firstSvg = Xhtml.all(d, "//svg").get(0);
        assertThat(verdict.compareDocumentPosition(caution) & Node.DOCUMENT_POSITION_FOLLOWING).isNotZero();
        assertThat(caution.compareDocumentPosition(firstSvg) & Node.DOCUMENT_POSITION_FOLLOWING).isNotZero();
        assertThat(Xhtml.one(verdict, ".//*" + Xhtml.hasClass("verdict-word")).getTextContent()).isEqualTo("PASS");
        String text = caution.getTextContent().replaceAll("\\s+", " ");
        assertThat(text).contains("not a safety-rated component", "hardware emergency stop",
                "safety-rated controller stay in charge", "risk assessment", "not what the robot would have done",
                "local codes and licensed practice");

        Document failed = Xhtml.parse(one(Synthetic.run().failed().build()));
        Element word = Xhtml.one(failed, "//*[@id='verdict']//*" + Xhtml.hasClass("verdict-word"));
        assertThat(word.getTextContent()).isEqualTo("FAIL");
        assertThat(Xhtml.one(failed, "//*[@id='verdict']").getTextContent()).contains("failed gate: worst RMS error");
    }

    @Test
    void shouldPlotEveryJointWithThreeSeriesOfDistinctDashAndColour() {
        String[] names = {"j1", "j2", "j3", "j4", "j5", "j6"};
        Document d = Xhtml.parse(one(Synthetic.run().joints(names).build()));
        List<Element> figures = jointFigures(d);
        assertThat(figures).hasSize(6);
        for (Element f : figures) {
            List<Element> series = Xhtml.all(f, ".//path" + Xhtml.hasClass("series"));
            assertThat(series).extracting(s -> s.getAttribute("class"))
                    .containsExactlyInAnyOrder("series series-recorded", "series series-target", "series series-command");
            Set<String> dashes = series.stream().map(s -> s.getAttribute("stroke-dasharray")).collect(Collectors.toSet());
            Set<String> colours = series.stream().map(s -> s.getAttribute("stroke")).collect(Collectors.toSet());
            assertThat(dashes).hasSize(3);
            assertThat(colours).hasSize(3);
            for (Element s : series) {
                assertThat(Xhtml.points(s.getAttribute("d"))).isNotEmpty();
            }
            // the legend shows each series' own dash pattern
            Set<String> legendDashes = Xhtml.all(f, ".//g" + Xhtml.hasClass("legend-entry") + "/line").stream()
                    .map(l -> l.getAttribute("stroke-dasharray")).collect(Collectors.toSet());
            assertThat(legendDashes).containsAll(dashes);
        }
        for (int j = 0; j < names.length; j++) {
            assertThat(figures.get(j).getTextContent()).contains("Joint " + (j + 1) + ", " + names[j]);
        }
    }

    @Test
    void shouldDrawTheOperatingBoundsAtTheirValuesOnTheAxis() {
        Document d = Xhtml.parse(one(Synthetic.run().bounds(-1.2, 1.2).build()));
        for (Element f : jointFigures(d)) {
            Element svg = Xhtml.one(f, "svg");
            List<Element> bounds = Xhtml.all(svg, ".//line" + Xhtml.hasClass("bound"));
            assertThat(bounds).hasSize(2);
            assertThat(bounds).allSatisfy(b -> assertThat(b.getAttribute("stroke-dasharray"))
                    .isEqualTo(SvgParts.DASH_BOUND));
            double lowerY = Xhtml.number(bounds.get(0), "y1");
            double upperY = Xhtml.number(bounds.get(1), "y1");
            assertThat(lowerY).isCloseTo(axisY(svg, -1.2), org.assertj.core.data.Offset.offset(0.11));
            assertThat(upperY).isCloseTo(axisY(svg, 1.2), org.assertj.core.data.Offset.offset(0.11));
            assertThat(Xhtml.all(svg, ".//text" + Xhtml.hasClass("off-scale"))).isEmpty();
        }
        // bounds far outside a small motion are named at the plot's edge instead of squashing it
        Document far = Xhtml.parse(one(Synthetic.run().bounds(-5, 5).amplitude(0.2).build()));
        for (Element f : jointFigures(far)) {
            assertThat(Xhtml.all(f, ".//line" + Xhtml.hasClass("bound"))).isEmpty();
            assertThat(Xhtml.all(f, ".//text" + Xhtml.hasClass("off-scale"))).extracting(Node::getTextContent)
                    .containsExactlyInAnyOrder("upper bound 5 is above the plot", "lower bound -5 is below the plot");
        }
    }

    @Test
    void shouldMarkLimiterActivityWhereFlagsAreSetAndNowhereElse() {
        HtmlReport.Episode base = Synthetic.run().ticks(2001).build();
        int n = 2001;
        double tEnd = (n - 1) * Synthetic.PERIOD;
        int[] first = new int[n];
        for (int i = 500; i < 600; i++) {
            first[i] = JerkLimiter.VELOCITY;
        }
        first[1500] = JerkLimiter.JERK | JerkLimiter.NOT_VIABLE;
        HtmlReport.Episode e = Synthetic.withJoint(base, 0, Synthetic.withFlags(base.trace().joints().get(0), first));
        e = Synthetic.withJoint(e, 1, Synthetic.withFlags(e.trace().joints().get(1), new int[n]));
        Document d = Xhtml.parse(one(e));
        List<Element> figures = jointFigures(d);

        Element j0 = figures.get(0);
        List<double[]> velocity = Xhtml.bands(Xhtml.one(j0, ".//path" + Xhtml.hasClass("limit-velocity")));
        assertThat(velocity).hasSize(1);
        double x = velocity.get(0)[0];
        double w = velocity.get(0)[1];
        assertThat(x).isBetween(jointX(500 * Synthetic.PERIOD, tEnd) - 1, jointX(500 * Synthetic.PERIOD, tEnd));
        assertThat(x + w).isBetween(jointX(600 * Synthetic.PERIOD, tEnd) - 1, jointX(600 * Synthetic.PERIOD, tEnd) + 1);
        List<double[]> jerk = Xhtml.bands(Xhtml.one(j0, ".//path" + Xhtml.hasClass("limit-jerk")));
        assertThat(jerk).hasSize(1);
        assertThat(jerk.get(0)[1]).isGreaterThanOrEqualTo(1);
        assertThat(jerk.get(0)[0]).isCloseTo(jointX(1500 * Synthetic.PERIOD, tEnd),
                org.assertj.core.data.Offset.offset(1.0));
        assertThat(Xhtml.bands(Xhtml.one(j0, ".//path" + Xhtml.hasClass("limit-fault")))).hasSize(1);
        assertThat(Xhtml.all(j0, ".//*" + Xhtml.hasClass("limit-position"))).isEmpty();
        assertThat(Xhtml.all(j0, ".//*" + Xhtml.hasClass("limit-acceleration"))).isEmpty();
        assertThat(j0.getTextContent()).contains("velocity 100, acceleration 0, jerk 1; limiter fault flags on 1 ticks");

        Element j1 = figures.get(1);
        assertThat(Xhtml.all(j1, ".//*" + Xhtml.hasClass("limit"))).isEmpty();
        assertThat(Xhtml.all(j1, ".//text" + Xhtml.hasClass("lane-none"))).hasSize(4);
        // the fault lane appears only for a joint whose limiter raised a fault flag
        assertThat(Xhtml.all(j1, ".//g" + Xhtml.hasClass("lane-fault"))).isEmpty();
        assertThat(Xhtml.all(j0, ".//g" + Xhtml.hasClass("lane-fault"))).hasSize(1);
    }

    @Test
    void shouldDrawEveryStopInEveryJointPlotAndInTheTimeline() {
        int n = 3001;
        double tEnd = (n - 1) * Synthetic.PERIOD;
        Document d = Xhtml.parse(one(Synthetic.run().ticks(n).fault(1200).build()));
        for (Element f : jointFigures(d)) {
            List<Element> stops = Xhtml.all(f, ".//g" + Xhtml.hasClass("stop"));
            assertThat(stops).hasSize(1);
            Element line = Xhtml.one(stops.get(0), "line");
            assertThat(Xhtml.number(line, "x1")).isCloseTo(jointX(1200 * Synthetic.PERIOD, tEnd),
                    org.assertj.core.data.Offset.offset(0.11));
            assertThat(stops.get(0).getTextContent()).contains("tick 1200", "INFERENCE_LATE");
        }
        Element timeline = Xhtml.one(d, "//figure" + Xhtml.hasClass("timeline"));
        assertThat(Xhtml.all(timeline, ".//g" + Xhtml.hasClass("stop"))).hasSize(1);
        assertThat(Xhtml.one(d, "//table" + Xhtml.hasClass("stop-figures")).getTextContent()).contains("1200");

        Document calm = Xhtml.parse(one(Synthetic.run().build()));
        assertThat(Xhtml.all(calm, "//g" + Xhtml.hasClass("stop"))).isEmpty();
        assertThat(Xhtml.one(calm, "//table" + Xhtml.hasClass("stop-figures")).getTextContent())
                .contains("no stop in this run");
    }

    @Test
    void histogramBinsShouldAddUpToTheFiniteSamples() {
        HtmlReport.Episode e = Synthetic.run().ticks(4000).realtime(true).build();
        DryRunTrace t = e.trace();
        double[] latency = Arrays.copyOf(t.inferenceLatencyMs(), t.inferenceLatencyMs().length + 2);
        latency[latency.length - 2] = Double.NaN;
        latency[latency.length - 1] = Double.POSITIVE_INFINITY;
        e = new HtmlReport.Episode(e.summary(), new DryRunTrace(t.timeSeconds(), t.joints(), t.states(),
                t.watchdogMasks(), latency, t.periodErrorMs()));
        Document d = Xhtml.parse(one(e));

        Element lat = Xhtml.one(d, "//figure" + Xhtml.hasClass("latency"));
        assertThat(binTotal(lat)).isEqualTo(latency.length - 2);
        assertThat(lat.getTextContent()).contains("2 non-finite left out");
        assertThat(Xhtml.all(lat, ".//g" + Xhtml.hasClass("mark"))).extracting(g -> g.getAttribute("class"))
                .containsExactly("mark mark-p50", "mark mark-p99", "mark mark-max");
        Element period = Xhtml.one(d, "//figure" + Xhtml.hasClass("period"));
        assertThat(binTotal(period)).isEqualTo(4000);

        Document virtual = Xhtml.parse(one(Synthetic.run().build()));
        assertThat(Xhtml.all(virtual, "//figure" + Xhtml.hasClass("period"))).isEmpty();
    }

    private static long binTotal(Element figure) {
        return Xhtml.all(figure, ".//rect" + Xhtml.hasClass("bin")).stream()
                .mapToLong(r -> Long.parseLong(r.getAttribute("data-count"))).sum();
    }

    @Test
    void decimationShouldKeepASpikeOneTickWide() {
        int n = 30_000;
        int spike = 12_345;
        HtmlReport.Episode base = Synthetic.run().ticks(n).joints("only").build();
        double[] command = new double[n];
        Arrays.fill(command, 0.1);
        command[spike] = 1.0;
        HtmlReport.Episode e = Synthetic.withJoint(base, 0, Synthetic.withCommand(base.trace().joints().get(0), command));
        Document d = Xhtml.parse(one(e));
        Element svg = Xhtml.one(jointFigures(d).get(0), "svg");
        Element path = Xhtml.one(svg, ".//path" + Xhtml.hasClass("series-command"));
        List<double[]> points = Xhtml.points(path.getAttribute("d"));
        assertThat(points.size()).isLessThanOrEqualTo(2 * JointPlot.COLUMNS);
        double[] top = points.stream().min((a, b) -> Double.compare(a[1], b[1])).orElseThrow();
        double tEnd = (n - 1) * Synthetic.PERIOD;
        assertThat(top[0]).isCloseTo(jointX(spike * Synthetic.PERIOD, tEnd), org.assertj.core.data.Offset.offset(0.11));
        assertThat(top[1]).isCloseTo(axisY(svg, 1.0), org.assertj.core.data.Offset.offset(0.11));
        long atSpike = points.stream().filter(p -> Math.abs(p[1] - top[1]) < 0.05).count();
        assertThat(atSpike).isEqualTo(1);
    }

    @Test
    void shouldEscapeEveryTextItWrites() {
        HtmlReport.Episode e = Synthetic.run().name("run \"q\" & 'a' <i>").joints("<b>&", "plain").fault(900).build();
        DryRunSummary s = e.summary();
        List<DryRunSummary.Stop> stops = List.of(new DryRunSummary.Stop(900, 1.8, 1, "operator <stop> & \u0007bell"));
        DryRunSummary odd = new DryRunSummary(s.name(), "C:\\runs\\<odd>&.h5", s.joints(), s.closedLoop(), s.realtime(),
                s.controlPeriod(), s.latencyTicks(), s.ticks(), s.commands(), s.telemetryRows(),
                s.telemetryHanded(), s.telemetryLost(), s.boundViolations(),
                s.rmsError(), s.maxError(), s.limitActive(), s.staleDropped(), s.deferredQueries(), s.starvedTicks(), s.watchdogEvents(),
                stops, s.inferenceMs(), s.periodErrorMs(), s.passed(),
                List.of(new DryRunSummary.Gate("error < 0.05 & stops", 0.05, 0.01, true)));
        String html = HtmlReport.render("<script>alert('x')</script>", List.of(new HtmlReport.Episode(odd, e.trace())));
        assertThat(html).doesNotContain("<b>&", "<script", "<i>", "<stop>", "<odd>", "\u0007");
        assertThat(html).contains("&lt;b&gt;&amp;", "&lt;script&gt;", "run &quot;q&quot; &amp; &#39;a&#39; &lt;i&gt;");
        Document d = Xhtml.parse(html);
        assertThat(Xhtml.all(d, "//script")).isEmpty();
        assertThat(Xhtml.one(d, "//h1").getTextContent()).isEqualTo("<script>alert('x')</script>");
        assertThat(jointFigures(d).get(0).getTextContent()).contains("Joint 1, <b>&: RMS error");
        assertThat(Xhtml.all(d, "//g" + Xhtml.hasClass("stop")).get(0).getTextContent())
                .contains("operator <stop> & \uFFFDbell");
        assertThat(d.getDocumentElement().getTextContent()).contains("C:\\runs\\<odd>&.h5", "error < 0.05 & stops");
    }

    @Test
    void severalEpisodesShouldOpenWithAnOverviewLinkingEachSection() {
        List<HtmlReport.Episode> episodes = List.of(
                Synthetic.run().name("reach").build(),
                Synthetic.run().name("fault").fault(1000).failed().build(),
                Synthetic.run().name("place").realtime(true).build());
        Document d = Xhtml.parse(HtmlReport.render("demo", episodes));
        Element verdict = Xhtml.one(d, "//*[@id='verdict']");
        assertThat(Xhtml.one(verdict, ".//*" + Xhtml.hasClass("verdict-word")).getTextContent()).isEqualTo("FAIL");
        assertThat(verdict.getTextContent()).contains("1 of 3 episodes failed: fault");

        Element overview = Xhtml.one(d, "//section[@id='overview']");
        Element firstSvg = Xhtml.all(d, "//svg").get(0);
        assertThat(overview.compareDocumentPosition(firstSvg) & Node.DOCUMENT_POSITION_FOLLOWING).isNotZero();
        List<Element> rows = Xhtml.all(overview, ".//tbody/tr");
        assertThat(rows).hasSize(3);
        assertThat(Xhtml.all(overview, ".//thead/tr/th")).extracting(Node::getTextContent).containsExactly(
                "Episode", "Verdict", "Ticks", "Worst RMS error", "Stops", "Inference p99 (ms)");
        for (int i = 0; i < rows.size(); i++) {
            Element link = Xhtml.one(rows.get(i), ".//a");
            String id = link.getAttribute("href").substring(1);
            assertThat(id).isEqualTo("episode-" + (i + 1));
            Element section = Xhtml.one(d, "//section[@id='" + id + "']");
            assertThat(Xhtml.one(section, "h2").getTextContent()).endsWith(episodes.get(i).summary().name());
            assertThat(Xhtml.all(section, ".//figure" + Xhtml.hasClass("joint"))).hasSize(2);
        }
        assertThat(Xhtml.all(overview, ".//td" + Xhtml.hasClass("result"))).extracting(Node::getTextContent)
                .containsExactly("PASS", "FAIL", "PASS");
        assertThat(Xhtml.all(rows.get(1), "td").get(4).getTextContent()).isEqualTo("1");
        // every in-page link has its target, and no id is used twice
        List<String> ids = Xhtml.all(d, "//*[@id]").stream().map(el -> el.getAttribute("id")).toList();
        assertThat(new HashSet<>(ids)).hasSameSizeAs(ids);
        for (Element a : Xhtml.all(d, "//a[starts-with(@href, '#')]")) {
            assertThat(ids).contains(a.getAttribute("href").substring(1));
        }

        Document allPass = Xhtml.parse(HtmlReport.render("demo", List.of(episodes.get(0), episodes.get(2))));
        assertThat(Xhtml.one(allPass, "//*[@id='verdict']").getTextContent())
                .contains("PASS", "all 2 episodes passed every gate");
    }

    @Test
    void aMinuteAtFiveHundredHertzWithSixJointsShouldStayFarUnderTwoMegabytes() {
        HtmlReport.Episode e = Synthetic.run().ticks(30_000).joints("j1", "j2", "j3", "j4", "j5", "j6")
                .realtime(true).fault(25_000).build();
        int smooth = HtmlReport.render("minute", List.of(e)).getBytes(StandardCharsets.UTF_8).length;
        assertThat(smooth).isLessThan(1_000_000);

        // the worst case for size: every sample new noise, every tick a different limit
        Random random = new Random(11);
        HtmlReport.Episode noisy = e;
        for (int j = 0; j < 6; j++) {
            DryRunTrace.JointTrace jt = noisy.trace().joints().get(j);
            double[] c = new double[30_000];
            int[] flags = new int[30_000];
            for (int i = 0; i < c.length; i++) {
                c[i] = random.nextGaussian();
                flags[i] = 1 << random.nextInt(7);
            }
            noisy = Synthetic.withJoint(noisy, j, Synthetic.withFlags(Synthetic.withCommand(jt, c), flags));
        }
        int rough = HtmlReport.render("minute", List.of(noisy)).getBytes(StandardCharsets.UTF_8).length;
        assertThat(rough).isLessThan(2_000_000);
        System.out.printf("report of 60 s x 500 Hz x 6 joints: %d bytes smooth, %d bytes noisy%n", smooth, rough);
    }

    @Test
    void shouldRefuseInconsistentEpisodesNamingTheField() {
        HtmlReport.Episode e = Synthetic.run().ticks(100).build();
        DryRunTrace.JointTrace elbow = e.trace().joints().get(1);
        HtmlReport.Episode shortCommand = Synthetic.withJoint(e, 1, Synthetic.withCommand(elbow, new double[99]));
        assertThatThrownBy(() -> HtmlReport.render("x", List.of(e, shortCommand)))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessage("report: episode 2 (\"synthetic\"), joint 2 (\"elbow\"): command has 99 entries, "
                        + "trace.timeSeconds has 100");

        DryRunTrace t = e.trace();
        byte[] states = t.states().clone();
        states[42] = 9;
        HtmlReport.Episode badState = new HtmlReport.Episode(e.summary(), new DryRunTrace(t.timeSeconds(), t.joints(),
                states, t.watchdogMasks(), t.inferenceLatencyMs(), null));
        assertThatThrownBy(() -> HtmlReport.render("x", List.of(badState)))
                .hasMessage("report: episode 1 (\"synthetic\"): trace.states[42] = 9 is not a supervisor state (0 to 5)");

        double[] time = t.timeSeconds().clone();
        time[7] = time[5];
        HtmlReport.Episode backwards = new HtmlReport.Episode(e.summary(), new DryRunTrace(time, t.joints(),
                t.states(), t.watchdogMasks(), t.inferenceLatencyMs(), null));
        assertThatThrownBy(() -> HtmlReport.render("x", List.of(backwards)))
                .hasMessage("report: episode 1 (\"synthetic\"): trace.timeSeconds[7] = 0.01 is before "
                        + "trace.timeSeconds[6] = 0.012");

        DryRunTrace oneJoint = new DryRunTrace(t.timeSeconds(), t.joints().subList(0, 1), t.states(),
                t.watchdogMasks(), t.inferenceLatencyMs(), null);
        assertThatThrownBy(() -> HtmlReport.render("x", List.of(new HtmlReport.Episode(e.summary(), oneJoint))))
                .hasMessage("report: episode 1 (\"synthetic\"): trace has 1 joints, summary has 2");
        assertThatThrownBy(() -> HtmlReport.render("x", List.of()))
                .hasMessage("a report needs at least one episode");
    }

    @Test
    void timelineShouldShowEachStateAndOnlyTheConditionsThatOccurred() {
        Document d = Xhtml.parse(one(Synthetic.run().ticks(3000).fault(1500).build()));
        Element timeline = Xhtml.one(d, "//figure" + Xhtml.hasClass("timeline"));
        Set<String> states = Xhtml.all(timeline, ".//rect" + Xhtml.hasClass("state")).stream()
                .map(r -> r.getAttribute("class").substring("state state-".length())).collect(Collectors.toSet());
        // STALLED is the loop's alarm, never a state the supervisor steps through: a trace cannot hold it
        assertThat(states).containsExactlyInAnyOrder(Stream.of(SupervisorState.values())
                .filter(s -> s != SupervisorState.STALLED).map(Enum::name).toArray(String[]::new));
        assertThat(Xhtml.all(timeline, ".//text" + Xhtml.hasClass("state-label"))).extracting(Node::getTextContent)
                .contains("armed", "faulted");
        List<String> lanes = Xhtml.all(timeline, ".//g" + Xhtml.hasClass("lane-watchdog") + "/text")
                .stream().map(Node::getTextContent).toList();
        assertThat(lanes).containsExactly("plan starved", "plan low", "inference late");
        Set<String> conditions = Xhtml.all(timeline, ".//rect" + Xhtml.hasClass("condition")).stream()
                .map(r -> r.getAttribute("class")).collect(Collectors.toSet());
        assertThat(conditions).containsExactlyInAnyOrder("condition condition-" + WatchdogCondition.PLAN_STARVED.name(),
                "condition condition-" + WatchdogCondition.PLAN_LOW.name(),
                "condition condition-" + WatchdogCondition.INFERENCE_LATE.name());
        // the plan-starved condition covers ticks 0 to 19: one band from the left edge, 20 ticks wide
        Element starved = Xhtml.one(timeline, ".//rect" + Xhtml.hasClass("condition-PLAN_STARVED"));
        double perTick = (double) StateTimeline.COLUMNS / 2999;
        assertThat(Xhtml.number(starved, "x")).isEqualTo(StateTimeline.LEFT);
        assertThat(Xhtml.number(starved, "width")).isBetween(20 * perTick - 1, 20 * perTick + 1);

        Document calm = Xhtml.parse(one(Synthetic.run().build()));
        Element calmTimeline = Xhtml.one(calm, "//figure" + Xhtml.hasClass("timeline"));
        assertThat(Xhtml.all(calmTimeline, ".//rect" + Xhtml.hasClass("state-FAULTED"))).isEmpty();
        assertThat(Xhtml.all(calmTimeline, ".//rect" + Xhtml.hasClass("state-STOPPING"))).isEmpty();
        assertThat(Xhtml.all(calmTimeline, ".//g" + Xhtml.hasClass("lane-watchdog"))).hasSize(2);
    }

    @Test
    void metricsShouldListEverySummaryFieldAndEveryGate() {
        HtmlReport.Episode e = Synthetic.run().realtime(true).fault(1000).failed().build();
        Document d = Xhtml.parse(one(e));
        List<String> fields = Xhtml.all(d, "//table" + Xhtml.hasClass("run-figures") + "//td" + Xhtml.hasClass("field"))
                .stream().map(Node::getTextContent).toList();
        List<String> expected = new ArrayList<>();
        for (var c : DryRunSummary.class.getRecordComponents()) {
            expected.add(c.getName());
        }
        // the per-joint, limit and gate figures have tables of their own
        expected.removeAll(List.of("rmsError", "maxError", "limitActive", "gates", "passed"));
        assertThat(fields).containsAll(expected);
        List<Element> gates = Xhtml.all(d, "//table" + Xhtml.hasClass("gate-figures") + "/tbody/tr");
        assertThat(gates).hasSize(e.summary().gates().size());
        for (int i = 0; i < gates.size(); i++) {
            DryRunSummary.Gate g = e.summary().gates().get(i);
            List<Element> cells = Xhtml.all(gates.get(i), "td");
            assertThat(cells.get(0).getTextContent()).isEqualTo(g.name());
            assertThat(cells.get(3).getTextContent()).isEqualTo(g.passed() ? "PASS" : "FAIL");
        }
        List<Element> joints = Xhtml.all(d, "//table" + Xhtml.hasClass("joint-figures") + "/tbody/tr");
        assertThat(joints).hasSize(2);
        assertThat(Xhtml.all(joints.get(0), "td").get(3).getTextContent())
                .isEqualTo(Markup.figure(e.summary().rmsError()[0], 4));
        List<Element> limits = Xhtml.all(d, "//table" + Xhtml.hasClass("limit-figures") + "/tbody/tr/td");
        assertThat(limits).extracting(Node::getTextContent).containsExactly(
                Long.toString(e.summary().limitActive().position()), Long.toString(e.summary().limitActive().velocity()),
                "0", "0");
    }

    @Test
    void shouldNeedNothingFromOutsideTheFileAndCarryAPrintStyle() {
        String html = one(Synthetic.run().realtime(true).fault(1000).build());
        assertThat(html).doesNotContain("<script", "<img", "<link", "src=", "@import", "@font-face", "<iframe",
                "<object");
        String withoutNamespaces = html.replace("http://www.w3.org/1999/xhtml", "").replace("http://www.w3.org/2000/svg", "");
        assertThat(withoutNamespaces).doesNotContain("http:", "https:", "file:", "//fonts");
        assertThat(withoutNamespaces.replace("url(#", "")).doesNotContain("url(");
        assertThat(html).contains("@media print");
        Document d = Xhtml.parse(html);
        for (Element el : Xhtml.all(d, "//*[@fill]")) {
            String fill = el.getAttribute("fill");
            if (fill.startsWith("url(#")) {
                String id = fill.substring(5, fill.length() - 1);
                assertThat(Xhtml.all(d, "//pattern[@id='" + id + "']")).hasSize(1);
            }
        }
    }

    @Test
    void writeShouldLeaveTheReportAndNothingElse(@TempDir Path dir) throws Exception {
        HtmlReport.Episode e = Synthetic.run().build();
        Path file = dir.resolve("report.html");
        Files.writeString(file, "an older report");
        HtmlReport.write(file, "written", List.of(e));
        try (Stream<Path> files = Files.list(dir)) {
            assertThat(files.map(p -> p.getFileName().toString())).containsExactly("report.html");
        }
        assertThat(Files.readString(file, StandardCharsets.UTF_8)).isEqualTo(HtmlReport.render("written", List.of(e)));
        assertThat(Files.isReadable(file)).isTrue();
    }

    @Test
    void anEpisodeWithoutTicksStillGivesAReadableReport() {
        HtmlReport.Episode e = Synthetic.run().build();
        DryRunSummary s = e.summary();
        List<DryRunTrace.JointTrace> joints = new ArrayList<>();
        for (String name : s.joints()) {
            joints.add(new DryRunTrace.JointTrace(name, -1, 1, new double[0], new double[0], new double[0], new int[0]));
        }
        DryRunTrace empty = new DryRunTrace(new double[0], joints, new byte[0], new int[0], new double[0], null);
        Document d = Xhtml.parse(one(new HtmlReport.Episode(s, empty)));
        assertThat(Xhtml.all(d, "//svg" + Xhtml.hasClass("empty"))).hasSize(4);
        assertThat(d.getDocumentElement().getTextContent()).contains("no ticks were run", "no samples");
    }
}
