#!/usr/bin/env python3
"""Measures how well rastrum's uncertainty is calibrated, on synthetic recordings with exact answers.

For each design it writes recordings with `rastrum synth` over many seeds, analyses each with
`rastrum direct` or `rastrum stiminfo`, and reports per design and per quantity: coverage of the 95%
interval, its half-width over the RMSE of the estimate, bias (absolute and as % of the truth), RMSE,
the share of intervals that exclude 0, the rate at which each caution fires (overall, and split by
whether the record's error is within the tolerance, beyond it, or beyond twice it), the share of
direct records whose fit range uses words longer than one letter, and the nulls' false-positive rate
at 0.05 on the designs without information. Usage:

    coverage.py PATH_TO_rastrum [--seeds N] [--designs a,b] [--jobs J] [--quick] [--out table.md]
                [--direct-args "--surrogates 20"] [--stiminfo-args "--surrogates 50"] [--records-out FILE]

Seeds are 1..N for every design (synth --seed s and the analysis's --seed s), so a run is repeatable.
Exact answers come from the answers file `rastrum synth` writes beside each recording (computed by
enumeration, notes/methods.md), except the pair's joint information, enumerated here (below).
The script fails (exit 1) only when the instrument is broken: a run that fails, a truth or a key
missing, or a design without records. Today's statistics are reported, never judged: they are the
subject of the measurement.
"""
import argparse
import concurrent.futures
import json
import math
import os
import re
import shlex
import subprocess
import sys
import tempfile

import numpy as np
from scipy.stats import poisson

# Tolerance of a record's error when splitting caution rates: 10% of the truth, or an absolute floor
# for small truths (common practice: a relative target is meaningless near zero).
TOLERANCE = 0.10
FLOOR = {"b/s": 0.5, "bits": 0.02}


class Broken(Exception):
    """The instrument itself failed: a run, a truth or a key is missing."""


def pair_information(m1, m2):
    """Exact I(S; R1, R2) in bits for conditionally independent Poisson counts with means m1[s], m2[s],
    conditions equally likely: the joint probability mass functions summed until the tails are below
    1e-12 (analytic; the same enumeration as tests/test_population.cpp, written again with SciPy)."""
    n = int(max(max(m1), max(m2)) + 20 * math.sqrt(max(max(m1), max(m2))) + 40)
    k = np.arange(n)
    joint = [np.outer(poisson.pmf(k, a), poisson.pmf(k, b)) for a, b in zip(m1, m2)]
    pooled = sum(joint) / len(joint)
    info = 0.0
    for j in joint:
        mask = j > 0
        info += float(np.sum(j[mask] * np.log2(j[mask] / pooled[mask]))) / len(joint)
    return info


def count_means(synth_args):
    return [[float(x) for x in synth_args[i + 1].split(",")] for i, a in enumerate(synth_args) if a == "--means"]


# ---- designs -------------------------------------------------------------------------------------
# Each design: synth kind and options (full and --quick), the analysis, and how to read the truths.
DIRECT = ["--json", "-", "--quiet", "--threads", "1"]
STIMINFO = ["--json", "-", "--quiet", "--threads", "1"]


def direct_design(name, synth, analysis, truth_key, quick_synth, no_information=False, letters="1-10"):
    return {"name": name, "tool": "direct", "synth": synth, "quick_synth": quick_synth,
            "analysis": ["--bin-ms", "2", "--letters", letters] + analysis, "truth_key": truth_key,
            "no_information": no_information}


def stiminfo_design(name, synth, analysis, quick_synth, no_information=False, population=False):
    return {"name": name, "tool": "stiminfo", "synth": ["conditions"] + synth, "quick_synth": ["conditions"] + quick_synth,
            "analysis": analysis, "truth_key": "count_info_bits", "no_information": no_information,
            "population": population}


SHORT = ["--duration-s", "1"]
DESIGNS = [
    # Independent 2 ms bins with gamma-distributed frozen spike probabilities (CV 1): every length carries
    # the same information per letter, and the answers' info_rate_bits_per_s is the infinite-length rate.
    direct_design("independent", ["frozen-bins", "--rate-hz", "20", "--modulation", "1", "--trials", "150",
                                  "--duration-s", "4"], ["--null-rotations", "19"], "info_rate_bits_per_s",
                  ["frozen-bins", "--rate-hz", "20", "--modulation", "1", "--trials", "60"] + SHORT),
    # A smooth frozen rate (Poisson firing): the exact answer is the single-letter information at 2 ms
    # (words of a smooth rate are redundant, and no exact infinite-length value is known), so the rate
    # is asked of single letters (--letters 1-1).
    direct_design("smooth rate", ["poisson", "--rate-hz", "20", "--modulation", "0.8", "--trials", "150",
                                  "--duration-s", "4"], [], "letter_info_rate_bits_per_s_at_2ms",
                  ["poisson", "--rate-hz", "20", "--modulation", "0.8", "--trials", "60"] + SHORT, letters="1-1"),
    # Homogeneous firing: no information at all; the rotation null's false-positive rate.
    direct_design("no information", ["frozen-bins", "--rate-hz", "15", "--modulation", "0", "--trials", "150",
                                     "--duration-s", "4"], ["--null-rotations", "19"], "info_rate_bits_per_s",
                  ["frozen-bins", "--rate-hz", "15", "--modulation", "0", "--trials", "60"] + SHORT, no_information=True),
    # Independent 1 ms bins at 150 Hz read as 2 ms letters holding 0, 1 or 2 spikes; pooled over positions
    # the coarse letters are independent, so their single-letter value is the infinite-length rate.
    direct_design("two-spike bins", ["frozen-bins", "--bin-ms", "1", "--rate-hz", "150", "--modulation", "0.8",
                                     "--trials", "150", "--duration-s", "4"], [], "letter_info_rate_bits_per_s_at_2ms",
                  ["frozen-bins", "--bin-ms", "1", "--rate-hz", "150", "--modulation", "0.8", "--trials", "60"] + SHORT),
    # Information only in spike patterns (synth patterns): I(L = 1) = 0 exactly.
    direct_design("patterns, 200 trials", ["patterns", "--trials", "200", "--duration-s", "4"], [],
                  "info_rate_bits_per_s", ["patterns", "--trials", "60"] + SHORT, letters="1-12"),
    direct_design("patterns, 400 trials", ["patterns", "--trials", "400", "--duration-s", "4"], [],
                  "info_rate_bits_per_s", ["patterns", "--trials", "80"] + SHORT, letters="1-12"),
    # The same unit with little data (60 trials of 1 s): errors near and beyond the tolerance, where the
    # uncertainty caution must fire.
    direct_design("patterns, 60 trials of 1 s", ["patterns", "--trials", "60", "--duration-s", "1"], [],
                  "info_rate_bits_per_s", ["patterns", "--trials", "40"] + SHORT, letters="1-12"),
    # The same unit with the fit range given (--fit-letters 2-6): what the estimator sees when the
    # word lengths are not chosen by the sampling rule.
    direct_design("patterns, 200 trials, fit 2-6", ["patterns", "--trials", "200", "--duration-s", "4"],
                  ["--fit-letters", "2-6"], "info_rate_bits_per_s", ["patterns", "--trials", "60"] + SHORT, letters="1-12"),
    # Poisson spike counts in four conditions (answers: count_info_bits).
    stiminfo_design("counts", ["--means", "2,4,6,9", "--trials-per-condition", "30", "--duration-s", "0.5"],
                    ["--window-ms", "0:500", "--code", "count"],
                    ["--means", "2,4,6,9", "--trials-per-condition", "15", "--duration-s", "0.5"]),
    # The same recordings as words of two 250 ms letters (spike counts). Spikes are placed uniformly in
    # the trial whatever the condition, so the count is a sufficient statistic of the word and
    # I(S; word) = I(S; count) (Cover & Thomas 2006, Elements of Information Theory, section 2.9).
    stiminfo_design("words", ["--means", "2,4,6,9", "--trials-per-condition", "30", "--duration-s", "0.5"],
                    ["--window-ms", "0:500", "--code", "word", "--bin-ms", "250"],
                    ["--means", "2,4,6,9", "--trials-per-condition", "15", "--duration-s", "0.5"]),
    # Sparse responses: under one spike per trial on average.
    stiminfo_design("sparse", ["--means", "0.1,0.2,0.4,0.8", "--trials-per-condition", "20", "--duration-s", "0.5"],
                    ["--window-ms", "0:500", "--code", "count"],
                    ["--means", "0.1,0.2,0.4,0.8", "--trials-per-condition", "10", "--duration-s", "0.5"]),
    # Equal means: no information; the label shuffle's false-positive rate.
    stiminfo_design("counts, no information", ["--means", "4,4,4,4", "--trials-per-condition", "30", "--duration-s", "0.5"],
                    ["--window-ms", "0:500", "--code", "count"],
                    ["--means", "4,4,4,4", "--trials-per-condition", "15", "--duration-s", "0.5"], no_information=True),
    # Two conditionally independent units (the pair of tests/test_population.cpp).
    stiminfo_design("pairs", ["--means", "0.5,1,2,3", "--means", "2,1,2,1", "--trials-per-condition", "30",
                              "--duration-s", "0.5"], ["--window-ms", "0:500", "--code", "count", "--population", "u1,u2"],
                    ["--means", "0.5,1,2,3", "--means", "2,1,2,1", "--trials-per-condition", "15", "--duration-s", "0.5"],
                    population=True),
]


def slug(name):
    return re.sub(r"[^a-z0-9]+", "-", name.lower()).strip("-")


def caution_kind(text):
    """A caution's kind: its text up to the first colon or parenthesis, numbers and quoted names replaced."""
    text = re.split(r"[:(]", text, maxsplit=1)[0]
    text = re.sub(r"'[^']*'", "'…'", text)
    return re.sub(r"[-+]?\d+(\.\d+)?(e[-+]?\d+)?(?![\d.%])", "#", text).strip()


def need(mapping, key, where):
    if not isinstance(mapping, dict) or key not in mapping:
        raise Broken(f"{where}: key '{key}' missing")
    return mapping[key]


def run(rastrum, args):
    done = subprocess.run([rastrum] + args, capture_output=True, text=True)
    if done.returncode != 0:
        raise Broken(f"rastrum {' '.join(args)} exited {done.returncode}: {done.stderr.strip()[:400]}")
    return done.stdout


def one_seed(rastrum, design, seed, quick, folder, direct_args=(), stiminfo_args=()):
    """Synthesises one recording, analyses it, returns its measurements: a list of observations
    (quantity, estimate, interval or None, truth, unit) and the record's cautions, fit and p-value."""
    path = os.path.join(folder, f"{slug(design['name'])}-{seed}.h5")
    synth = design["quick_synth"] if quick else design["synth"]
    run(rastrum, ["synth"] + synth + ["--seed", str(seed), "--overwrite", "--out", path])
    answers_path = path[:-3] + ".answers.json"
    with open(answers_path) as f:
        answers = json.load(f)
    units = need(answers, "units", answers_path)
    extra = ["--null-shuffles", "40", "--bootstrap", "40"] if quick and design["tool"] == "stiminfo" else []
    extra = extra + list(direct_args if design["tool"] == "direct" else stiminfo_args)
    out = json.loads(run(rastrum, [design["tool"], path] + design["analysis"] + extra + ["--seed", str(seed)] +
                         (DIRECT if design["tool"] == "direct" else STIMINFO)))
    os.remove(path)
    os.remove(answers_path)
    records = need(out, "records", design["tool"])
    if not records:
        raise Broken(f"{design['name']}: no records")
    results = []
    for r in records:
        unit = need(r, "unit", "record")
        if design["tool"] == "direct":
            truth = need(units[0], design["truth_key"], answers_path)
            results.append(direct_observations(r, truth))
        elif r.get("population"):
            results.append(population_observations(r, synth))
            results[-1]["raw"] = calibration_raw(r, results[-1]["observations"][0][3], design, seed)
        else:
            index = int(unit[1:]) - 1
            truth = need(units[index], design["truth_key"], answers_path)
            results.append(stiminfo_observations(r, truth, f"{unit} " if design.get("population") else ""))
            results[-1]["raw"] = calibration_raw(r, truth, design, seed)
    return results


def calibration_raw(r, truth, design, seed):
    """What --records-out keeps of a stiminfo record: enough to judge other caution thresholds later."""
    c = r.get("calibration")
    return {"design": design["name"], "seed": seed, "unit": r["unit"], "truth": truth,
            "info_bits": r["info_bits"], "envelope": r["info_ci95_bits"], "warnings": r["warnings"],
            "calibration": None if c is None else {k: c[k] for k in (
                "recommended_estimator", "value_bits", "error_bits", "ci95_bits", "tolerance_bits", "uncertain",
                "model_bits", "shrinkage", "trials_per_condition_needed", "by_estimator", "by_trials",
                "not_calibrated", "unlike_model", "unseen_mass")}}


def calibrated_observation(r, truth, name):
    """The calibrated value and its interval (stiminfo --surrogates N), or None when calibration is off."""
    value = need(r, "info_calibrated_bits", "stiminfo record")
    if value is None:
        return None
    return (name, value, tuple(need(r, "info_calibrated_ci95_bits", "stiminfo record")), truth, "bits")


def direct_observations(r, truth):
    lo, hi = need(r, "info_rate_ci95_bits_per_s", "direct record")
    obs = [("info rate", need(r, "info_rate_bits_per_s", "direct record"), (lo, hi), truth, "b/s")]
    null = need(r, "null", "direct record")
    if null is not None:
        obs.append(("null-subtracted rate", need(r, "info_rate_null_subtracted_bits_per_s", "direct record"), None,
                    truth, "b/s"))
    fit = need(r, "fit_letters", "direct record")
    return {"observations": obs, "cautions": need(r, "warnings", "direct record"), "longer_words": fit[1] > 1,
            "p_value": None if null is None else need(null, "p_value", "direct null")}


def stiminfo_observations(r, truth, prefix=""):
    values = need(r, "info_bits", "stiminfo record")
    interval = need(r, "info_ci95_bits", "stiminfo record")
    interval_estimator = need(r, "info_ci95_estimator", "stiminfo record")
    obs = [(f"{prefix}info, {name}", value, tuple(interval) if name == interval_estimator else None, truth, "bits")
           for name, value in values.items()]
    obs.sort(key=lambda o: o[2] is None)  # the interval's estimator first: it decides the record's error
    calibrated = calibrated_observation(r, truth, f"{prefix}info, calibrated")
    if calibrated:  # the calibrated value is the record's headline, and so decides its error
        obs.insert(0, calibrated)
    subtracted = need(r, "info_null_subtracted_bits", "stiminfo record")
    if subtracted is not None:
        obs.append((f"{prefix}info, null-subtracted plug-in", subtracted, None, truth, "bits"))
    null = need(r, "null", "stiminfo record")
    return {"observations": obs, "cautions": need(r, "warnings", "stiminfo record"), "longer_words": None,
            "p_value": None if null is None else need(null, "p_value", "stiminfo null")}


def population_observations(r, synth_args):
    m1, m2 = count_means(synth_args)
    joint = pair_information(m1, m2)
    total = sum(pair_information(m, [0] * len(m)) for m in (m1, m2))  # a single unit's count information
    truths = {"joint": joint, "sum_single": total, "synergy": joint - total, "independent": joint,
              "shuffle_corrected": joint}
    p = need(r, "population", "population record")
    intervals = need(p, "ci95_bits", "population record")
    obs = [(f"pair {name}", need(p, f"{name}_bits", "population record"),
            tuple(need(intervals, name, "population intervals")), truth, "bits") for name, truth in truths.items()]
    calibrated = calibrated_observation(r, joint, "pair joint, calibrated")
    if calibrated:
        obs.insert(0, calibrated)
    return {"observations": obs, "cautions": need(r, "warnings", "population record"), "longer_words": None,
            "p_value": None}


# ---- summary -------------------------------------------------------------------------------------
def tolerance(truth, unit):
    return max(TOLERANCE * abs(truth), FLOOR[unit])


def summarise(design, results):
    rows, cautions = [], {}
    by_quantity = {}
    for res in results:
        for name, est, interval, truth, unit in res["observations"]:
            by_quantity.setdefault(name, []).append((est, interval, truth, unit))
    for name, obs in by_quantity.items():
        est = np.array([o[0] for o in obs], dtype=float)
        truth = np.array([o[2] for o in obs], dtype=float)
        unit = obs[0][3]
        err = est - truth
        rmse = float(np.sqrt(np.mean(err ** 2)))
        bias = float(np.mean(err))
        mean_truth = float(np.mean(truth))
        row = {"quantity": name, "unit": unit, "n": len(obs), "truth": mean_truth, "bias": bias,
               "bias_pct": 100 * bias / mean_truth if abs(mean_truth) > 1e-6 else None, "rmse": rmse,
               "coverage": None, "half_width_over_rmse": None, "excludes_zero": None}
        intervals = [o[1] for o in obs if o[1] is not None]
        if len(intervals) == len(obs):
            lo = np.array([i[0] for i in intervals]); hi = np.array([i[1] for i in intervals])
            row["coverage"] = float(np.mean((lo <= truth) & (truth <= hi)))
            row["half_width_over_rmse"] = float(np.mean((hi - lo) / 2)) / rmse if rmse > 0 else None
            row["excludes_zero"] = float(np.mean((lo > 0) | (hi < 0)))
        rows.append(row)
    # Cautions split by the record's own error on its first quantity (the reported value).
    for res in results:
        _, est, _, truth, unit = res["observations"][0]
        size = abs(est - truth) / tolerance(truth, unit)
        group = "within" if size <= 1 else ("beyond 2x" if size > 2 else "beyond")
        for kind in {caution_kind(c) for c in res["cautions"]}:
            cautions.setdefault(kind, {"within": 0, "beyond": 0, "beyond 2x": 0})[group] += 1
    groups = {"within": 0, "beyond": 0, "beyond 2x": 0}
    for res in results:
        _, est, _, truth, unit = res["observations"][0]
        size = abs(est - truth) / tolerance(truth, unit)
        groups["within" if size <= 1 else ("beyond 2x" if size > 2 else "beyond")] += 1
    longer = [res["longer_words"] for res in results if res["longer_words"] is not None]
    p_values = [res["p_value"] for res in results if res["p_value"] is not None]
    return {"design": design["name"], "records": len(results), "rows": rows, "cautions": cautions, "groups": groups,
            "longer_words": float(np.mean(longer)) if longer else None,
            "false_positive": float(np.mean(np.array(p_values) <= 0.05)) if p_values and design["no_information"] else None,
            "detected": float(np.mean(np.array(p_values) <= 0.05)) if p_values and not design["no_information"] else None,
            "null_runs": len(p_values)}


def fmt(x, spec="{:.3g}", none="–"):
    return none if x is None or (isinstance(x, float) and not math.isfinite(x)) else spec.format(x)


def table(summaries, command):
    lines = [f"Command: `{command}`", "",
             "| design | quantity | truth (mean) | records | coverage of 95% interval | half-width / RMSE | "
             "bias | bias % of truth | RMSE | interval excludes 0 | fit uses words > 1 letter |",
             "|---|---|---|---|---|---|---|---|---|---|---|"]
    for s in summaries:
        for i, r in enumerate(s["rows"]):
            unit = r["unit"]
            truth = 0.0 if abs(r["truth"]) < 1e-9 else r["truth"]  # enumeration's rounding, where the truth is 0
            lines.append(f"| {s['design']} | {r['quantity']} ({unit}) | {truth:.4g} | {r['n']} | "
                         f"{fmt(r['coverage'], '{:.0%}')} | {fmt(r['half_width_over_rmse'], '{:.2f}')} | "
                         f"{r['bias']:+.3g} | {fmt(r['bias_pct'], '{:+.1f}%')} | {r['rmse']:.3g} | "
                         f"{fmt(r['excludes_zero'], '{:.0%}')} | "
                         f"{fmt(s['longer_words'] if i == 0 else None, '{:.0%}', '')} |")
    lines += ["", "Cautions, by the record's error in its reported value (the first quantity of its design) against the "
              f"tolerance max({TOLERANCE:.0%} of the truth, {FLOOR['b/s']} b/s or {FLOOR['bits']} bits):", "",
              "| design | caution | all records | error within tolerance | beyond it | beyond twice it |",
              "|---|---|---|---|---|---|"]
    for s in summaries:
        g = s["groups"]
        lines.append(f"| {s['design']} | (records in each group) | {s['records']} | {g['within']} | {g['beyond']} | "
                     f"{g['beyond 2x']} |")
        for kind, c in sorted(s["cautions"].items()):
            def share(n, of):
                return f"{n / of:.0%}" if of else "–"
            fired = c["within"] + c["beyond"] + c["beyond 2x"]
            lines.append(f"| {s['design']} | {kind} | {share(fired, s['records'])} | {share(c['within'], g['within'])} | "
                         f"{share(c['beyond'], g['beyond'])} | {share(c['beyond 2x'], g['beyond 2x'])} |")
    lines += ["", "| design | null | runs | p <= 0.05 |", "|---|---|---|---|"]
    for s in summaries:
        if s["null_runs"]:
            what = "false positives" if s["false_positive"] is not None else "detections"
            rate = s["false_positive"] if s["false_positive"] is not None else s["detected"]
            null = "rotations" if any(r["quantity"] == "info rate" for r in s["rows"]) else "label shuffles"
            lines.append(f"| {s['design']} | {null} ({what}) | {s['null_runs']} | {rate:.1%} |")
    return "\n".join(lines) + "\n"


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("rastrum")
    ap.add_argument("--seeds", type=int, default=100)
    ap.add_argument("--designs", default="", help="comma-separated names (or their slugs); all when absent")
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--quick", action="store_true", help="a few seeds on small designs: checks the instrument")
    ap.add_argument("--out", help="also write the table (Markdown) here")
    ap.add_argument("--direct-args", default="",
                    help="options added to every direct analysis, e.g. '--surrogates 20' (the calibration)")
    ap.add_argument("--stiminfo-args", default="",
                    help="options added to every stiminfo analysis, e.g. '--surrogates 50' (the calibration)")
    ap.add_argument("--records-out", help="also write each stiminfo record's values and calibration here (JSON lines)")
    a = ap.parse_args()
    seeds = min(a.seeds, 3) if a.quick else a.seeds
    wanted = {slug(x) for x in a.designs.split(",") if x}
    designs = [d for d in DESIGNS if not wanted or slug(d["name"]) in wanted]
    unknown = wanted - {slug(d["name"]) for d in DESIGNS}
    if unknown:
        sys.exit(f"coverage.py: unknown design(s) {', '.join(sorted(unknown))}; "
                 f"choose from {', '.join(slug(d['name']) for d in DESIGNS)}")
    shown, skip = [], False
    for x in sys.argv[2:]:  # the command as run, without where the table was written
        if not skip and not x.startswith("--out"):
            shown.append(x)
        skip = x == "--out"
    command = "tests/validation/coverage.py build/rastrum " + " ".join(shown)
    summaries = []
    with tempfile.TemporaryDirectory() as folder, concurrent.futures.ThreadPoolExecutor(a.jobs) as pool:
        for d in designs:
            futures = [pool.submit(one_seed, a.rastrum, d, s, a.quick, folder, shlex.split(a.direct_args),
                                   shlex.split(a.stiminfo_args)) for s in range(1, seeds + 1)]
            try:
                results = [r for f in futures for r in f.result()]
            except Broken as e:
                print(f"coverage.py: broken instrument: {e}", file=sys.stderr)
                return 1
            summaries.append(summarise(d, results))
            if a.records_out:
                with open(a.records_out, "a") as f:
                    for r in results:
                        if r.get("raw"):
                            f.write(json.dumps(r["raw"]) + "\n")
            print(f"{d['name']}: {len(results)} records", file=sys.stderr, flush=True)
    text = table(summaries, command.strip())
    print(text)
    if a.out:
        with open(a.out, "w") as f:
            f.write(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
