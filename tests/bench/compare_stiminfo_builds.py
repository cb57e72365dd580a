#!/usr/bin/env python3
"""Checks that two builds of rastrum give the same stimulus-information results, value for value.

    tests/bench/compare_stiminfo_builds.py NEW_RASTRUM OLD_RASTRUM [--keep DIR]

For speed work that must not change numbers: both builds run the same `rastrum stiminfo` commands on
a recording made by NEW's `synth conditions` (6 units, 4 labels x 30 trials; count code with single
units, two pairs and a triplet, so every population value and its interval is exercised; a binary
word code; a latency code with sliding windows), and every value of every record and curve of the
JSON results must be equal: numbers exactly (same bits), texts and flags alike. The run's own
provenance (times, versions, command lines) is not compared. Exit 0 when equal, 1 with the first
differences listed otherwise. Not run by ctest, which has one build; run it beside the benchmarks
(notes/performance.md, "Stimulus information over a 1,000-unit session").
"""
import argparse
import json
import os
import subprocess
import sys
import tempfile

MEANS = ["1,3,6,9", "4,2,3,5", "2,2,5,8", "7,6,5,4", "3,3,3,3", "9,1,4,2"]
RUNS = {
    "count": ["--window-ms", "0:400", "--code", "count", "--null-shuffles", "50", "--bootstrap", "20",
              "--population", "u1,u2", "--population", "u3,u4", "--population", "u4,u5,u6"],
    "word": ["--window-ms", "0:400", "--code", "word", "--bin-ms", "50", "--binary", "--null-shuffles", "50",
             "--bootstrap", "20", "--unit", "u1", "--unit", "u6"],
    "latency": ["--window-ms", "0:400", "--code", "latency", "--bin-ms", "20", "--slide-ms", "200:100",
                "--null-shuffles", "30", "--bootstrap", "10", "--unit", "u2"],
}


def differences(a, b, path, out):
    """Appends (path, a, b) for every leaf that differs; numbers compare exactly."""
    if isinstance(a, dict) and isinstance(b, dict):
        for k in sorted(set(a) | set(b)):
            if k not in a or k not in b:
                out.append((f"{path}/{k}", a.get(k, "<absent>"), b.get(k, "<absent>")))
            else:
                differences(a[k], b[k], f"{path}/{k}", out)
    elif isinstance(a, list) and isinstance(b, list) and len(a) == len(b):
        for i, (x, y) in enumerate(zip(a, b)):
            differences(x, y, f"{path}/{i}", out)
    elif a != b or type(a) is not type(b):
        out.append((path, a, b))
    return out


def leaves(x):
    if isinstance(x, dict):
        return sum(leaves(v) for v in x.values())
    if isinstance(x, list):
        return sum(leaves(v) for v in x)
    return 1


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("new")
    p.add_argument("old")
    p.add_argument("--keep", help="folder for the recording and results (default: a temporary one)")
    opt = p.parse_args()
    folder = opt.keep or tempfile.mkdtemp()
    os.makedirs(folder, exist_ok=True)
    recording = os.path.join(folder, "builds.h5")
    make = [opt.new, "synth", "conditions", "--out", recording, "--overwrite", "--seed", "17", "--duration-s", "0.5",
            "--labels", "a,b,c,d", "--trials-per-condition", "30"]
    for m in MEANS:
        make += ["--means", m]
    subprocess.run(make, check=True, stdout=subprocess.DEVNULL)
    failed = False
    for name, args in RUNS.items():
        results = []
        for which, exe in (("new", opt.new), ("old", opt.old)):
            out = os.path.join(folder, f"{name}-{which}.json")
            subprocess.run([exe, "stiminfo", recording, *args, "--quiet", "--json", out], check=True)
            with open(out) as f:
                results.append(json.load(f))
        new, old = results
        diff = differences(new["records"], old["records"], "records", [])
        diff = differences(new.get("curves"), old.get("curves"), "curves", diff)
        compared = leaves(new["records"]) + leaves(new.get("curves"))
        print(f"{name}: {len(new['records'])} records, {compared} values, {len(diff)} differ")
        for d in diff[:10]:
            print("  ", d)
        failed = failed or bool(diff)
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
