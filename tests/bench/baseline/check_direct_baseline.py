#!/usr/bin/python3
"""ctest `baseline_direct_equal`: the NumPy baseline (direct_baseline.py), written from the formulas
of notes/methods.md with NumPy's np.unique, np.sort and lstsq, must give the same numbers as
`rastrum direct` on the small reference case (notes/performance.md, "Reference workloads"): every
per-word-length entropy by each subset estimator, the extrapolated entropies, the level means of the
nested subsets and the quadratic fits in 1/N, the sampling rule's flags and fit range, the rates and
lines in 1/L, the parts of the standard error, the 95% interval, bits per spike and coding
efficiency (compare_direct.py; tolerance 1e-9 relative + 1e-9 absolute).

Six runs on it (RUNS below): the defaults, as they are and with every word length computed
(`--every-length`), and options that take the other branches: looser sampling-rule tolerances (with
42 trials no length passes at 0.03, so the fit-range rule would otherwise be tested only in its
fallback), once against the baseline's every length and once with both stopping where no longer
length can enter the fit, binary letters with plug-in subsets, 4 splits and another seed, and a
user's fit range with Miller-Madow subsets.

Usage: check_direct_baseline.py RASTRUM WORK_FOLDER
"""
import os
import shutil
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
PYTHON = sys.executable

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(HERE))
from workloads import SMALL_DIRECT, SMALL_SYNTH  # noqa: E402  (the small case is defined once, there)

# (name, options, options of the tool only, options of the baseline only, values at least compared: guards
# against a comparison of nothing). The tool computes word lengths up to the first one after which none
# can enter the fit; the baseline computes them all unless told --stop-early, and the comparison checks
# the tool's reason for stopping in the baseline's rows (compare_direct.py).
RUNS = [
    # The small reference case as it is, and with every length computed.
    ("defaults", SMALL_DIRECT, [], [], 500),
    ("every-length", SMALL_DIRECT, ["--every-length"], [], 2000),
    # With 42 trials the sampling rule passes no length at its default tolerance; looser ones make it
    # choose ranges such as 1-2, 2-3, 2-4 and 3-5, the lower end clamped to --letters.
    ("rule", SMALL_DIRECT + ["--bias-tolerance", "0.3"], [], [], 1000),
    ("rule-both-stop", SMALL_DIRECT + ["--bias-tolerance", "0.3"], [], ["--stop-early"], 1000),
    ("binary-plugin", ["--bin-ms", "2", "--letters", "2-6", "--binary", "--subset-estimator", "plug-in",
                       "--splits", "4", "--seed", "9", "--bias-tolerance", "0.2"], [], [], 400),
    # A range given by the user, 4 lengths (the 1/L fit's residual standard error is not 0).
    ("fit-range", ["--bin-ms", "4", "--letters", "1-6", "--fit-letters", "2-5", "--subset-estimator",
                   "miller-madow"], [], [], 800),
]


def main():
    rastrum, folder = sys.argv[1], sys.argv[2]
    shutil.rmtree(folder, ignore_errors=True)
    os.makedirs(folder)
    recording = os.path.join(folder, "small.h5")
    subprocess.run([rastrum] + SMALL_SYNTH + ["--out", recording], check=True)
    failed = 0
    for name, options, tool_only, baseline_only, least in RUNS:
        tool = os.path.join(folder, name + "-tool.json")
        base = os.path.join(folder, name + "-baseline.json")
        # The baseline implements the plain method (notes/methods.md); the calibration, on by default,
        # has its own checks (test_direct_calibration, the validation script).
        subprocess.run([rastrum, "direct", recording] + options + tool_only +
                       ["--surrogates", "0", "--quiet", "--threads", "2", "--json", tool],
                       check=True)
        subprocess.run([PYTHON, os.path.join(HERE, "direct_baseline.py"), recording] + options + baseline_only +
                       ["--json", base], check=True, stderr=subprocess.DEVNULL)
        done = subprocess.run([PYTHON, os.path.join(HERE, "compare_direct.py"), tool, base, "--min-values", str(least)])
        print(f"{name}: {'agree' if done.returncode == 0 else 'DIFFER'}", flush=True)
        failed += done.returncode != 0
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
