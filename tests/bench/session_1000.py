#!/usr/bin/python3
"""Issue 15's direct-method targets, measured in one run, whole process, one thread each, and printed
as a Markdown table (notes/performance.md, "Issue 15: the direct method over a 1,000-unit session"):

- the 1,000-unit session (workloads.py's S1000: 1,000 units x 200 trials x 10 s, inhomogeneous Poisson
  at 2-18 Hz, 10 Hz on average, made by `rastrum synth`) with W1's sweep (bins 0.5-16 ms, letters 1-16),
  without rotated nulls and with `--null-rotations 19`; targets 120 CPU-s and 10x that;
- the same two commands on a reference build given by path (the old main). With --reference-units 0
  it runs on the whole session and its records are compared with this build's by same_results.py
  (equal numbers; fewer word lengths allowed where no longer one could enter the fit). A slow reference
  runs on K and on 2K units spread evenly over the session (--reference-units K; workloads.py's
  spread_units) and its time for all 1,000 is extrapolated along the line through those two runs (a
  unit's records and cost do not depend on the other units; the line keeps the fixed cost of starting
  and opening the file from being multiplied); this build then runs on the same 2K units beside it, so
  the ratio of the two builds on those is measured, not scaled, and their records are compared;
- W1 (100 units x 100 trials x 10 s, 5-40 Hz) against the project's NumPy baseline
  (baseline/direct_baseline.py, every word length as a lab would compute them), the baseline on K and
  2K spread units and extrapolated to 100 along the line through them, as workloads.py does; its
  numbers are checked against this build's (baseline/compare_direct.py); target: the tool at least 60x.

CPU time is user + system of the child process, from wait4 (os.wait4's resource usage), not wall
time; peak memory is the child's maximum resident set size from the same call. Every run uses
`--threads 1`, so peak memory is per thread (plus the program and one unit's spikes).

With --null-units K (and --reference-units 0) the runs with 19 rotated nulls, of both builds, are made
on K and 2K spread units and extrapolated to the session along their line, as the reference's above:
for a machine too busy to run them whole before a deadline; the table says which rows are extrapolated.

With --stiminfo the same run also measures issue 15's stimulus-information targets (stiminfo_session.py:
the whole 1,000-unit session of units and neighbouring pairs, and what a pair costs against a unit, on
both builds), in the same table.

With --parallel 2 two measurements run at a time, the reference's beside this build's (the CPU
seconds of each are its own; a busy machine still inflates them, notes/performance.md says how much).
Exit 1 when a comparison of numbers fails (the targets are reported, not enforced).

Usage: tests/bench/session_1000.py --rastrum build/rastrum --reference-rastrum OLD/rastrum
       [--reference-units 50] [--null-units 0] [--baseline-units 1] [--parallel 1] [--keep DIR [--reuse]]
       [--stiminfo] [--json OUT]
"""
import argparse
import concurrent.futures
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, HERE)
from workloads import PYTHON, S1000_SYNTH, SWEEP, W1_SYNTH, WORKLOADS, fill, spread_units  # noqa: E402
import stiminfo_session  # noqa: E402

S1000_UNITS, W1_UNITS = 1000, 100
CPU_TARGET_S = 120.0          # the 1,000-unit sweep without rotated nulls (issue 15)
NULL_FACTOR_TARGET = 10.0     # with 19 rotated nulls, at most this times CPU_TARGET_S (issue 15: "10x that")
BASELINE_RATIO_TARGET = 60.0  # the NumPy baseline's CPU time over the tool's on W1


def measure(command, folder, name, output, reuse):
    """Runs `command` (stdout discarded, stderr to FOLDER/NAME.stderr) and returns its CPU seconds
    (user + system), peak resident memory in MiB and wall seconds, from wait4. With `reuse`, a run whose
    output and figures are already in FOLDER is not repeated."""
    figures = os.path.join(folder, name + ".figures.json")
    if reuse and os.path.exists(output) and os.path.exists(figures):
        with open(figures) as f:
            kept = json.load(f)
        if kept["command"] == command:
            return kept
    started = time.monotonic()
    with open(os.path.join(folder, name + ".stderr"), "w") as err:
        child = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=err)
        _, status, usage = os.wait4(child.pid, 0)
    child.returncode = os.waitstatus_to_exitcode(status)  # so that Popen does not wait for it again
    if child.returncode != 0:
        raise SystemExit(f"{name} failed (exit {child.returncode}): {' '.join(command)}; see {err.name}")
    result = {"command": command, "cpu_s": usage.ru_utime + usage.ru_stime, "user_s": usage.ru_utime,
              "sys_s": usage.ru_stime, "peak_mib": usage.ru_maxrss / 1024.0, "wall_s": time.monotonic() - started}
    with open(figures, "w") as f:
        json.dump(result, f, indent=1)
    print(f"{name}: CPU {result['cpu_s']:.1f} s (user {usage.ru_utime:.1f}, system {usage.ru_stime:.1f}), "
          f"peak {result['peak_mib']:.0f} MiB, wall {result['wall_s']:.1f} s", flush=True)
    return result


def plan(opt, folder):
    """Every measurement: name -> (command, output). Longest first, for --parallel."""
    s1000, w1 = f"{folder}/s1000.h5", f"{folder}/w1.h5"
    k, kn = opt.reference_units, opt.null_units
    on = {n: [a for u in spread_units(s1000, n, opt.rastrum) for a in ("--unit", u)] for n in (k, 2 * k, kn, 2 * kn) if n}
    runs = {}

    def direct(name, build, recording, extra):
        out = os.path.join(folder, name + ".json")
        runs[name] = ([build, "direct", recording] + SWEEP + extra + ["--threads", "1", "--quiet", "--json", out], out)

    null = ["--null-rotations", "19"]
    if k == 0 and kn:  # with rotated nulls both builds on kn and 2 kn spread units
        for n in (kn, 2 * kn):
            direct(f"reference-null19-{n}", opt.reference_rastrum, s1000, null + on[n])
            direct(f"s1000-null19-{n}", opt.rastrum, s1000, null + on[n])
        direct("reference", opt.reference_rastrum, s1000, [])
        direct("s1000", opt.rastrum, s1000, [])
    elif k == 0:  # the reference on the whole session, beside this build's runs
        direct("reference-null19", opt.reference_rastrum, s1000, null)
        direct("s1000-null19", opt.rastrum, s1000, null)
        direct("reference", opt.reference_rastrum, s1000, [])
        direct("s1000", opt.rastrum, s1000, [])
    else:
        direct("s1000-null19", opt.rastrum, s1000, null)
        direct("reference-2k-null19", opt.reference_rastrum, s1000, null + on[2 * k])
        direct("s1000", opt.rastrum, s1000, [])
        direct("reference-k-null19", opt.reference_rastrum, s1000, null + on[k])
        direct("s1000-2k-null19", opt.rastrum, s1000, null + on[2 * k])
        direct("reference-2k", opt.reference_rastrum, s1000, on[2 * k])
        direct("reference-k", opt.reference_rastrum, s1000, on[k])
        direct("s1000-2k", opt.rastrum, s1000, on[2 * k])
    direct("w1", opt.rastrum, w1, [])
    if opt.stiminfo:
        stiminfo_session.add_runs(runs, folder, opt.rastrum, opt.reference_rastrum)
    kb = opt.baseline_units
    for n in (kb, 2 * kb):
        out = os.path.join(folder, f"baseline-{n}.json")
        runs[f"baseline-{n}"] = (fill(WORKLOADS["W1"]["baseline"], dir=folder, python=PYTHON, here=HERE, out=out,
                                      units=str(n)), out)
    return runs


def same_numbers(reference_json, candidate_json, allow=()):
    done = subprocess.run([PYTHON, os.path.join(HERE, "same_results.py"), reference_json, candidate_json] +
                          [a for part in allow for a in ("--allow", part)], capture_output=True, text=True)
    return done.returncode == 0, done.stdout.strip()


def baseline_agrees(tool_json, baseline_json):
    command = fill(WORKLOADS["W1"]["compare"], tool_json=tool_json, baseline_json=baseline_json, python=PYTHON, here=HERE)
    done = subprocess.run(command, capture_output=True, text=True)
    return done.returncode == 0, done.stdout.strip()


def line_through(t1, t2, n1, n, total):
    """Time for `total` units on the straight line through n1 units taking t1 and n units taking t2."""
    per_unit = (t2 - t1) / (n - n1)
    return t1 + per_unit * (total - n1), per_unit, t1 - per_unit * n1


def table(m, k, kb, checks, kn=0, extra_rows=()):
    """The Markdown table of the figures and the targets, and the derived figures."""
    plain = m["s1000"]["cpu_s"]
    if kn:  # rotated nulls on kn and 2 kn spread units: extrapolated to the session for both builds
        for build in ("reference", "s1000"):
            t, unit, fixed = line_through(m[f"{build}-null19-{kn}"]["cpu_s"], m[f"{build}-null19-{2 * kn}"]["cpu_s"],
                                          kn, 2 * kn, S1000_UNITS)
            m[f"{build}-null19"] = dict(m[f"{build}-null19-{2 * kn}"], cpu_s=t, per_unit=unit, fixed=fixed)
    null = m["s1000-null19"]["cpu_s"]
    if k == 0:
        ref_plain, ref_plain_unit, ref_plain_fixed = m["reference"]["cpu_s"], None, None
        ref_null, ref_null_unit, ref_null_fixed = m["reference-null19"]["cpu_s"], None, None
    else:
        ref_plain, ref_plain_unit, ref_plain_fixed = line_through(m["reference-k"]["cpu_s"], m["reference-2k"]["cpu_s"],
                                                                  k, 2 * k, S1000_UNITS)
        ref_null, ref_null_unit, ref_null_fixed = line_through(m["reference-k-null19"]["cpu_s"],
                                                               m["reference-2k-null19"]["cpu_s"], k, 2 * k, S1000_UNITS)
    base_all, base_unit, base_fixed = line_through(m[f"baseline-{kb}"]["cpu_s"], m[f"baseline-{2 * kb}"]["cpu_s"],
                                                   kb, 2 * kb, W1_UNITS)
    ratio = base_all / m["w1"]["cpu_s"]

    def mark(ok):
        return "met" if ok else "**not met**"

    null_target = f"<= {NULL_FACTOR_TARGET:.0f} x {CPU_TARGET_S:.0f} = {NULL_FACTOR_TARGET * CPU_TARGET_S:,.0f} CPU-s"

    def beside(ref, cand, units=None):
        r, c = m[ref], m[cand]
        units = units or ("1,000" if k == 0 else str(2 * k))
        return (f"reference / this build on the same {units} units: {r['cpu_s'] / c['cpu_s']:.2f}x CPU; peak memory "
                f"{c['peak_mib']:.1f} MiB here, {r['peak_mib']:.1f} MiB in the reference, not above it (within 1%): "
                f"{mark(c['peak_mib'] <= 1.01 * r['peak_mib'])}; same numbers: {checks[ref]}")

    rows = [
        ("session, W1 sweep, this build", "1,000", plain, "", m["s1000"]["peak_mib"],
         f"<= {CPU_TARGET_S:.0f} CPU-s: {mark(plain <= CPU_TARGET_S)}"
         + ("; " + beside("reference", "s1000") if k == 0 else "")),
    ]
    if kn:
        rows += [
            ("session, W1 sweep, --null-rotations 19, this build", f"{kn} and {2 * kn} spread",
             m[f"s1000-null19-{2 * kn}"]["cpu_s"], f"{null:.0f} (extrapolated)", m["s1000-null19"]["peak_mib"],
             f"{null_target}: {mark(null <= NULL_FACTOR_TARGET * CPU_TARGET_S)} ({null / plain:.2f}x the row above); "
             + beside(f"reference-null19-{2 * kn}", f"s1000-null19-{2 * kn}", 2 * kn)),
            ("session, W1 sweep, reference build", "1,000", ref_plain, "", m["reference"]["peak_mib"], ""),
            ("the same with --null-rotations 19, reference build", f"{kn} and {2 * kn} spread",
             m[f"reference-null19-{2 * kn}"]["cpu_s"], f"{ref_null:.0f} (extrapolated)",
             m["reference-null19"]["peak_mib"], f"reference / this build, whole session: {ref_null / null:.2f}x"),
        ]
    elif k == 0:
        rows += [
            ("session, W1 sweep, --null-rotations 19, this build", "1,000", null, "", m["s1000-null19"]["peak_mib"],
             f"{null_target}: {mark(null <= NULL_FACTOR_TARGET * CPU_TARGET_S)} ({null / plain:.2f}x the row above); "
             + beside("reference-null19", "s1000-null19")),
            ("session, W1 sweep, reference build", "1,000", ref_plain, "", m["reference"]["peak_mib"], ""),
            ("the same with --null-rotations 19, reference build", "1,000", ref_null, "",
             m["reference-null19"]["peak_mib"], ""),
        ]
    else:
        rows += [
            ("session, W1 sweep, --null-rotations 19, this build", "1,000", null, "", m["s1000-null19"]["peak_mib"],
             f"{null_target}: {mark(null <= NULL_FACTOR_TARGET * CPU_TARGET_S)} ({null / plain:.2f}x the row above)"),
            ("session, reference build", f"{k} and {2 * k} spread", m["reference-2k"]["cpu_s"],
             f"{ref_plain:.0f} (extrapolated)", m["reference-2k"]["peak_mib"],
             f"reference / this build, whole session: {ref_plain / plain:.2f}x"),
            ("session, this build", f"{2 * k} spread", m["s1000-2k"]["cpu_s"], "", m["s1000-2k"]["peak_mib"],
             beside("reference-2k", "s1000-2k")),
            ("session with 19 rotations, reference build", f"{k} and {2 * k} spread", m["reference-2k-null19"]["cpu_s"],
             f"{ref_null:.0f} (extrapolated)", m["reference-2k-null19"]["peak_mib"],
             f"reference / this build, whole session: {ref_null / null:.2f}x"),
            ("session with 19 rotations, this build", f"{2 * k} spread", m["s1000-2k-null19"]["cpu_s"], "",
             m["s1000-2k-null19"]["peak_mib"], beside("reference-2k-null19", "s1000-2k-null19")),
        ]
    rows += [
        ("W1, this build", str(W1_UNITS), m["w1"]["cpu_s"], "", m["w1"]["peak_mib"], ""),
        ("W1, NumPy baseline", f"{kb} and {2 * kb} spread", m[f"baseline-{2 * kb}"]["cpu_s"],
         f"{base_all:.0f} (extrapolated)", m[f"baseline-{2 * kb}"]["peak_mib"],
         f"baseline / this build: {ratio:.0f}x, >= {BASELINE_RATIO_TARGET:.0f}x: {mark(ratio >= BASELINE_RATIO_TARGET)}; "
         f"same numbers: {checks['baseline']}"),
    ]
    rows += list(extra_rows)
    lines = ["| run (1 thread) | units measured | CPU s measured | CPU s for all units | peak RSS MiB | target, check |",
             "|---|---|---|---|---|---|"]
    for what, units, cpu, scaled, peak, note in rows:
        lines.append(f"| {what} | {units} | {cpu:.1f} | {scaled} | {peak:.0f} | {note} |")
    lines.append("")
    reference_line = "" if k == 0 else (f"reference: {ref_plain_unit:.3f} CPU-s per unit + {ref_plain_fixed:.1f} s "
                                        f"fixed, with rotations {ref_null_unit:.3f} + {ref_null_fixed:.1f}; ")
    if kn:
        reference_line += "; ".join(f"{what} with rotations: {m[name]['per_unit']:.3f} CPU-s per unit + "
                                    f"{m[name]['fixed']:.1f} s fixed" for what, name in
                                    (("this build", "s1000-null19"), ("reference", "reference-null19"))) + "; "
    lines.append(f"Extrapolated, not measured: along the line through the runs on the fewer and the more units "
                 f"({reference_line}baseline: {base_unit:.1f} per unit + {base_fixed:.1f} fixed). Peak memory of "
                 f"an extrapolated row is of its larger run.")
    derived = {"reference_all_units_cpu_s": ref_plain, "reference_null19_all_units_cpu_s": ref_null,
               "baseline_all_units_cpu_s": base_all, "baseline_over_tool": ratio, "null19_over_plain": null / plain}
    return "\n".join(lines), derived


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--rastrum", default="build/rastrum")
    p.add_argument("--reference-rastrum", required=True, help="the build to compare with (e.g. main before a change)")
    p.add_argument("--reference-units", type=int, default=50,
                   help="K: the reference runs on K and 2K spread units of the session (0: on all of it)")
    p.add_argument("--null-units", type=int, default=0,
                   help="K: with --reference-units 0, the runs with rotated nulls (both builds) on K and 2K spread "
                        "units, extrapolated to the session along their line (for a busy machine)")
    p.add_argument("--baseline-units", type=int, default=1, help="the NumPy baseline runs on K and 2K spread units of W1")
    p.add_argument("--parallel", type=int, default=1, help="measurements run at a time")
    p.add_argument("--keep", help="work in this folder and keep it (default: a temporary folder, removed)")
    p.add_argument("--reuse", action="store_true", help="with --keep: keep recordings and runs already there")
    p.add_argument("--stiminfo", action="store_true", help="measure the stimulus-information targets in the same run")
    p.add_argument("--json", help="write every figure here")
    opt = p.parse_args()
    opt.rastrum = os.path.abspath(opt.rastrum)
    opt.reference_rastrum = os.path.abspath(opt.reference_rastrum)
    folder = os.path.abspath(opt.keep or tempfile.mkdtemp(prefix="rastrum-session-1000-"))
    os.makedirs(folder, exist_ok=True)
    try:
        makes = [fill(make, dir=folder) for make in (S1000_SYNTH, W1_SYNTH)]
        if opt.stiminfo:
            makes.append(stiminfo_session.session_synth(f"{folder}/conditions1000.h5"))
        for made in makes:
            if not (opt.reuse and os.path.exists(made[made.index("--out") + 1])):
                subprocess.run([opt.rastrum] + made + ["--overwrite"], check=True, stdout=subprocess.DEVNULL)
        runs = plan(opt, folder)
        k = opt.reference_units
        with concurrent.futures.ThreadPoolExecutor(max_workers=max(1, opt.parallel)) as pool:
            futures = {name: pool.submit(measure, command, folder, name, out, opt.reuse)
                       for name, (command, out) in runs.items()}
            m = {name: f.result() for name, f in futures.items()}
        out = {name: o for name, (_, o) in runs.items()}
        checks, details = {}, []
        kn = opt.null_units
        null_pair = (f"reference-null19-{2 * kn}", f"s1000-null19-{2 * kn}") if kn else ("reference-null19", "s1000-null19")
        pairs = ((("reference", "s1000"), null_pair) if k == 0 else
                 (("reference-2k", "s1000-2k"), ("reference-2k-null19", "s1000-2k-null19")))
        for ref, cand in pairs:
            ok, text = same_numbers(out[ref], out[cand])
            checks[ref] = "yes" if ok else "**NO**"
            details.append(f"{ref} against {cand}: {text}")
        kb = opt.baseline_units
        ok, text = baseline_agrees(out["w1"], out[f"baseline-{2 * kb}"])
        checks["baseline"] = "yes" if ok else "**NO**"
        details.append(f"baseline on {2 * kb} units against this build: {text}")
        extra, extra_derived = [], {}
        if opt.stiminfo:
            ok, text = same_numbers(out["si-reference-pairs"], out["si-pairs"], stiminfo_session.ALLOWED_DIFFERENCES)
            checks["stiminfo"] = "yes" if ok else "**NO**"
            details.append(f"stiminfo pairs, reference against this build: {text}")
            extra, extra_derived = stiminfo_session.rows(m, checks["stiminfo"])
        text, derived = table(m, k, kb, checks, kn, extra)
        derived.update(extra_derived)
    finally:
        if not opt.keep:
            shutil.rmtree(folder, ignore_errors=True)
    print()
    print(text)
    print()
    print("\n".join(details))
    if opt.json:
        with open(opt.json, "w") as f:
            json.dump({"runs": m, "checks": checks, "derived": derived, "reference_units": k}, f, indent=1)
    return 0 if all(v == "yes" for v in checks.values()) else 1


if __name__ == "__main__":
    sys.exit(main())
