#!/usr/bin/env python3
"""Cross-checks rastrum's plug-in entropies and mutual information against general-purpose
reference libraries on random count tables:
  scipy.stats.entropy(p, base=2)                  (SciPy; Virtanen et al. 2020, Nature Methods 17:261)
  sklearn.metrics.mutual_info_score(contingency=) (scikit-learn; Pedregosa et al. 2011, JMLR 12:2825),
    which returns nats, converted here to bits.
Miller-Madow is checked against its formula, plug-in + (m - 1) / (2 N ln 2) (Miller 1955).
Usage: check_estimators.py PATH_TO_entropy_probe. Exits non-zero on any mismatch."""
import json
import subprocess
import sys

import numpy as np
from scipy.stats import entropy
from sklearn.metrics import mutual_info_score

TOLERANCE = 1e-10


def main():
    probe = sys.argv[1]
    rng = np.random.default_rng(20261201)
    tables = []
    for _ in range(300):
        rows, cols = rng.integers(1, 9, size=2)
        counts = rng.integers(0, 30, size=(rows, cols)) * (rng.random((rows, cols)) < 0.7)
        counts[0, 0] += 1  # never an empty table
        tables.append(counts)
    text = "".join(f"{t.shape[0]} {t.shape[1]} " + " ".join(str(int(c)) for c in t.ravel()) + "\n" for t in tables)
    out = subprocess.run([probe], input=text, capture_output=True, text=True, check=True).stdout.splitlines()
    assert len(out) == len(tables), "the probe answered %d of %d tables" % (len(out), len(tables))
    failures = 0
    for i, (t, line) in enumerate(zip(tables, out)):
        got = json.loads(line)
        n = t.sum()
        nonzero = t[t > 0]
        expected = {
            "x_entropy_bits": entropy(t.sum(axis=1), base=2),
            "y_entropy_bits": entropy(t.sum(axis=0), base=2),
            "joint_entropy_bits": entropy(t.ravel(), base=2),
            "joint_plugin_from_counts_bits": entropy(t.ravel(), base=2),
            "mutual_information_bits": mutual_info_score(None, None, contingency=t) / np.log(2),
            "joint_miller_madow_bits": entropy(t.ravel(), base=2) + (len(nonzero) - 1) / (2 * n * np.log(2)),
        }
        for key, value in expected.items():
            if abs(got[key] - value) > TOLERANCE:
                failures += 1
                print(f"table {i}: {key} = {got[key]!r}, reference {value!r}")
    checked = len(tables) * 6
    print(f"{checked - failures} passed, {failures} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
