#!/usr/bin/python3
"""Compares a `rastrum direct --json` result with direct_baseline.py's on the same recording and
options: every value the baseline writes (per record, per word length, and the curves of entropies
against 1/N and of entropy rates against 1/L) must be in the tool's result with the same value.

Whole numbers, flags and texts (word counts, the sampling rule's verdicts, the fit range) must be
equal. The tool computes word lengths only up to the first one after which no longer length can enter
the fit; the baseline's rows and curves of longer lengths are left out, once the tool's reason for
stopping is found to hold in the baseline's rows (computed_part). Numbers agree when |a - b| <= rtol max(|a|, |b|, S) (rtol 1e-9 by default), S the scale of
the entropies the value is computed from:
- per word length (bits per word): the total entropy per word at that length; the information is a
  difference of such entropies and the jackknife computes N H - (N - 1) <H_(-j)> with N the words in
  the subset (up to millions), so rounding in the last digit of either implementation's sums moves
  these values by about N x 1e-16 of the entropy, not of the (much smaller) difference;
- rates (bits/s): the largest total entropy rate of the record; bits per spike: that over the mean
  rate; coding efficiency: 1;
- the coefficient of x^j of a fitted polynomial: the largest |y| it was fitted to over x_max^j, i.e.
  the coefficient's share of the fitted value (the quadratic term of a fit in 1/N is a second
  difference and carries the y values' rounding amplified by the fit's condition number).
The two implementations sum in different orders and solve the least squares differently (Eigen's
column-pivoting QR, NumPy's SVD-based lstsq); that moves the last few of the 16 significant digits.
Exit 0 when everything agrees, 1 otherwise, listing the first disagreements.

Usage: compare_direct.py TOOL.json BASELINE.json [--rtol R] [--min-values N] [--subset] [--verbose]
"""
import argparse
import collections
import json
import math
import re
import sys


class Comparer:
    def __init__(self, rtol):
        self.rtol = rtol
        self.values = 0
        self.problems = []
        self.worst = collections.defaultdict(float)  # quantity (indices dropped) -> largest share of the tolerance used

    def number(self, where, expected, found, scale):
        """Agreement: |a - b| <= rtol max(|a|, |b|, S) + floor, for scale = (S, floor)."""
        self.values += 1
        if not isinstance(found, (int, float)) or isinstance(found, bool):
            return self.problems.append(f"{where}: baseline {expected!r}, tool {found!r}")
        s, floor = scale
        allowed = self.rtol * max(abs(expected), abs(found), s) + floor
        used = abs(expected - found) / allowed if allowed > 0 else (0.0 if expected == found else math.inf)
        kind = re.sub(r"\[\d+\]", "[]", where.split(": ", 1)[-1])
        self.worst[kind] = max(self.worst[kind], used)
        if used > 1:
            self.problems.append(f"{where}: baseline {expected!r}, tool {found!r} (allowed {allowed:.2g})")

    def compare(self, where, expected, found, scale=(0.0, 0.0)):
        """`expected` from the baseline, `found` from the tool; every key of the former in the latter.
        `scale` is S for every number below (a function of the key for objects, or a number)."""
        if isinstance(expected, dict):
            if not isinstance(found, dict):
                return self.problems.append(f"{where}: the tool has {found!r}, not an object")
            for key, value in expected.items():
                if key not in found:
                    self.problems.append(f"{where}.{key}: missing from the tool's result")
                else:
                    self.compare(f"{where}.{key}", value, found[key], scale(key) if callable(scale) else scale)
        elif isinstance(expected, list):
            if not isinstance(found, list) or len(found) != len(expected):
                return self.problems.append(f"{where}: {len(expected)} values in the baseline, the tool has {found!r}")
            for i, (a, b) in enumerate(zip(expected, found)):
                self.compare(f"{where}[{i}]", a, b, scale(i) if callable(scale) else scale)
        elif isinstance(expected, float):
            self.number(where, expected, found, scale)
        else:
            self.values += 1
            if expected != found or type(expected) is not type(found):
                self.problems.append(f"{where}: baseline {expected!r}, tool {found!r}")


def keyed(items, fields):
    out = {}
    for item in items:
        key = tuple(item.get(f) for f in fields)
        if key in out:
            raise SystemExit(f"two entries for {key}")
        out[key] = item
    return out


EPSILON = 2.0 ** -52


def record_scales(r):
    """(S, floor) per word length (bits per word) and for rates (bits/s) of one baseline record.
    The floor is the rounding of the jackknife: N H - (N - 1) <H_(-j)> cancels sums as large as
    N log2 N (N the words of the full set), whose last digits differ between two implementations
    that add in different orders; 64 x 2^-52 of that is allowed."""
    dt = r["bin_ms"] / 1000.0
    per_word = []
    for le in r["by_letters"]:
        n = le["samples"]
        floor = 64 * EPSILON * n * math.log2(n) if n > 1 else 0.0
        per_word.append((max(abs(le["total_entropy_bits"]), abs(le["total_entropy_plugin_bits"])), floor))
    # The 1/L fit's intercept moves by at most a few times its points' rounding (4 allowed).
    rate = (max([abs(r["total_entropy_rate_bits_per_s"])] +
                [s / (le["letters"] * dt) for (s, _), le in zip(per_word, r["by_letters"])]),
            4 * max(f / (le["letters"] * dt) for (_, f), le in zip(per_word, r["by_letters"])))
    return per_word, rate


def record_scale(r):
    per_word, rate = record_scales(r)
    plain = {"bin_ms", "trials", "trial_duration_s", "mean_rate_hz"}  # measured, not estimated: exact

    def of(key):
        if key in plain:
            return (0.0, 0.0)
        if key == "by_letters":
            return lambda i: per_word[i]
        if key == "bits_per_spike":
            return tuple(v / r["mean_rate_hz"] for v in rate) if r["mean_rate_hz"] > 0 else (0.0, 0.0)
        if key == "coding_efficiency":
            return (1.0, rate[1] / abs(r["total_entropy_rate_bits_per_s"]) if r["total_entropy_rate_bits_per_s"] else 0)
        return rate
    return of


def curve_scale(c, records):
    """Entropies against 1/N share the scale of their word length, rates against 1/L their record's;
    the coefficient of x^j of a fitted polynomial is scaled by 1 / x_max^j, its share of the fitted value."""
    per_word, rate = record_scales(records[(c["unit"], c["bin_ms"])])
    if c["curve"] == "entropy_vs_inverse_trials":
        letters = [le["letters"] for le in records[(c["unit"], c["bin_ms"])]["by_letters"]]
        scale = per_word[letters.index(c["letters"])]
    else:
        scale = rate
    x_max = max(abs(v) for v in c["x"]["values"])

    def of(key):
        if key == "fit":
            return lambda k: (lambda j: tuple(v / x_max ** j for v in scale)) if k == "coefficients" else scale
        return (0.0, 0.0) if key == "x" else scale
    return of


def computed_part(base_record, tool_record, problems):
    """The baseline's record cut to the word lengths the tool computed. The tool stops at the first
    length after which no longer one can enter the fit and says why (`letters_computed_until`); the
    reason must hold in the baseline's own rows: "sampling rule", its last length is not well sampled
    there; "--fit-letters", that length ends the fit range; "--letters", nothing was left out."""
    rows = base_record["by_letters"]
    computed = tool_record.get("letters_computed")
    if computed is None:  # a result from before lengths could stop: every length was computed
        return base_record
    where = f"record {base_record['unit']} at {base_record['bin_ms']} ms"
    keep = [le for le in rows if le["letters"] <= computed[1]]
    why = tool_record.get("letters_computed_until")
    if why == "--letters":
        holds = len(keep) == len(rows)
    elif why == "sampling rule":
        holds = bool(keep) and not keep[-1]["well_sampled"] and base_record["fit_letters_from"] == "sampling rule"
    elif why == "--fit-letters":
        holds = computed[1] == base_record["fit_letters"][1]
    else:
        holds = False
    if not holds:
        problems.append(f"{where}: the tool stopped at {computed[1]} letters for '{why}', which the baseline's "
                        "rows do not bear out")
    cut = dict(base_record)
    cut["by_letters"] = keep
    return cut


def computed_curve(curve, letters):
    """A baseline curve cut to the word lengths the tool computed (None: a length it did not compute)."""
    if curve["curve"] == "entropy_vs_inverse_trials":
        return curve if curve["letters"] in letters else None
    if curve["curve"] == "entropy_rate_vs_inverse_letters":
        n = sum(1 for x in curve["x"]["values"] if round(1 / x) in letters)
        cut = json.loads(json.dumps(curve))
        for key in ("x", "y"):
            cut[key]["values"] = cut[key]["values"][:n]
        cut["in_fit"] = cut["in_fit"][:n]
        return cut
    return curve


def main():
    p = argparse.ArgumentParser()
    p.add_argument("tool")
    p.add_argument("baseline")
    p.add_argument("--rtol", type=float, default=1e-9)
    p.add_argument("--verbose", action="store_true", help="the largest relative difference of each quantity")
    p.add_argument("--subset", action="store_true",
                   help="the baseline analysed some of the tool's units: compare those, ignore the others")
    p.add_argument("--min-values", type=int, default=1,
                   help="fail unless at least this many values were compared (guards against comparing nothing)")
    opt = p.parse_args()
    with open(opt.tool) as f:
        tool = json.load(f)
    with open(opt.baseline) as f:
        base = json.load(f)
    c = Comparer(opt.rtol)

    base_records = keyed(base["records"], ("unit", "bin_ms"))
    units = {r["unit"] for r in base["records"]}
    tool_records = keyed([r for r in tool["records"] if not opt.subset or r["unit"] in units], ("unit", "bin_ms"))
    if set(tool_records) != set(base_records):
        c.problems.append(f"records differ: tool {sorted(tool_records)}, baseline {sorted(base_records)}")
    letters = {}
    for key, record in base_records.items():
        if key in tool_records:
            record = computed_part(record, tool_records[key], c.problems)
            base_records[key] = record
            letters[key] = {le["letters"] for le in record["by_letters"]}
            c.compare(f"record {key[0]} at {key[1]} ms: record", record, tool_records[key], record_scale(record))

    fields = ("curve", "unit", "bin_ms", "letters", "series")
    wanted = {b["curve"] for b in base["curves"]}
    tool_curves = keyed([t for t in tool["curves"] if t["curve"] in wanted and (not opt.subset or t["unit"] in units)],
                        fields)
    base_curves = [computed_curve(b, letters.get((b["unit"], b["bin_ms"]), set())) for b in base["curves"]]
    base_curves = keyed([b for b in base_curves if b is not None], fields)
    if set(tool_curves) != set(base_curves):
        c.problems.append(f"curves differ: {len(tool_curves)} in the tool's result, {len(base_curves)} in the baseline's")
    for key, curve in base_curves.items():
        if key in tool_curves:
            where = "curve " + " ".join(str(k) for k in key[1:] if k is not None) + ": " + key[0] + "." + key[4]
            c.compare(where, curve, tool_curves[key], curve_scale(curve, base_records))

    worst = max(c.worst.values(), default=0.0)
    print(f"compared {c.values} values of {len(base_records)} records and {len(base_curves)} curves; the largest "
          f"difference is {worst:.2g} of its tolerance (rtol {opt.rtol:g} and the jackknife's rounding floor)")
    if opt.verbose:
        for kind, w in sorted(c.worst.items(), key=lambda item: -item[1]):
            print(f"  {w:.1e}  {kind}")
    if c.values < opt.min_values:
        c.problems.append(f"only {c.values} values compared, fewer than --min-values {opt.min_values}")
    for line in c.problems[:40]:
        print("DIFFERS: " + line)
    if len(c.problems) > 40:
        print(f"... and {len(c.problems) - 40} more")
    return 1 if c.problems else 0


if __name__ == "__main__":
    sys.exit(main())
