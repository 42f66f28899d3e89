package dev.weft.runtime.report;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.within;

import java.io.StringReader;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import javax.xml.parsers.DocumentBuilderFactory;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;
import org.xml.sax.InputSource;

/** The report's building blocks, each against a plain reference or a published rule. */
class ReportPartsTest {

    private static final double TOLERANCE = 1e-9;

    @Test
    void niceScaleShouldFollowHeckbertsWorkedExample() {
        // Heckbert, "Nice numbers for graph labels", Graphics Gems (1990): data from 105 to 543 with
        // five ticks is labelled 100 to 600 in steps of 100 (from memory; recomputed here by hand:
        // nicenum(438, loose) = 500, nicenum(500 / 4, rounded) = 100).
        NiceScale s = NiceScale.of(105, 543, 5);
        assertThat(s.min()).isEqualTo(100);
        assertThat(s.max()).isEqualTo(600);
        assertThat(s.step()).isEqualTo(100);
        assertThat(s.decimals()).isZero();
        assertThat(s.tickValues()).containsExactly(100, 200, 300, 400, 500, 600);
    }

    @ParameterizedTest
    @CsvSource({"1.4,true,1", "1.5,true,2", "2.99,true,2", "3,true,5", "6.99,true,5", "7,true,10",
            "1,false,1", "1.01,false,2", "2,false,2", "5,false,5", "5.1,false,10", "0.0042,true,0.005",
            "380,false,500"})
    void niceNumbersShouldBeOneTwoOrFiveTimesAPowerOfTen(double x, boolean round, double nice) {
        assertThat(NiceScale.niceNumber(x, round)).isCloseTo(nice, within(nice * TOLERANCE));
    }

    @Test
    void niceScaleShouldCoverItsRangeWithTicksPrintedExactly() {
        Random random = new Random(3);
        for (int k = 0; k < 2000; k++) {
            double lo = (random.nextDouble() - 0.5) * Math.pow(10, random.nextInt(8) - 4);
            double hi = lo + random.nextDouble() * Math.pow(10, random.nextInt(8) - 4);
            NiceScale s = NiceScale.of(lo, hi, 7);
            assertThat(s.min()).isLessThanOrEqualTo(lo);
            assertThat(s.max()).isGreaterThanOrEqualTo(hi);
            double[] ticks = s.tickValues();
            assertThat(ticks.length).isBetween(2, 16);
            for (double t : ticks) {
                // the printed label, read back, is the tick to within a small part of a step
                assertThat(Double.parseDouble(s.label(t))).isCloseTo(t, within(s.step() * 1e-6));
            }
        }
        NiceScale flat = NiceScale.of(0.5, 0.5, 5);
        assertThat(flat.min()).isLessThan(0.5);
        assertThat(flat.max()).isGreaterThan(0.5);
    }

    @Test
    void histogramShouldMatchAPlainCountOverItsBinEdges() {
        Random random = new Random(5);
        for (int k = 0; k < 200; k++) {
            int n = 1 + random.nextInt(3000);
            double[] samples = new double[n];
            long nonFinite = 0;
            for (int i = 0; i < n; i++) {
                samples[i] = random.nextInt(50) == 0 ? Double.NaN : 3 + Math.exp(random.nextGaussian());
                if (random.nextInt(7) == 0) {
                    samples[i] = Math.round(samples[i] * 10) / 10.0;
                }
                if (Double.isNaN(samples[i])) {
                    nonFinite++;
                }
            }
            Histogram h = Histogram.of(samples, k % 2 == 0, 40);
            assertThat(h.nonFinite()).isEqualTo(nonFinite);
            assertThat(h.total()).isEqualTo(n - nonFinite);
            assertThat(h.counts().length).isBetween(15, 110);
            double w = h.width();
            assertThat(NiceScale.niceNumber(w, true)).isCloseTo(w, within(w * TOLERANCE));
            if (k % 2 == 0) {
                assertThat(h.start()).isZero();
            }
            for (int b = 0; b < h.counts().length; b++) {
                double left = h.start() + b * w;
                double right = h.start() + (b + 1) * w;
                boolean last = b == h.counts().length - 1;
                long expected = 0;
                for (double s : samples) {
                    if (Double.isFinite(s) && s >= left - w * 1e-9 && (s < right - w * 1e-9 || last && s <= right)) {
                        expected++;
                    }
                }
                // samples that sit on an edge within rounding may fall either side; none are lost
                assertThat(h.counts()[b]).isCloseTo(expected, within(Math.max(2L, expected / 50)));
            }
        }
        assertThat(Histogram.of(new double[] {2.5, 2.5, 2.5}, true, 40).total()).isEqualTo(3);
        assertThat(Histogram.of(new double[0], true, 40).counts()).isEmpty();
    }

    @Test
    void decimationShouldKeepEachColumnsExtremesAndBreakAtGaps() {
        Random random = new Random(9);
        for (int k = 0; k < 50; k++) {
            int n = 2000 + random.nextInt(40_000);
            int columns = 100 + random.nextInt(900);
            double[] time = new double[n];
            double[] value = new double[n];
            double v = 0;
            for (int i = 0; i < n; i++) {
                time[i] = i * 0.002;
                v += random.nextGaussian() * 0.01;
                value[i] = random.nextInt(400) == 0 ? Double.NaN : random.nextInt(1000) == 0 ? v + 5 : v;
            }
            int[] kept = MinMaxDecimator.keep(time, value, time[0], time[n - 1], columns);
            assertThat(kept.length).isLessThanOrEqualTo(4 * columns + 2);
            // a plain reference: each column's smallest and largest finite value by a full scan
            double span = time[n - 1] - time[0];
            double[] lo = new double[columns];
            double[] hi = new double[columns];
            java.util.Arrays.fill(lo, Double.POSITIVE_INFINITY);
            java.util.Arrays.fill(hi, Double.NEGATIVE_INFINITY);
            for (int i = 0; i < n; i++) {
                if (Double.isFinite(value[i])) {
                    int c = MinMaxDecimator.column(time[i], time[0], span, columns);
                    lo[c] = Math.min(lo[c], value[i]);
                    hi[c] = Math.max(hi[c], value[i]);
                }
            }
            double[] keptLo = new double[columns];
            double[] keptHi = new double[columns];
            java.util.Arrays.fill(keptLo, Double.POSITIVE_INFINITY);
            java.util.Arrays.fill(keptHi, Double.NEGATIVE_INFINITY);
            int previous = -1;
            boolean lastWasBreak = false;
            for (int index : kept) {
                if (index == MinMaxDecimator.BREAK) {
                    assertThat(lastWasBreak).isFalse();
                    lastWasBreak = true;
                    continue;
                }
                assertThat(index).isGreaterThan(previous);
                assertThat(value[index]).isFinite();
                if (previous >= 0) {
                    boolean gap = false;
                    for (int i = previous + 1; i < index; i++) {
                        gap |= !Double.isFinite(value[i]);
                    }
                    assertThat(lastWasBreak).as("break between %d and %d", previous, index).isEqualTo(gap);
                }
                int c = MinMaxDecimator.column(time[index], time[0], span, columns);
                keptLo[c] = Math.min(keptLo[c], value[index]);
                keptHi[c] = Math.max(keptHi[c], value[index]);
                previous = index;
                lastWasBreak = false;
            }
            assertThat(keptLo).containsExactly(lo);
            assertThat(keptHi).containsExactly(hi);
        }
    }

    @Test
    void aShortSeriesShouldBeKeptWholeAndALonePointDrawnAsADot() {
        double[] time = {0, 1, 2, 3, 4};
        double[] value = {1, Double.NaN, 2, 3, Double.POSITIVE_INFINITY};
        int[] kept = MinMaxDecimator.keep(time, value, 0, 4, 100);
        assertThat(kept).containsExactly(0, MinMaxDecimator.BREAK, 2, 3);
        MinMaxDecimator.Frame f = new MinMaxDecimator.Frame(0, 40, 0, 30, 0, 4, 0, 3);
        assertThat(MinMaxDecimator.pathData(kept, time, value, f)).isEqualTo("M0 20h0M20 10 30 0");
    }

    @Test
    void escapedTextShouldReadBackUnchangedThroughAnXmlParser() throws Exception {
        // XML 1.0 (W3C), section 2.4 and 4.6: '<' and '&' must be escaped in text, the quote in a quoted
        // attribute; the JDK's parser is the reference that reads the escaped form back
        String[] samples = {"<b>&", "a \"quoted\" 'name'", "x > y && y < z", "caf\u00e9 \uD83E\uDD16", "tab\tand\nline"};
        for (String s : samples) {
            String xml = "<r a=\"" + Markup.escape(s) + "\">" + Markup.escape(s) + "</r>";
            var root = DocumentBuilderFactory.newInstance().newDocumentBuilder()
                    .parse(new InputSource(new StringReader(xml))).getDocumentElement();
            assertThat(root.getTextContent()).isEqualTo(s);
            // attribute values are normalised by XML (tab and newline become spaces)
            assertThat(root.getAttribute("a")).isEqualTo(s.replace('\t', ' ').replace('\n', ' '));
        }
        assertThat(Markup.escape("<b>&")).isEqualTo("&lt;b&gt;&amp;");
        assertThat(Markup.escape("bell\u0007 lone\uD800 end\uFFFF")).isEqualTo("bell\uFFFD lone\uFFFD end\uFFFD");
        assertThat(Markup.escape(null)).isEmpty();
    }

    @Test
    void figuresShouldPrintPlainlyInAnyLocale() {
        List<String> printed = new ArrayList<>();
        java.util.Locale saved = java.util.Locale.getDefault();
        try {
            java.util.Locale.setDefault(java.util.Locale.GERMANY);
            printed.add(Markup.figure(0.00123449, 4));
            printed.add(Markup.figure(1234.5678, 4));
            printed.add(Markup.figure(-2.5, 4));
            printed.add(Markup.figure(1.0e-7, 3));
            printed.add(Markup.figure(Double.NaN, 3));
            printed.add(Markup.fixed(-0.0001, 2));
            printed.add(Markup.coord(12.34));
            printed.add(Markup.coord(-0.04));
            printed.add(Markup.coord(7.0));
        } finally {
            java.util.Locale.setDefault(saved);
        }
        assertThat(printed).containsExactly("0.001234", "1235", "-2.5", "1.00e-07", "NaN", "0.00", "12.3", "0", "7");
    }
}
