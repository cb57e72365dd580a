#!/usr/bin/python3
"""The NumPy baseline (stiminfo_baseline.py) gives the same numbers as `rastrum stiminfo`.

    check_stiminfo_baseline.py RASTRUM WORK_DIR
    check_stiminfo_baseline.py --compare TOOL.json BASELINE.json   (records of the baseline's units only)

Makes the small case of notes/performance.md ("Reference workloads", "Equality case") with
`rastrum synth conditions`, runs `rastrum stiminfo` and the baseline on it (count code with three
single units and their triplet; binary word code with one unit) and compares every estimate, bits
per spike, the trial-fraction curve, every null statistic and every interval, record by record.
The baseline is an independent program (h5py, NumPy, SciPy; its own coding, counting, estimators
and its own implementation of the published random-number algorithms), so agreement checks the
tool against a second implementation of notes/methods.md, not against itself.

Tolerances, |tool - baseline| <= atol + rtol |tool| (bits):
- plug-in, Miller-Madow, Panzeri-Treves, the null statistics, the stimulus entropy, bits per spike:
  the same arithmetic in another order (NumPy sums pairwise): rtol 1e-9, atol 1e-12.
- jackknife: the baseline leaves out each trial and recomputes, the tool uses the closed form of
  notes/methods.md section 3; the difference of N I and (N - 1) <I_(-j)> amplifies rounding by about
  N: atol 1e-10.
- quadratic extrapolation (and everything built on it: the independent-units value, the population
  values and intervals): the same weighted least squares solved by NumPy's polyfit (scaled SVD)
  instead of Eigen's column-pivoting QR on a design whose columns 1, 1/N, 1/N^2 differ by four
  orders of magnitude (its condition number is about 1e5, so about 1e-11 may differ): atol 1e-9.
- NSB (and intervals whose envelope it sets): the same adaptive Gauss-Kronrod scheme with SciPy's
  digamma and trigamma instead of Boost's; the quadrature stops at 1e-9 relative in each entropy,
  so a different rounding may stop it one bisection earlier or later, which moves an entropy of a
  few bits by up to a few 1e-9: atol 1e-8.
- p-values, shuffle counts, trial counts, alphabets, distinct responses and few_trials: exact.
Each interval end takes the loosest tolerance of the estimators it may come from (1e-8).
Measured: every difference below 3e-14 on the equality case; on the first two units of W2 (320
trials) below 2e-13, the jackknife of the word code excepted (1.6e-12).
"""
import json
import os
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
PYTHON = sys.executable

TIGHT = (1e-9, 1e-12)
JACKKNIFE = (0.0, 1e-10)
FIT = (0.0, 1e-9)
NSB = (0.0, 1e-8)
LOOSEST = NSB
BY_ESTIMATOR = {"plug-in": TIGHT, "miller-madow": TIGHT, "panzeri-treves": TIGHT, "jackknife": JACKKNIFE,
                "quadratic-extrapolation": FIT, "nsb": NSB}

# The equality case (notes/performance.md): 3 units, 3 conditions x 10 trials, 300 ms trials.
SYNTH = ["synth", "conditions", "--seed", "5", "--duration-s", "0.3", "--labels", "up,down,left",
         "--trials-per-condition", "10", "--means", "1,3,6", "--means", "4,2,3", "--means", "2,2,5"]
SHARED = ["--window-ms", "0:300", "--null-shuffles", "60", "--bootstrap", "12", "--seed", "11"]
RUNS = {
    "count": ["--code", "count", "--population", "u1,u2,u3"],
    "word": ["--code", "word", "--bin-ms", "50", "--binary", "--unit", "u2"],
}

failures = []
checks = 0


def check(where, tool, base, tol):
    global checks
    checks += 1
    rtol, atol = tol
    if tool is None or base is None:
        if tool is not base:
            failures.append(f"{where}: tool {tool!r}, baseline {base!r}")
        return
    if isinstance(tool, (bool, str)) or isinstance(base, (bool, str)):
        if tool != base:
            failures.append(f"{where}: tool {tool!r}, baseline {base!r}")
        return
    if not abs(tool - base) <= atol + rtol * abs(tool):
        failures.append(f"{where}: tool {tool!r}, baseline {base!r}, difference {tool - base:.3g} (tolerance {atol + rtol * abs(tool):.3g})")


def exact(where, tool, base):
    global checks
    checks += 1
    if tool != base:
        failures.append(f"{where}: tool {tool!r}, baseline {base!r}")


def fraction_curves(result):
    """{unit: {estimator: y}} from the tool's info_vs_trial_fraction curves."""
    out = {}
    for c in result["curves"]:
        if c.get("curve") == "info_vs_trial_fraction":
            out.setdefault(c["unit"], {})[c["series"]] = (c["x"]["values"], c["y"]["values"])
    return out


def compare(run, tool, base, subset=False):
    """Every record of the baseline against the tool's record of the same unit; unless `subset`,
    both must hold the same records in the same order."""
    units = [r["unit"] for r in tool["records"]]
    if subset:
        exact(f"{run}: baseline units among the tool's", all(r["unit"] in units for r in base["records"]), True)
    else:
        exact(f"{run}: units", units, [r["unit"] for r in base["records"]])
    by_unit = {r["unit"]: r for r in tool["records"]}
    curves = fraction_curves(tool)
    for b in base["records"]:
        t = by_unit.get(b["unit"])
        if t is None:
            continue
        where = f"{run} {t['unit']}"
        for key in ("trials", "response_alphabet", "distinct_responses", "few_trials"):
            exact(f"{where} {key}", t[key], b[key])
        check(f"{where} stimulus_entropy_bits", t["stimulus_entropy_bits"], base["stimulus_entropy_bits"], TIGHT)
        check(f"{where} mean_spikes", t["mean_spikes"], b["mean_spikes"], TIGHT)
        exact(f"{where} estimators", sorted(t["info_bits"]), sorted(b["info_bits"]))
        for e, tol in BY_ESTIMATOR.items():
            check(f"{where} info_bits[{e}]", t["info_bits"][e], b["info_bits"][e], tol)
            check(f"{where} bits_per_spike[{e}]", t["bits_per_spike"][e], b["bits_per_spike"][e], tol)
            xs, ys = curves[t["unit"]][e]
            exact(f"{where} trial fractions", xs, b["info_vs_trial_fraction"]["fractions"])
            for x, y, yb in zip(xs, ys, b["info_vs_trial_fraction"][e]):
                check(f"{where} info_vs_trial_fraction[{e}] at {x}", y, yb, tol)
        exact(f"{where} null shuffles", t["null"]["shuffles"], b["null"]["shuffles"])
        exact(f"{where} null p_value", t["null"]["p_value"], b["null"]["p_value"])
        check(f"{where} null mean_bits", t["null"]["mean_bits"], b["null"]["mean_bits"], TIGHT)
        for i in range(2):
            check(f"{where} null band95_bits[{i}]", t["null"]["band95_bits"][i], b["null"]["band95_bits"][i], TIGHT)
            check(f"{where} info_ci95_bits[{i}]", t["info_ci95_bits"][i], b["info_ci95_bits"][i], LOOSEST)
        check(f"{where} info_null_subtracted_bits", t["info_null_subtracted_bits"], b["info_null_subtracted_bits"], TIGHT)
        exact(f"{where} population present", t["population"] is None, "population" not in b)
        if t["population"] is not None:
            tp, bp = t["population"], b["population"]
            exact(f"{where} population estimator", tp["estimator"], bp["estimator"])
            for field in ("joint", "sum_single", "synergy", "independent", "shuffle_corrected"):
                check(f"{where} population {field}_bits", tp[field + "_bits"], bp[field + "_bits"], FIT)
                for i in range(2):
                    check(f"{where} population ci95_bits[{field}][{i}]", tp["ci95_bits"][field][i],
                          bp["ci95_bits"][field][i], LOOSEST)


def main():
    if sys.argv[1] == "--compare":  # two results already made, e.g. the tool on W2 and the baseline on its first units
        with open(sys.argv[2]) as f:
            tool = json.load(f)
        with open(sys.argv[3]) as f:
            base = json.load(f)
        compare(os.path.basename(sys.argv[3]), tool, base, subset=True)
        report()
    rastrum, work = sys.argv[1], sys.argv[2]
    os.makedirs(work, exist_ok=True)
    recording = os.path.join(work, "equality.h5")
    subprocess.run([rastrum] + SYNTH + ["--out", recording, "--overwrite"], check=True, stderr=subprocess.DEVNULL)
    for run, options in RUNS.items():
        tool_json, base_json = os.path.join(work, f"tool-{run}.json"), os.path.join(work, f"baseline-{run}.json")
        subprocess.run([rastrum, "stiminfo", recording] + SHARED + options + ["--threads", "2", "--quiet", "--json", tool_json],
                       check=True)
        subprocess.run([PYTHON, os.path.join(HERE, "stiminfo_baseline.py"), recording] + SHARED + options +
                       ["--json", base_json], check=True, stderr=subprocess.DEVNULL)
        with open(tool_json) as f:
            tool = json.load(f)
        with open(base_json) as f:
            base = json.load(f)
        compare(run, tool, base)
    report()


def report():
    for line in failures:
        print("FAIL", line)
    print(f"{checks} checks, {len(failures)} failures")
    sys.exit(1 if failures or checks == 0 else 0)


if __name__ == "__main__":
    main()
