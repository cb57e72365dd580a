#!/usr/bin/python3
"""Runs the same analyses with two builds of rastrum, or with one build computing every word length and
computing only those it needs, and checks that every record agrees (same_results.py): issue 15 made
the direct method stop growing words where no longer length can enter the fit, and compute only the
fit range in rotated nulls, which must change no rate, fit range, interval, caution or p-value.

Test size (ctest `direct_same_numbers`, about a minute): the small case and a short W1 (six of W1's
rates, 100 trials x 2 s, W1's sweep of bins and letters), without and with 3 rotated nulls. Without
--reference the reference is the same build with `--every-length`.
--full: the reference workloads W1 (with and without 19 rotated nulls), the 1,000-unit session, W2
(both codes) and W3, with their commands from workloads.py and baseline/stiminfo_workloads.sh; hours
with a reference build from before issue 15 (most of it W1 with nulls on that build).

Usage: same_numbers.py RASTRUM FOLDER [--reference OTHER_RASTRUM] [--full] [--reuse]
"""
import argparse
import os
import shlex
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, HERE)
from workloads import S1000_SYNTH, SMALL_DIRECT, SMALL_SYNTH, SWEEP, W1_RATES, W1_SYNTH  # noqa: E402

SHORT_W1_RATES = ",".join(W1_RATES.split(",")[i] for i in (0, 20, 40, 60, 80, 99))
SHORT_W1_SYNTH = ["synth", "poisson", "--out", "{dir}/w1-short.h5", "--seed", "61", "--trials", "100",
                  "--duration-s", "2", "--rate-hz", SHORT_W1_RATES, "--modulation", "1", "--correlation-ms", "15",
                  "--resolution-ms", "0.5"]

# (name, recording-making command, analysis command); {dir} is the work folder.
TEST_CASES = [
    ("small", SMALL_SYNTH + ["--out", "{dir}/small.h5"], ["direct", "{dir}/small.h5"] + SMALL_DIRECT),
    ("w1-short", SHORT_W1_SYNTH, ["direct", "{dir}/w1-short.h5"] + SWEEP),
    ("w1-short-null3", SHORT_W1_SYNTH, ["direct", "{dir}/w1-short.h5"] + SWEEP + ["--null-rotations", "3"]),
]


def stiminfo_case(name, options):
    w2 = ["bash", "-c", f'source {shlex.quote(HERE)}/baseline/stiminfo_workloads.sh && w2_make "$0" "$1"']
    return (name, w2, ["stiminfo", "{dir}/w2.h5", "--window-ms", "0:500", "--null-shuffles", "1000"] + options)


def w3_populations():
    script = os.path.join(HERE, "baseline", "stiminfo_workloads.sh")
    return subprocess.run(["bash", script, "w3-populations"], check=True, capture_output=True, text=True).stdout.split()


FULL_CASES = [
    ("W1", W1_SYNTH, ["direct", "{dir}/w1.h5"] + SWEEP),
    ("W1-null19", W1_SYNTH, ["direct", "{dir}/w1.h5"] + SWEEP + ["--null-rotations", "19"]),
    ("S1000", S1000_SYNTH, ["direct", "{dir}/s1000.h5"] + SWEEP),
    stiminfo_case("W2-count", ["--code", "count"]),
    stiminfo_case("W2-word", ["--code", "word", "--bin-ms", "10", "--binary"]),
]


def run(command, **values):
    subprocess.run([a.format(**values) for a in command], check=True, stdout=subprocess.DEVNULL,
                   stderr=subprocess.DEVNULL)


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("rastrum")
    p.add_argument("folder")
    p.add_argument("--reference", help="another build to compare with (default: this one with --every-length)")
    p.add_argument("--full", action="store_true", help="the whole reference workloads (hours)")
    p.add_argument("--reuse", action="store_true", help="keep recordings and the reference's results already in FOLDER")
    opt = p.parse_args()
    os.makedirs(opt.folder, exist_ok=True)
    cases = list(TEST_CASES)
    if opt.full:
        cases += FULL_CASES + [stiminfo_case("W3", ["--code", "count"] + w3_populations())]
    made = set()
    failed = 0
    for name, make, analysis in cases:
        recording = analysis[1].format(dir=opt.folder)
        if recording not in made and not (opt.reuse and os.path.exists(recording)):
            if make[0] == "bash":
                run(make + [opt.rastrum, recording])
            else:
                run([opt.rastrum] + make + ["--overwrite"], dir=opt.folder)
        made.add(recording)
        reference = os.path.join(opt.folder, name + "-reference.json")
        candidate = os.path.join(opt.folder, name + "-candidate.json")
        if not (opt.reuse and os.path.exists(reference)):
            extra = [] if opt.reference or analysis[0] != "direct" else ["--every-length"]
            run([opt.reference or opt.rastrum] + analysis + extra + ["--quiet", "--threads", "2", "--json", reference],
                dir=opt.folder)
        run([opt.rastrum] + analysis + ["--quiet", "--threads", "2", "--json", candidate], dir=opt.folder)
        done = subprocess.run([sys.executable, os.path.join(HERE, "same_results.py"), reference, candidate],
                              capture_output=True, text=True)
        print(f"{name}: {'same numbers' if done.returncode == 0 else 'DIFFER'}; {done.stdout.strip()}", flush=True)
        failed += done.returncode != 0
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
