"""Reads rastrum's HDF5 results file with h5py (an HDF5 reader independent of rastrum's C++ writer)
and checks it against the JSON result of the same run: every curve of the JSON is a group whose
x and y datasets hold the same numbers and carry quantity, units and description attributes.

Usage: check_results_h5.py RESULT.json RESULT.h5
       check_results_h5.py --run RASTRUM WORKDIR   (makes recordings, runs direct and stiminfo, checks both)
"""
import json
import math
import os
import subprocess
import sys

import h5py


def link_name(text):
    # The writer's escaping of unit ids and labels (notes/recording-layout.md, results file).
    if text == ".":
        return "%2E"
    return text.replace("%", "%25").replace("/", "%2F") or "%00"


def number_text(x):
    # Bin widths and windows as the writer names them: shortest form, "2" not "2.0".
    return ("%.6g" % x)


def group_path(analysis, c):
    path = "/%s/%s/%s" % (analysis, link_name(c["unit"]), c["curve"])
    if c["stimulus"] is not None:
        path += "/stimulus_" + link_name(c["stimulus"])
    if c["bin_ms"] is not None:
        path += "/bin_%sms" % number_text(c["bin_ms"])
    if c["letters"] is not None:
        path += "/letters_%d" % c["letters"]
    if c["window_ms"] is not None:
        path += "/window_%s-%sms" % (number_text(c["window_ms"][0]), number_text(c["window_ms"][1]))
    return path + "/" + link_name(c["series"])


def same(a, b):
    return (a is None and math.isnan(b)) or (a is not None and a == b)


def check(json_path, h5_path):
    result = json.load(open(json_path))
    failures = 0
    with h5py.File(h5_path, "r") as f:
        assert f.attrs["layout"] == b"rastrum-results" or f.attrs["layout"] == "rastrum-results", f.attrs["layout"]
        whole = json.loads(f["result_json"][()].decode("utf-8").rstrip("\0"))
        assert whole["analysis"] == result["analysis"]
        assert "curves" not in whole
        for c in result["curves"]:
            path = group_path(result["analysis"], c)
            if path not in f:
                print("missing", path)
                failures += 1
                continue
            g = f[path]
            for axis in ("x", "y"):
                data = g[axis][()]
                want = c[axis]["values"]
                if len(data) != len(want) or not all(same(w, d) for w, d in zip(want, data)):
                    print("values differ", path, axis)
                    failures += 1
                for attr in ("quantity", "units", "description"):
                    if attr not in g[axis].attrs:
                        print("no attribute", attr, "on", path, axis)
                        failures += 1
                units = g[axis].attrs["units"]
                units = units.decode("utf-8") if isinstance(units, bytes) else str(units)
                if units.rstrip("\0") != c[axis]["unit"]:
                    print("units differ", path, axis, units, c[axis]["unit"])
                    failures += 1
            if c["fit"] is not None and list(g["fit_coefficients"][()]) != c["fit"]["coefficients"]:
                print("fit differs", path)
                failures += 1
    print("%s: %d curves checked, %d failures" % (os.path.basename(json_path), len(result["curves"]), failures))
    return failures


def run_and_check(rastrum, workdir):
    os.makedirs(workdir, exist_ok=True)
    def run(*args):
        subprocess.run([rastrum, *args], check=True, stdout=subprocess.DEVNULL)
    frozen = os.path.join(workdir, "frozen.h5")
    labelled = os.path.join(workdir, "labelled.h5")
    run("synth", "frozen-bins", "--out", frozen, "--overwrite", "--trials", "40", "--duration-s", "2", "--rate-hz", "20,30")
    run("synth", "conditions", "--out", labelled, "--overwrite", "--duration-s", "0.5", "--means", "2,4,6,9",
        "--means", "3,3,5,5")
    d = [os.path.join(workdir, "d" + e) for e in (".json", ".h5")]
    s = [os.path.join(workdir, "s" + e) for e in (".json", ".h5")]
    for path in d + s:
        if os.path.exists(path):
            os.remove(path)
    run("direct", frozen, "--bin-ms", "2,4", "--letters", "1-5", "--json", d[0], "--h5", d[1], "--quiet")
    run("stiminfo", labelled, "--window-ms", "0:500", "--code", "count", "--slide-ms", "200:100", "--population",
        "u1,u2", "--null-shuffles", "20", "--bootstrap", "10", "--json", s[0], "--h5", s[1], "--quiet")
    return check(*d) + check(*s)


def main():
    if sys.argv[1] == "--run":
        failures = run_and_check(sys.argv[2], sys.argv[3])
    else:
        failures = check(sys.argv[1], sys.argv[2])
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
