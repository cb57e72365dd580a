#!/usr/bin/python3
"""How the direct method's cost grows with the data (issue 6, "Scaling"): W1's analysis (bins 0.5-16
ms, letters 1-16, default subsets) on ten of W1's units, at 1x, 2x and 4x the trials (100, 200, 400)
and the duration (10, 20, 40 s), one thread, and at 1x on 2 threads. Each run is one `rastrum
direct` process under GNU time (Debian package `time`): wall and CPU seconds, peak resident memory.
The ratio to 1x is printed beside the data factor; linear cost has ratio = factor.

With --svg FILE it also draws the CPU-time ratios against the data factor, with the line of linear
cost, as a plain SVG file (notes/figures/scaling-direct.svg holds the figure of notes/performance.md).

Usage: tests/bench/scaling.py [--rastrum build/rastrum] [--repeat N] [--json OUT] [--svg OUT]
"""
import argparse
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile

# Ten of W1's rates, evenly spaced over its 5-40 Hz.
RATES = ",".join("%.6g" % (5 + 35 * i / 9) for i in range(10))
ANALYSIS = ["--bin-ms", "0.5,1,2,4,8,16", "--letters", "1-16", "--quiet"]
CASES = [  # name, trials, duration (s), threads
    ("1x", 100, 10, 1), ("2x trials", 200, 10, 1), ("4x trials", 400, 10, 1),
    ("2x duration", 100, 20, 1), ("4x duration", 100, 40, 1), ("1x, 2 threads", 100, 10, 2)]


def gnu_time(command, report):
    subprocess.run(["/usr/bin/time", "-v", "-o", report] + command, check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    text = open(report).read()

    def field(label):
        return re.search(re.escape(label) + r":\s*(\S+)", text).group(1)

    clock = [float(p) for p in field("Elapsed (wall clock) time (h:mm:ss or m:ss)").split(":")]
    return {"wall_s": sum(v * 60 ** i for i, v in enumerate(reversed(clock))),
            "cpu_s": float(field("User time (seconds)")) + float(field("System time (seconds)")),
            "peak_mib": int(field("Maximum resident set size (kbytes)")) / 1024.0}


def svg(rows, path):
    """CPU-time ratio to 1x against the data factor, trials and duration, with y = x."""
    w, h, left, bottom, top, right = 420, 300, 60, 50, 20, 20
    x = lambda f: round(left + (f - 1) / 3 * (w - left - right), 1)
    y = lambda r: round(h - bottom - (r - 1) / 3.5 * (h - bottom - top), 1)
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" font-family="sans-serif" font-size="12">',
             f'<line x1="{x(1)}" y1="{y(1)}" x2="{x(4)}" y2="{y(1)}" stroke="black"/>',
             f'<line x1="{x(1)}" y1="{y(1)}" x2="{x(1)}" y2="{y(4.5)}" stroke="black"/>',
             f'<line x1="{x(1)}" y1="{y(1)}" x2="{x(4)}" y2="{y(4)}" stroke="#999" stroke-dasharray="4 3"/>',
             f'<text x="{x(4) - 4}" y="{y(4) - 6}" text-anchor="end" fill="#666">linear</text>']
    for f in (1, 2, 3, 4):
        parts.append(f'<text x="{x(f)}" y="{y(1) + 16}" text-anchor="middle">{f}</text>')
    for r in (1, 2, 3, 4):
        parts.append(f'<text x="{x(1) - 6}" y="{y(r) + 4}" text-anchor="end">{r}</text>')
    parts.append(f'<text x="{(x(1) + x(4)) / 2}" y="{h - 12}" text-anchor="middle">data, times W1\'s (10 units)</text>')
    parts.append(f'<text transform="translate(16 {(y(1) + y(4.5)) / 2}) rotate(-90)" text-anchor="middle">CPU time, times 1x</text>')
    base = rows["1x"]["cpu_s"]
    for axis, colour, dy in (("trials", "#1b6ca8", 0), ("duration", "#c0392b", 16)):
        points = [(1, 1.0)] + [(f, rows[f"{f}x {axis}"]["cpu_s"] / base) for f in (2, 4)]
        path_d = " ".join(f"{'M' if i == 0 else 'L'}{x(f):.1f},{y(r):.1f}" for i, (f, r) in enumerate(points))
        parts.append(f'<path d="{path_d}" fill="none" stroke="{colour}" stroke-width="2"/>')
        parts += [f'<circle cx="{x(f):.1f}" cy="{y(r):.1f}" r="3.5" fill="{colour}"/>' for f, r in points]
        parts.append(f'<text x="{x(1) + 10}" y="{y(4.5) + 14 + dy}" fill="{colour}">{axis}</text>')
    parts.append("</svg>\n")
    tmp = path + ".part"
    with open(tmp, "w") as out:
        out.write("\n".join(parts))
    os.replace(tmp, path)


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--rastrum", default="build/rastrum")
    p.add_argument("--repeat", type=int, default=1, help="runs of each case; the fastest CPU time is kept")
    p.add_argument("--json")
    p.add_argument("--svg")
    opt = p.parse_args()
    rastrum = os.path.abspath(opt.rastrum)
    folder = tempfile.mkdtemp(prefix="rastrum-scaling-")
    rows = {}
    try:
        for name, trials, duration, threads in CASES:
            recording = os.path.join(folder, f"t{trials}-d{duration}.h5")
            if not os.path.exists(recording):
                subprocess.run([rastrum, "synth", "poisson", "--out", recording, "--seed", "11", "--trials", str(trials),
                                "--duration-s", str(duration), "--rate-hz", RATES, "--modulation", "1",
                                "--correlation-ms", "15", "--resolution-ms", "0.5"],
                               check=True, stderr=subprocess.DEVNULL)
            runs = [gnu_time([rastrum, "direct", recording] + ANALYSIS + ["--threads", str(threads), "--json",
                              os.path.join(folder, "out.json")], os.path.join(folder, "time")) for _ in range(opt.repeat)]
            rows[name] = min(runs, key=lambda r: r["cpu_s"])
            rows[name]["threads"] = threads
            r = rows[name]
            print(f"{name:14s} wall {r['wall_s']:7.1f} s  CPU {r['cpu_s']:7.1f} s  peak {r['peak_mib']:6.0f} MiB  "
                  f"CPU / 1x {r['cpu_s'] / rows['1x']['cpu_s']:.2f}  wall / 1x {r['wall_s'] / rows['1x']['wall_s']:.2f}",
                  flush=True)
    finally:
        shutil.rmtree(folder, ignore_errors=True)
    if opt.json:
        with open(opt.json, "w") as f:
            json.dump(rows, f, indent=1)
    if opt.svg:
        svg(rows, opt.svg)
    return 0


if __name__ == "__main__":
    sys.exit(main())
