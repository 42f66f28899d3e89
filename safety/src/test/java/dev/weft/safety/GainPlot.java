package dev.weft.safety;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;

/**
 * Draws the limiter's measured gain against frequency (docs/img/limiter-gain.svg): for each wiggle
 * amplitude, the peak-to-peak of the command's deviation from the hold pose over the target's, at
 * frequencies from 1 to 100 Hz, on the demo's lift joint at 500 Hz ({@link WiggleResponse}): in black
 * with the plan's state alone (the soft start, a loop with a smoother), in blue with the plan's
 * preview as well (an armed loop, the receding-horizon law).
 * Remake it with:
 * <pre>
 * mvn -B -q -pl safety test-compile exec:java -Dexec.mainClass=dev.weft.safety.GainPlot \
 *     -Dexec.classpathScope=test -Dexec.args=docs/img/limiter-gain.svg
 * </pre>
 */
public final class GainPlot {

    static final double[] AMPLITUDES = {1e-4, 2e-3, 1e-2};
    /** Frequencies in Hz; each a whole number of periods in the 2 s window. */
    static final double[] FREQUENCIES = {1, 1.5, 2, 3, 4, 5, 7, 10, 15, 20, 30, 40, 50, 70, 100};
    static final double DT = 0.002;

    private GainPlot() {
    }

    public static void main(String[] args) throws IOException {
        Path out = Path.of(args.length > 0 ? args[0] : "docs/img/limiter-gain.svg");
        Files.createDirectories(out.toAbsolutePath().getParent());
        Files.writeString(out, svg(), StandardCharsets.UTF_8);
        System.out.println("wrote " + out);
    }

    static double[][] gains(boolean preview) {
        double[][] g = new double[AMPLITUDES.length][FREQUENCIES.length];
        for (int a = 0; a < AMPLITUDES.length; a++) {
            for (int f = 0; f < FREQUENCIES.length; f++) {
                g[a][f] = WiggleResponse.measure(WiggleResponse.liftJoint(), DT, AMPLITUDES[a], FREQUENCIES[f], preview).gain;
            }
        }
        return g;
    }

    static String svg() {
        double[][][] gs = {gains(false), gains(true)};
        int w = 700;
        int h = 400;
        int left = 70;
        int right = 230;
        int top = 30;
        int bottom = 50;
        double xMin = Math.log10(1);
        double xMax = Math.log10(100);
        double yMin = -5;
        double yMax = 1;
        StringBuilder s = new StringBuilder();
        s.append("<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"").append(w).append("\" height=\"").append(h)
                .append("\" viewBox=\"0 0 ").append(w).append(' ').append(h).append("\" font-family=\"sans-serif\" font-size=\"12\">\n");
        s.append("<title>weft limiter: gain of a wiggle on the hold pose against its frequency</title>\n");
        s.append("<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n");
        double pw = w - left - right;
        double ph = h - top - bottom;
        // grid and axes
        for (int e = (int) yMin; e <= (int) yMax; e++) {
            double y = top + ph * (yMax - e) / (yMax - yMin);
            s.append(String.format(Locale.ROOT, "<line x1=\"%d\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#ddd\"/>%n", left, y, left + pw, y));
            s.append(String.format(Locale.ROOT, "<text x=\"%d\" y=\"%.1f\" text-anchor=\"end\">1e%d</text>%n", left - 6, y + 4, e));
        }
        for (double f : new double[] {1, 2, 5, 10, 20, 50, 100}) {
            double x = left + pw * (Math.log10(f) - xMin) / (xMax - xMin);
            s.append(String.format(Locale.ROOT, "<line x1=\"%.1f\" y1=\"%d\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"#ddd\"/>%n", x, top, x, top + ph));
            s.append(String.format(Locale.ROOT, "<text x=\"%.1f\" y=\"%.1f\" text-anchor=\"middle\">%s</text>%n", x, top + ph + 16,
                    f == Math.rint(f) ? String.valueOf((int) f) : String.valueOf(f)));
        }
        s.append(String.format(Locale.ROOT, "<rect x=\"%d\" y=\"%d\" width=\"%.1f\" height=\"%.1f\" fill=\"none\" stroke=\"black\"/>%n", left, top, pw, ph));
        double one = top + ph * (yMax - 0) / (yMax - yMin);
        s.append(String.format(Locale.ROOT, "<line x1=\"%d\" y1=\"%.1f\" x2=\"%.1f\" y2=\"%.1f\" stroke=\"black\" stroke-width=\"2\"/>%n", left, one, left + pw, one));
        s.append(String.format(Locale.ROOT, "<text x=\"%.1f\" y=\"%.1f\">gain 1</text>%n", left + pw + 6, one + 4));
        s.append(String.format(Locale.ROOT, "<text x=\"%.1f\" y=\"%d\" text-anchor=\"middle\">wiggle frequency, Hz (log)</text>%n", left + pw / 2, h - 12));
        s.append(String.format(Locale.ROOT, "<text x=\"16\" y=\"%.1f\" transform=\"rotate(-90 16 %.1f)\" text-anchor=\"middle\">command p-p / target p-p (log)</text>%n",
                top + ph / 2, top + ph / 2));
        s.append("<text x=\"").append(left).append("\" y=\"18\">Lift joint of the demo arm (1.4 rad/s, 5 rad/s², 50 rad/s³), 500 Hz, holding 0.3 rad</text>\n");
        String[] dash = {"", "6 3", "2 3"};
        String[] marker = {"circle", "square", "triangle"};
        String[] colour = {"black", "#1f5fb4"};
        String[] law = {"state only", "with preview"};
        for (int p = 0; p < 2; p++) {
            double[][] g = gs[p];
            for (int a = 0; a < AMPLITUDES.length; a++) {
                StringBuilder pts = new StringBuilder();
                for (int f = 0; f < FREQUENCIES.length; f++) {
                    double x = left + pw * (Math.log10(FREQUENCIES[f]) - xMin) / (xMax - xMin);
                    double y = top + ph * (yMax - Math.log10(Math.max(g[a][f], 1e-5))) / (yMax - yMin);
                    pts.append(String.format(Locale.ROOT, "%.1f,%.1f ", x, y));
                    s.append(mark(marker[a], x, y, colour[p]));
                }
                s.append("<polyline fill=\"none\" stroke=\"").append(colour[p]).append("\" stroke-width=\"1.5\"")
                        .append(dash[a].isEmpty() ? "" : " stroke-dasharray=\"" + dash[a] + "\"")
                        .append(" points=\"").append(pts.toString().trim()).append("\"/>\n");
                double ly = top + 110 + 22 * (a + 4 * p);
                double lx = left + pw + 12;
                s.append("<line x1=\"").append(String.format(Locale.ROOT, "%.1f", lx)).append("\" y1=\"")
                        .append(String.format(Locale.ROOT, "%.1f", ly)).append("\" x2=\"")
                        .append(String.format(Locale.ROOT, "%.1f", lx + 30)).append("\" y2=\"")
                        .append(String.format(Locale.ROOT, "%.1f", ly)).append("\" stroke=\"").append(colour[p])
                        .append("\" stroke-width=\"1.5\"")
                        .append(dash[a].isEmpty() ? "" : " stroke-dasharray=\"" + dash[a] + "\"").append("/>\n");
                s.append(mark(marker[a], lx + 15, ly, colour[p]));
                s.append(String.format(Locale.ROOT, "<text x=\"%.1f\" y=\"%.1f\" fill=\"%s\">%s mrad, %s</text>%n", lx + 36,
                        ly + 4, colour[p], trim(AMPLITUDES[a] * 1e3), law[p]));
            }
        }
        s.append("</svg>\n");
        return s.toString();
    }

    private static String trim(double x) {
        return x == Math.rint(x) ? String.valueOf((long) x) : String.valueOf(x);
    }

    private static String mark(String kind, double x, double y, String colour) {
        switch (kind) {
            case "circle":
                return String.format(Locale.ROOT, "<circle cx=\"%.1f\" cy=\"%.1f\" r=\"3.5\" fill=\"white\" stroke=\"%s\"/>%n", x, y, colour);
            case "square":
                return String.format(Locale.ROOT, "<rect x=\"%.1f\" y=\"%.1f\" width=\"7\" height=\"7\" fill=\"%s\"/>%n", x - 3.5, y - 3.5, colour);
            default:
                return String.format(Locale.ROOT, "<polygon points=\"%.1f,%.1f %.1f,%.1f %.1f,%.1f\" fill=\"white\" stroke=\"%s\"/>%n",
                        x, y - 4.5, x - 4, y + 3, x + 4, y + 3, colour);
        }
    }
}
