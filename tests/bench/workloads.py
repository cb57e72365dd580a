#!/usr/bin/python3
"""Whole-process timing of the reference workloads (notes/performance.md, "Reference workloads"):
makes each workload's recording with `rastrum synth`, times the tool on 1 and 2 threads and the
NumPy baseline on a subset of the units, side by side, with GNU time (`/usr/bin/time -v`, Debian
package `time`): wall time, CPU time, peak resident memory; the ratio baseline / tool (1 thread);
and, where a workload defines it, words counted per second. Also checks that the baseline's numbers
on its subset equal the tool's (tests/bench/baseline/compare_direct.py).

The baseline is far too slow for a whole workload, so it runs on K and 2K of the units
(--baseline-units K, default 1; for W1 spread evenly over the recording's 5-40 Hz, so that a subset's
mean rate is the recording's: the middle unit, then the first and the last) and its time for all units is extrapolated along the straight line
through those two points (time = fixed + per-unit x units). The output states this, with the ratio
t(2K) / t(K), which is 2 when the time is proportional to units and less when a fixed cost (Python
start, imports, reading the file) matters. Ratios are given for wall time and for CPU time (user +
system); on a machine shared with other work, CPU time is the steadier of the two.

With --keep DIR --reuse a step whose output and GNU time report are already in DIR is not run again:
an interrupted run resumes, and a long baseline run made beside the tool's (the same command with
`/usr/bin/time -v -o DIR/<workload>-baseline-<K>.time`) is taken as it is.

W2 and W3 (stimulus information and populations) are timed by tests/bench/baseline/time_stiminfo.sh,
whose baseline subsets (pairs and triplets beside single units) do not fit the table below; the
choice "W2W3" runs it from here, so that a run without --workload times W1, W2 and W3 in one go
(about 3 hours on this machine kind, nearly all of it the baseline).

Usage: tests/bench/workloads.py [--rastrum build/rastrum] [--workload W1|W2W3|small|S1000|...] [--baseline-units K]
       [--skip-baseline] [--reference-rastrum OTHER_BUILD [--reference-units K]] [--keep DIR [--reuse]] [--json OUT]

With --reference-rastrum, each workload also runs on another build (1 thread), timed beside this
one, and its records are compared with this build's by same_results.py (equal numbers, fewer word
lengths allowed where no longer one could enter the fit). W1-null19, S1000 and S1000-null19 are the
workloads of issue 15 (W1 with 19 rotated-trial nulls; the 1,000-unit session without and with them).

Adding a workload (W2, W3, ...) is one entry in WORKLOADS below:
    "W2": workload(
        describe="...",
        make=[["synth", "conditions", "--out", "{dir}/w2.h5", ...]],   # rastrum commands making its files
        tool=["stiminfo", "{dir}/w2.h5", ..., "--quiet", "--json", "{out}"],  # the timed rastrum command
        units=200,                                                    # units in the workload
        baseline=["{python}", "{here}/baseline/stiminfo_baseline.py", "{dir}/w2.h5", ...,
                  "--first-units", "{units}", "--json", "{out}"],  # must analyse only {units} units
        compare=["{python}", "{here}/baseline/compare_stiminfo.py", "{tool_json}", "{baseline_json}",
                 "--subset"],                                       # optional: exit 0 when numbers agree
        words=None)                                                  # optional: f(tool_json) -> words counted
Placeholders: {dir} the work folder, {out} the command's JSON output, {units} the baseline's unit
count, {python} Debian's python3, {here} this folder, {tool_json}/{baseline_json} for compare.
`--threads N` is appended to the tool command.
"""
import argparse
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
PYTHON = "/usr/bin/python3"  # Debian's, with numpy and h5py
MADE = set()  # recordings made in this run


def workload(describe, make, tool, units, baseline=None, compare=None, words=None):
    return {"describe": describe, "make": make, "tool": tool, "units": units, "baseline": baseline,
            "compare": compare, "words": words}


# ---- W1: the direct method over a whole lab's sweep ----

W1_RATES = ",".join("%.6g" % (5 + 35 * i / 99) for i in range(100))  # 5 to 40 Hz, evenly spaced
W1_BINS = "0.5,1,2,4,8,16"
W1_LETTERS = (1, 16)


def direct_words_counted(result_json):
    """Word occurrences counted by the direct method, from the result's own parameters: for each unit,
    bin width and word length L, the T x (n - L + 1) words (T trials, n bins, one word per start
    position and trial) are each counted into the 4 nested subsets holding its trial (all trials,
    its half, quarter and eighth) of each of the S random splits, once for the total and once for the
    noise entropy: 2 x 4 x S x T x (n - L + 1)."""
    splits = result_json["parameters"]["splits"]
    total = 0
    for r in result_json["records"]:
        bins = int(r["trial_duration_s"] / (r["bin_ms"] / 1000.0) + 1e-9)
        for le in r["by_letters"]:
            total += 2 * 4 * splits * r["trials"] * (bins - le["letters"] + 1)
    return total


# The 1,000-unit session of issue 15: a high-density probe's worth of units, 200 trials x 10 s of
# inhomogeneous Poisson firing with mean rates evenly spaced from 2 to 18 Hz (10 Hz on average),
# analysed with W1's sweep. No NumPy baseline (it would take about 20 hours).
S1000_RATES = ",".join("%.6g" % (2 + 16 * i / 999) for i in range(1000))
S1000_SYNTH = ["synth", "poisson", "--out", "{dir}/s1000.h5", "--seed", "63", "--trials", "200", "--duration-s", "10",
               "--rate-hz", S1000_RATES, "--modulation", "1", "--correlation-ms", "15", "--resolution-ms", "0.5"]
W1_SYNTH = ["synth", "poisson", "--out", "{dir}/w1.h5", "--seed", "61", "--trials", "100", "--duration-s", "10",
            "--rate-hz", W1_RATES, "--modulation", "1", "--correlation-ms", "15", "--resolution-ms", "0.5"]
SWEEP = ["--bin-ms", W1_BINS, "--letters", "%d-%d" % W1_LETTERS]

# The small case (tests/bench/baseline/check_direct_baseline.py compares the baseline with the tool on it):
# 3 units x 42 trials x 2 s at 5, 20 and 40 Hz; 42 rather than 40 trials so that the blocks of the
# nested splits (5 and 6 trials) and quarters (10 and 11) differ in size and the fits weigh them.
SMALL_SYNTH = ["synth", "poisson", "--seed", "5", "--trials", "42", "--duration-s", "2", "--rate-hz", "5,20,40",
               "--modulation", "1", "--correlation-ms", "15", "--resolution-ms", "0.5"]
SMALL_DIRECT = ["--bin-ms", "2,4", "--letters", "1-6"]

WORKLOADS = {
    "small": workload(
        describe="the small case: 3 units x 42 trials x 2 s at 5, 20, 40 Hz; bins 2, 4 ms, letters 1-6",
        make=[SMALL_SYNTH + ["--out", "{dir}/small.h5"]],
        tool=["direct", "{dir}/small.h5"] + SMALL_DIRECT + ["--quiet", "--json", "{out}"],
        units=3,
        baseline=["{python}", "{here}/baseline/direct_baseline.py", "{dir}/small.h5"] + SMALL_DIRECT +
                 ["--first-units", "{units}", "--json", "{out}"],
        compare=["{python}", "{here}/baseline/compare_direct.py", "{tool_json}", "{baseline_json}", "--subset"],
        words=direct_words_counted),
    "W1": workload(
        describe="direct sweep: 100 units x 100 trials x 10 s, inhomogeneous Poisson at 5-40 Hz; bins "
                 + W1_BINS + " ms, letters %d-%d, default extrapolation subsets (8 splits)" % W1_LETTERS,
        make=[W1_SYNTH],
        tool=["direct", "{dir}/w1.h5"] + SWEEP + ["--quiet", "--json", "{out}"],
        units=100,
        baseline=["{python}", "{here}/baseline/direct_baseline.py", "{dir}/w1.h5", "--bin-ms", W1_BINS,
                  "--letters", "%d-%d" % W1_LETTERS, "--spread-units", "{units}", "--json", "{out}"],
        compare=["{python}", "{here}/baseline/compare_direct.py", "{tool_json}", "{baseline_json}", "--subset"],
        words=direct_words_counted),
    "W1-null19": workload(
        describe="W1 with 19 rotated-trial null estimates per unit and bin width",
        make=[W1_SYNTH],
        tool=["direct", "{dir}/w1.h5"] + SWEEP + ["--null-rotations", "19", "--quiet", "--json", "{out}"],
        units=100),
    "S1000": workload(
        describe="1,000 units x 200 trials x 10 s, inhomogeneous Poisson at 2-18 Hz (mean 10 Hz); W1's sweep",
        make=[S1000_SYNTH],
        tool=["direct", "{dir}/s1000.h5"] + SWEEP + ["--quiet", "--json", "{out}"],
        units=1000),
    "S1000-null19": workload(
        describe="the 1,000-unit session with 19 rotated-trial null estimates per unit and bin width",
        make=[S1000_SYNTH],
        tool=["direct", "{dir}/s1000.h5"] + SWEEP + ["--null-rotations", "19", "--quiet", "--json", "{out}"],
        units=1000),
}


def fill(args, **values):
    return [a.format(**values) for a in args]


def timed(command, folder, name, output, reuse):
    """Runs `command` under GNU time; returns wall and CPU seconds and peak memory in MiB. With
    `reuse`, a command whose GNU time report and `output` are already in `folder` is not run again."""
    report = os.path.join(folder, name + ".time")
    if not (reuse and os.path.exists(output) and os.path.exists(report) and os.path.getsize(report) > 0):
        with open(os.path.join(folder, name + ".stderr"), "w") as err:
            done = subprocess.run(["/usr/bin/time", "-v", "-o", report] + command, stdout=subprocess.DEVNULL, stderr=err)
        if done.returncode != 0:
            raise SystemExit(f"{name} failed (exit {done.returncode}): {' '.join(command)}; see {err.name}")
    text = open(report).read()
    if "Command being timed" in text and " ".join(command) not in text:
        raise SystemExit(f"{report} times another command than {' '.join(command)}")

    def field(label):
        return re.search(re.escape(label) + r":\s*(\S+)", text).group(1)

    clock = [float(p) for p in field("Elapsed (wall clock) time (h:mm:ss or m:ss)").split(":")]
    wall = sum(v * 60 ** i for i, v in enumerate(reversed(clock)))
    cpu = float(field("User time (seconds)")) + float(field("System time (seconds)"))
    return {"wall_s": wall, "cpu_s": cpu, "peak_mib": int(field("Maximum resident set size (kbytes)")) / 1024.0,
            "command": command}


def run_workload(name, w, opt, folder):
    print(f"== {name}: {w['describe']}", flush=True)
    values = {"dir": folder, "python": PYTHON, "here": HERE}
    for command in w["make"]:
        command = fill(command, **values)
        made = command[command.index("--out") + 1]
        if made not in MADE and not (opt.reuse and os.path.exists(made)):
            subprocess.run([opt.rastrum] + command, check=True, stderr=subprocess.DEVNULL)
        MADE.add(made)  # workloads that share a recording make it once
    result = {"workload": name, "describe": w["describe"], "units": w["units"], "tool": {}, "baseline": {}}
    tool_json = {}
    for threads in (1, 2):
        out = os.path.join(folder, f"{name}-tool-{threads}.json")
        command = [opt.rastrum] + fill(w["tool"], out=out, **values) + ["--threads", str(threads)]
        result["tool"][threads] = timed(command, folder, f"{name}-tool-{threads}", out, opt.reuse)
        tool_json[threads] = out
        t = result["tool"][threads]
        print(f"tool, {threads} thread{'s' if threads > 1 else ''}: wall {t['wall_s']:.1f} s, CPU "
              f"{t['cpu_s']:.1f} s, peak {t['peak_mib']:.0f} MiB", flush=True)
    if opt.reference_rastrum:
        result["reference"] = run_reference(name, w, opt, folder, values, result["tool"][1], tool_json[1])
    with open(tool_json[1]) as f:
        tool_result = json.load(f)
    with open(tool_json[2]) as f:
        if json.load(f)["records"] != tool_result["records"]:
            raise SystemExit(f"{name}: the tool's records differ between 1 and 2 threads")
    if w["words"]:
        words = w["words"](tool_result)
        result["words_counted"] = words
        for threads in (1, 2):
            result["tool"][threads]["words_per_wall_s"] = words / result["tool"][threads]["wall_s"]
            result["tool"][threads]["words_per_cpu_s"] = words / result["tool"][threads]["cpu_s"]
        print(f"words counted: {words:.4g}; per second of wall time {words / result['tool'][1]['wall_s']:.3g} "
              f"(1 thread), {words / result['tool'][2]['wall_s']:.3g} (2 threads); per CPU second "
              f"{words / result['tool'][1]['cpu_s']:.3g} (1 thread)")
    if opt.skip_baseline or not w["baseline"]:
        return result
    k = opt.baseline_units
    for units in (k, 2 * k):
        out = os.path.join(folder, f"{name}-baseline-{units}.json")
        command = fill(w["baseline"], out=out, units=str(units), **values)
        b = timed(command, folder, f"{name}-baseline-{units}", out, opt.reuse)
        result["baseline"][units] = b
        print(f"baseline on {units} unit{'s' if units > 1 else ''}: wall {b['wall_s']:.1f} s, CPU "
              f"{b['cpu_s']:.1f} s, peak {b['peak_mib']:.0f} MiB", flush=True)
        if w["compare"]:
            check = subprocess.run(fill(w["compare"], tool_json=tool_json[1], baseline_json=out, **values),
                                   capture_output=True, text=True)
            print("  " + check.stdout.strip().replace("\n", "\n  "))
            result["baseline"][units]["numbers_agree"] = check.returncode == 0
    result["baseline_scaled"] = {}
    for clock in ("wall_s", "cpu_s"):
        t1, t2 = result["baseline"][k][clock], result["baseline"][2 * k][clock]
        per_unit = (t2 - t1) / k
        scaled = t1 + per_unit * (w["units"] - k)
        ratio = scaled / result["tool"][1][clock]
        result["baseline_scaled"][clock] = {"all_units": scaled, "per_unit": per_unit, "fixed": t1 - per_unit * k,
                                            "t2k_over_tk": t2 / t1, "ratio_over_tool_1_thread": ratio}
        what = "wall time" if clock == "wall_s" else "CPU time"
        print(f"baseline {what} scaled to all {w['units']} units (not measured: the line through the {k}- and "
              f"{2 * k}-unit runs, t({2 * k})/t({k}) = {t2 / t1:.2f}; {per_unit:.1f} s per unit + "
              f"{t1 - per_unit * k:.1f} s fixed): {scaled:.0f} s = {scaled / 3600:.2f} h; "
              f"ratio baseline / tool on 1 thread: {ratio:.1f}x", flush=True)
    return result


def spread_units(recording, k, rastrum):
    """k unit ids spread evenly over the recording's units (as the baseline's --spread-units)."""
    survey = subprocess.run([rastrum, "survey", recording, "--json", "-"], check=True, capture_output=True, text=True)
    names = [u["unit"] for u in json.loads(survey.stdout)["units"]]
    n = len(names)
    return [names[(n - 1) // 2]] if k == 1 else [names[round(i * (n - 1) / (k - 1))] for i in range(min(k, n))]


def run_reference(name, w, opt, folder, values, tool, tool_json):
    """Another build (e.g. the main branch before a change) on the same command, 1 thread, timed beside
    this build's, and its records against this build's: equal, but for word lengths this build did not
    need. With --reference-units K (for workloads whose reference run takes hours) both builds run on K
    units spread over the recording, and the ratio is between those two runs."""
    command = fill(w["tool"], out="{out}", **values) + ["--threads", "1"]
    label = f"{name}-reference-1"
    if opt.reference_units and w["units"] > opt.reference_units:
        recording = command[1]
        units = spread_units(recording, opt.reference_units, opt.rastrum)
        command += [a for u in units for a in ("--unit", u)]
        label = f"{name}-reference-{len(units)}-units"
        out = os.path.join(folder, f"{name}-tool-{len(units)}-units.json")
        tool = timed([opt.rastrum] + [a.replace("{out}", out) for a in command], folder,
                     f"{name}-tool-{len(units)}-units", out, opt.reuse)
        tool_json = out
        print(f"tool on {len(units)} units, 1 thread: CPU {tool['cpu_s']:.1f} s, peak {tool['peak_mib']:.0f} MiB", flush=True)
    out = os.path.join(folder, label + ".json")
    r = timed([opt.reference_rastrum] + [a.replace("{out}", out) for a in command], folder, label, out, opt.reuse)
    r["tool_on_the_same_units"] = tool
    r["ratio_cpu_reference_over_tool_1_thread"] = r["cpu_s"] / tool["cpu_s"]
    check = subprocess.run([PYTHON, os.path.join(HERE, "same_results.py"), out, tool_json], capture_output=True, text=True)
    r["same_numbers"] = check.returncode == 0
    print(f"reference build ({label}), 1 thread: wall {r['wall_s']:.1f} s, CPU {r['cpu_s']:.1f} s, peak "
          f"{r['peak_mib']:.0f} MiB; CPU reference / tool on 1 thread: {r['ratio_cpu_reference_over_tool_1_thread']:.1f}x\n  "
          + check.stdout.strip().replace("\n", "\n  "), flush=True)
    return r


def run_stiminfo_workloads(opt):
    """W2 and W3, tool and baseline side by side, by time_stiminfo.sh; its table is passed on."""
    print("== W2, W3: stimulus information of 200 units and of 50 pairs and 20 triplets (time_stiminfo.sh)", flush=True)
    if opt.skip_baseline:
        print("skipped: time_stiminfo.sh times the tool beside the baseline, never alone", flush=True)
        return {"workload": "W2W3", "table": None, "baseline": {}}
    done = subprocess.run(["bash", os.path.join(HERE, "baseline", "time_stiminfo.sh"), opt.rastrum],
                          capture_output=True, text=True)
    print(done.stdout, end="", flush=True)
    if done.returncode != 0:
        raise SystemExit(f"time_stiminfo.sh failed (exit {done.returncode}):\n{done.stderr}")
    return {"workload": "W2W3", "table": done.stdout, "baseline": {}}


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--rastrum", default="build/rastrum")
    p.add_argument("--workload", action="append", choices=sorted(WORKLOADS) + ["W2W3"],
                   help="workloads to run (repeatable; default W1 and W2W3)")
    p.add_argument("--baseline-units", type=int, default=1, help="K: the baseline runs on the first K and 2K units")
    p.add_argument("--skip-baseline", action="store_true")
    p.add_argument("--reference-rastrum",
                   help="another build of rastrum (e.g. main before a change): timed on 1 thread beside this one, and "
                        "its records compared with this build's (same_results.py)")
    p.add_argument("--reference-units", type=int, default=0,
                   help="K: the reference build, and this one beside it, run on K units spread over workloads with more "
                        "(for workloads whose reference run would take hours)")
    p.add_argument("--reuse", action="store_true",
                   help="with --keep: do not run again a step whose output and GNU time report are in the folder "
                        "(resumes an interrupted run, or takes the baseline's runs made beside it)")
    p.add_argument("--keep", help="work in this folder and keep it (default: a temporary folder, removed)")
    p.add_argument("--json", help="write every figure here")
    opt = p.parse_args()
    if not os.path.exists("/usr/bin/time"):
        raise SystemExit("needs GNU time: apt-get install time")
    opt.rastrum = os.path.abspath(opt.rastrum)
    if opt.reference_rastrum:
        opt.reference_rastrum = os.path.abspath(opt.reference_rastrum)
    folder = opt.keep or tempfile.mkdtemp(prefix="rastrum-workloads-")
    os.makedirs(folder, exist_ok=True)
    try:
        results = [run_stiminfo_workloads(opt) if n == "W2W3" else run_workload(n, WORKLOADS[n], opt, folder)
                   for n in (opt.workload or ["W1", "W2W3"])]
    finally:
        if not opt.keep:
            shutil.rmtree(folder, ignore_errors=True)
    if opt.json:
        with open(opt.json, "w") as f:
            json.dump(results, f, indent=1)
    bad = [r["workload"] for r in results for b in r["baseline"].values() if not b.get("numbers_agree", True)]
    bad += [r["workload"] + " (reference build)" for r in results if not r.get("reference", {}).get("same_numbers", True)]
    if bad:
        print("the baseline's numbers differ from the tool's in " + ", ".join(bad))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
