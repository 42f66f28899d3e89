#!/usr/bin/env python3
"""Reads what bench/compare measured and prints the table of ratios; draws the jitter plot.

Usage: compare_report.py RESULTS_DIR [--svg FILE]

RESULTS_DIR holds
  jmh-jitter.json, jmh-tick.json, jmh-inference.json   JMH results (-rf json)
  jitter/jitter-<rate>-<load>-<spin>.txt               weft's wake-up latency histograms
  cyclictest-<rate>-<load>.txt                         cyclictest -q -h output
  numpy-<motion>-<K>.txt                               numpy_tick.py output (timed, or the check alone)
Only the standard library is used, so it runs wherever python3 does.
"""

import glob
import json
import os
import re
import sys

TARGET_LOOP_P99 = 2.0
TARGET_WRAPPER = 1.05
TARGET_NUMPY = 50.0
TARGET_TICK_NS = 1000.0
TARGET_K_SPREAD = 0.20


def percentile(hist, p):
    """hist: list of (value, count) sorted by value; the smallest value with at least p% at or below."""
    total = sum(c for _, c in hist)
    if total == 0:
        return float("nan")
    need = p / 100.0 * total
    seen = 0
    for v, c in hist:
        seen += c
        if seen >= need:
            return v
    return hist[-1][0]


def read_weft_hist(path):
    rows = []
    with open(path) as f:
        for line in f:
            if line.startswith("#") or not line.strip():
                continue
            v, c = line.split()
            rows.append((int(v), int(c)))
    return rows


def read_cyclictest(path):
    """cyclictest -h output: '<us> <count>' lines, and '# Histogram Overflows' / '# Max Latencies'."""
    rows, overflows, maximum = [], 0, None
    with open(path) as f:
        for line in f:
            m = re.match(r"^(\d+)\s+(\d+)\s*$", line)
            if m:
                if int(m.group(2)):
                    rows.append((int(m.group(1)), int(m.group(2))))
                continue
            m = re.match(r"^# Histogram Overflows:\s*(\d+)", line)
            if m:
                overflows = int(m.group(1))
            m = re.match(r"^# Max Latencies:\s*(\d+)", line)
            if m:
                maximum = int(m.group(1))
    if overflows and maximum is not None:
        rows.append((maximum, overflows))
    return rows


def jmh(path):
    if not os.path.exists(path):
        return []
    with open(path) as f:
        return json.load(f)


def fmt_ratio(r):
    return "%.2f" % r if r == r else "n/a"


def main(argv):
    if len(argv) < 2:
        print(__doc__, file=sys.stderr)
        return 2
    d = argv[1]
    svg = argv[argv.index("--svg") + 1] if "--svg" in argv else None
    rows = []  # (measure, weft, reference, ratio, target, verdict)

    # ---- loop wake-up latency against cyclictest
    plot = []
    for path in sorted(glob.glob(os.path.join(d, "jitter", "jitter-*.txt"))):
        rate, load, spin = re.match(r".*jitter-(\d+)-(\w+)-(\d+)\.txt$", path).groups()
        ours = read_weft_hist(path)
        ref_path = os.path.join(d, "cyclictest-%s-%s.txt" % (rate, load))
        if not os.path.exists(ref_path):
            continue
        ref = read_cyclictest(ref_path)
        interval = 1000000 // int(rate)
        for what, p in (("p99", 99.0), ("max", 100.0)):
            a, b = percentile(ours, p), percentile(ref, p)
            ratio = a / b if b else float("nan")
            target = "<= %.0fx" % TARGET_LOOP_P99 if (what == "p99" and load == "inference") else ""
            verdict = ("met" if ratio <= TARGET_LOOP_P99 else "missed") if target else ""
            rows.append(("loop wake-up %s, %s Hz (-i %d), %s, spin %s us" % (what, rate, interval, load, spin),
                         "%d us" % a, "cyclictest %d us" % b, fmt_ratio(ratio), target, verdict))
        plot.append(("weft %s Hz %s spin %s us" % (rate, load, spin), ours, int(spin) > 0))
    for path in sorted(glob.glob(os.path.join(d, "cyclictest-*.txt"))):
        rate, load = re.match(r".*cyclictest-(\d+)-(\w+)\.txt$", path).groups()
        plot.append(("cyclictest %s Hz %s" % (rate, load), read_cyclictest(path), None))

    # ---- control tick against NumPy
    tick = {}
    gc = {}
    for r in jmh(os.path.join(d, "jmh-tick.json")):
        if not r["benchmark"].endswith(".tick"):
            continue
        p = r["params"]
        key = (p["motion"], int(p["chunkLength"]), int(p["joints"]))
        pm = r["primaryMetric"]
        sec = r.get("secondaryMetrics", {}).get("gc.alloc.rate.norm")
        if r["mode"] == "sample":
            tick[key] = pm["scorePercentiles"]["50.0"]
        elif sec:
            # average-time mode: the harness's own allocation (sample buffers) is not spread over the ops
            gc[key] = sec["score"]
    for path in sorted(glob.glob(os.path.join(d, "numpy-*.txt"))):
        with open(path) as f:
            text = f.read()
        m = re.search(r"numpy-tick joints=(\d+) steps=(\d+) motion=(\w+) ticks=\d+ median_ns=(\d+)", text)
        # "largest difference target X, velocity X, ..., command acceleration X; flags differ on N joint-ticks"
        check = re.search(r"largest difference (.*); flags differ on (\d+) joint-ticks", text)
        verdict = re.search(r"numpy-check joints=(\d+) steps=(\d+) motion=(\w+) ticks=(\d+) "
                            r"largest_difference=(\S+) flag_mismatches=(\d+)", text)
        if verdict:
            equal = float(verdict.group(5)) == 0.0 and int(verdict.group(6)) == 0
            rows.append(("NumPy tick against weft, D=%s K=%s %s, %s ticks (largest difference, flags differing)"
                         % (verdict.group(1), verdict.group(2), verdict.group(3).lower(), verdict.group(4)),
                         "", "%s, %s" % (verdict.group(5), verdict.group(6)), "", "bit for bit",
                         "met" if equal else "missed"))
        if not m:
            continue
        key = (m.group(3), int(m.group(2)), int(m.group(1)))
        if key not in tick:
            continue
        if check:
            largest = max(float(v) for v in re.findall(r"[a-z ]+ (\S+?)(?:,|$)", check.group(1)))
            agreement = "outputs differ by <= %g, flags on %s joint-ticks" % (largest, check.group(2))
        else:
            agreement = "agreement not reported"
        ours, theirs = tick[key], float(m.group(4))
        ratio = theirs / ours
        rows.append(("control tick median, D=%d K=%d %s (NumPy/weft; %s)"
                     % (key[2], key[1], key[0].lower(), agreement),
                     "%.0f ns" % ours, "NumPy %.0f ns" % theirs, "%.0f" % ratio, ">= %.0fx" % TARGET_NUMPY,
                     "met" if ratio >= TARGET_NUMPY else "missed"))
    for motion in sorted({k[0] for k in tick}):
        for joints in sorted({k[2] for k in tick if k[0] == motion}):
            by_k = {k[1]: v for k, v in tick.items() if k[0] == motion and k[2] == joints}
            if len(by_k) < 2:
                continue
            lo, hi = min(by_k.values()), max(by_k.values())
            spread = hi / lo - 1.0
            med = " / ".join("%.0f" % by_k[k] for k in sorted(by_k))
            under = all(v < TARGET_TICK_NS for v in by_k.values())
            rows.append(("control tick median, D=%d %s, K=%s (max/min)" % (joints, motion.lower(),
                                                                             "/".join(map(str, sorted(by_k)))),
                         med + " ns", "", "%.2f" % (hi / lo), "< 1 us, K within 20 %",
                         ("met" if under and spread <= TARGET_K_SPREAD else
                          "K met, 1 us missed" if spread <= TARGET_K_SPREAD else
                          "1 us met, K missed" if under else "missed")))
    for key in sorted(gc):
        rows.append(("tick allocation, D=%d K=%d %s (gc.alloc.rate.norm)" % (key[2], key[1], key[0].lower()),
                     "%.3f B/op" % gc[key], "", "", "0 B/op",
                     "met" if gc[key] < 0.5 else "missed"))

    # ---- inference wrapper against bare OrtSession.run
    inf = {}
    for r in jmh(os.path.join(d, "jmh-inference.json")):
        p = r["params"]
        inf[(r["benchmark"].rsplit(".", 1)[1], p["model"], int(p["threads"]))] = r["primaryMetric"]["score"]
    for (side, model, threads), score in sorted(inf.items()):
        if side != "weft" or ("bareOrt", model, threads) not in inf:
            continue
        bare = inf[("bareOrt", model, threads)]
        ratio = score / bare
        target = "<= %.2f" % TARGET_WRAPPER if model == "example" else ""
        rows.append(("inference, %s, %d intra-op thread%s (weft/bare)" % (os.path.basename(model), threads,
                                                                           "" if threads == 1 else "s"),
                     "%.2f us" % score, "OrtSession.run %.2f us" % bare, "%.3f" % ratio, target,
                     ("met" if ratio <= TARGET_WRAPPER else "missed") if target else ""))

    head = ("measure", "weft", "reference", "ratio", "target", "verdict")
    widths = [max(len(str(r[i])) for r in rows + [head]) for i in range(len(head))]
    line = "  ".join("%-*s" % (w, h) for w, h in zip(widths, head))
    print(line)
    print("-" * len(line))
    for r in rows:
        print("  ".join("%-*s" % (w, c) for w, c in zip(widths, r)))

    if svg and plot:
        write_svg(svg, plot)
        print("\njitter plot: %s" % svg)
    return 0


def write_svg(path, series):
    """Exceedance plot: fraction of wake-ups later than x, log-log axes (0 us is drawn at 1 us)."""
    import math
    w, h, left, right, top, bottom = 760, 440, 70, 250, 30, 50
    pw, ph = w - left - right, h - top - bottom
    xmax = max(max(v for v, _ in s) for _, s, _ in series if s) + 1
    x_lo, x_hi = 0.0, math.log10(max(xmax, 10))
    y_lo = -5.0

    def sx(us):
        return left + pw * (math.log10(max(us, 1)) - x_lo) / (x_hi - x_lo)

    def sy(frac):
        return top + ph * (-(math.log10(max(frac, 10 ** y_lo)))) / (-y_lo)

    colours = ["#1b6ca8", "#d1495b", "#2e933c", "#e59a1a", "#6a4c93", "#0f8b8d", "#8c564b", "#444444",
               "#000000", "#b8860b", "#c71585", "#5f9ea0"]
    out = ['<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" font-family="sans-serif" '
           'font-size="12">' % (w, h), '<rect width="100%" height="100%" fill="white"/>']
    for e in range(int(math.ceil(x_hi)) + 1):
        x = sx(10 ** e)
        if x <= left + pw + 1:
            out.append('<line x1="%.1f" y1="%d" x2="%.1f" y2="%d" stroke="#ddd"/>' % (x, top, x, top + ph))
            out.append('<text x="%.1f" y="%d" text-anchor="middle">%s</text>' % (x, top + ph + 16, 10 ** e))
    for e in range(0, int(y_lo) - 1, -1):
        y = sy(10 ** e)
        out.append('<line x1="%d" y1="%.1f" x2="%d" y2="%.1f" stroke="#ddd"/>' % (left, y, left + pw, y))
        out.append('<text x="%d" y="%.1f" text-anchor="end">1e%d</text>' % (left - 6, y + 4, e))
    out.append('<rect x="%d" y="%d" width="%d" height="%d" fill="none" stroke="#333"/>' % (left, top, pw, ph))
    out.append('<text x="%d" y="%d" text-anchor="middle">wake-up latency, microseconds late (log)</text>'
               % (left + pw / 2, h - 12))
    out.append('<text x="16" y="%d" transform="rotate(-90 16 %d)" text-anchor="middle">fraction of wake-ups '
               'later (log)</text>' % (top + ph / 2, top + ph / 2))
    for i, (label, hist, spun) in enumerate(series):
        total = sum(c for _, c in hist)
        if not total:
            continue
        colour = colours[i % len(colours)]
        dash = ' stroke-dasharray="6 3"' if label.startswith("cyclictest") else ""
        pts, above = [], total
        for v, c in hist:
            frac = above / total
            pts.append("%.1f,%.1f" % (sx(v), sy(frac)))
            above -= c
            pts.append("%.1f,%.1f" % (sx(v), sy(above / total if above else 10 ** y_lo)))
            if not above:
                break
        out.append('<polyline fill="none" stroke="%s" stroke-width="1.6"%s points="%s"/>'
                   % (colour, dash, " ".join(pts)))
        ly = top + 14 + 16 * i
        out.append('<line x1="%d" y1="%d" x2="%d" y2="%d" stroke="%s" stroke-width="2"%s/>'
                   % (left + pw + 12, ly - 4, left + pw + 36, ly - 4, colour, dash))
        out.append('<text x="%d" y="%d">%s</text>' % (left + pw + 42, ly, label))
    out.append("</svg>")
    with open(path, "w") as f:
        f.write("\n".join(out) + "\n")


if __name__ == "__main__":
    sys.exit(main(sys.argv))
