#!/usr/bin/env python3
"""Measures the direct method's sampling rule on synthetic recordings with exact answers.

For each scenario it writes a recording with `rastrum synth frozen-bins` (independent or refractory
Markov letters with frozen spike probabilities, so the information rate is known exactly), runs
`rastrum direct` with several --bias-tolerance values and with a fit over every word length, and
prints a Markdown table of relative errors of the information rate, the fit ranges chosen, and
whether the 95% interval held the truth. Usage:
    sampling_rule.py PATH_TO_rastrum [--quick] [--tolerances=0.01,0.03,...]
The table in notes/methods.md was made by this script."""
import json
import subprocess
import sys
import tempfile

RASTRUM = sys.argv[1]
QUICK = "--quick" in sys.argv
TOLERANCES = [0.01, 0.03, 0.1, 0.3]
for arg in sys.argv[2:]:
    if arg.startswith("--tolerances="):
        TOLERANCES = [float(x) for x in arg.split("=", 1)[1].split(",")]

SCENARIOS = [
    # (label, synth options, bin ms, letters)
    ("10 Hz, CV 1, 150 trials", "--rate-hz 10 --modulation 1 --trials 150", 2, "1-10"),
    ("30 Hz, CV 1, 150 trials", "--rate-hz 30 --modulation 1 --trials 150", 2, "1-10"),
    ("10 Hz, CV 1.5, 150 trials", "--rate-hz 10 --modulation 1.5 --trials 150", 2, "1-10"),
    ("30 Hz, CV 1.5, 150 trials", "--rate-hz 30 --modulation 1.5 --trials 150", 2, "1-10"),
    ("20 Hz, CV 1.5, 50 trials", "--rate-hz 20 --modulation 1.5 --trials 50", 2, "1-10"),
    ("60 Hz, CV 0.7, refractory 1, 150 trials", "--rate-hz 60 --modulation 0.7 --refractory 1 --trials 150", 2, "1-10"),
    ("100 Hz, CV 0.5, refractory 1, 150 trials", "--rate-hz 100 --modulation 0.5 --refractory 1 --trials 150", 2, "1-10"),
    ("15 Hz homogeneous, 150 trials", "--rate-hz 15 --modulation 0 --trials 150", 2, "1-10"),
]
SEEDS = [1, 2] if QUICK else [1, 2, 3, 4]


def run(args):
    return subprocess.run([RASTRUM] + args, check=True, capture_output=True, text=True).stdout


def main():
    header = "| scenario | true b/s | " + " | ".join(f"tol {t}: error, fit L, in CI" for t in TOLERANCES) + \
             " | all lengths: error |"
    print(header)
    print("|" + "---|" * (3 + len(TOLERANCES)))
    with tempfile.TemporaryDirectory() as folder:
        for label, synth, bin_ms, letters in SCENARIOS:
            cells = {t: [] for t in TOLERANCES}
            all_lengths = []
            truths = []
            for seed in SEEDS:
                path = f"{folder}/r.h5"
                run(["synth", "frozen-bins", "--overwrite", "--out", path, "--duration-s", "8", "--bin-ms", str(bin_ms),
                     "--seed", str(seed)] + synth.split())
                truth = json.load(open(f"{folder}/r.answers.json"))["units"][0]["info_rate_bits_per_s"]
                truths.append(truth)
                base = ["direct", path, "--bin-ms", str(bin_ms), "--letters", letters, "--json", "-", "--quiet",
                        "--seed", str(seed)]
                for t in TOLERANCES:
                    r = json.loads(run(base + ["--bias-tolerance", str(t)]))["records"][0]
                    lo, hi = r["info_rate_ci95_bits_per_s"]
                    cells[t].append((r["info_rate_bits_per_s"], truth, r["fit_letters"], lo <= truth <= hi))
                r = json.loads(run(base + ["--fit-letters", letters]))["records"][0]
                all_lengths.append((r["info_rate_bits_per_s"], truth))

            def error(est, truth):
                return f"{(est - truth) / truth:+.1%}" if truth > 0.5 else f"{est - truth:+.2f} b/s"

            row = f"| {label} | {sum(truths) / len(truths):.2f} | "
            for t in TOLERANCES:
                worst = max(cells[t], key=lambda c: abs(c[0] - c[1]))
                fits = sorted({f"{c[2][0]}-{c[2][1]}" for c in cells[t]})
                covered = sum(c[3] for c in cells[t])
                row += f"worst {error(worst[0], worst[1])}, L {','.join(fits)}, {covered}/{len(SEEDS)} | "
            worst = max(all_lengths, key=lambda c: abs(c[0] - c[1]))
            row += f"worst {error(worst[0], worst[1])} |"
            print(row, flush=True)


def subset_estimators():
    """Relative error of the information per word at each length, by subset estimator."""
    print()
    print("| scenario | subset estimator | relative error of info per word, L = 1..8 |")
    print("|---|---|---|")
    with tempfile.TemporaryDirectory() as folder:
        for label, synth, bin_ms, _ in SCENARIOS[:4]:
            path = f"{folder}/r.h5"
            run(["synth", "frozen-bins", "--overwrite", "--out", path, "--duration-s", "8", "--bin-ms", str(bin_ms), "--seed", "1"]
                + synth.split())
            truth = json.load(open(f"{folder}/r.answers.json"))["units"][0]["by_letters"]["info_bits"]
            r = json.loads(run(["direct", path, "--bin-ms", str(bin_ms), "--letters", "1-8", "--every-length",
                                "--json", "-", "--quiet"]))["records"][0]
            for name in ["plug-in", "miller-madow", "jackknife"]:
                errors = [e["info_bits_by_subset_estimator"][name] / truth[e["letters"] - 1] - 1
                          for e in r["by_letters"]]
                print(f"| {label} | {name} | " + " ".join(f"{x:+.3f}" for x in errors) + " |", flush=True)


if __name__ == "__main__":
    main()
    if not any(a.startswith("--tolerances=") for a in sys.argv):
        subset_estimators()
