#!/usr/bin/python3
"""Checks that two results of the same rastrum command agree exactly, record by record: REFERENCE from
one build (or run), CANDIDATE from another. Used to show that a change which only saves work changes
no number (issue 15: the direct method stops growing words at the first length after which no
longer length can enter the fit).

Both files are `--json` results of `direct` or `stiminfo`. Every record of REFERENCE must be in
CANDIDATE with every value equal (numbers bit for bit, as JSON writes them, texts and flags alike),
except for the direct method's word lengths, where CANDIDATE may have computed fewer:
- its `by_letters` rows must be the first rows of REFERENCE's, each equal;
- it must say why it stopped (`letters_computed`, `letters_computed_until`), and the reason must hold
  in REFERENCE's rows: "sampling rule" means its last length is not well sampled (so by the rule no
  longer length can enter the fit), "--fit-letters" that its last length ends the fit range, and
  "--letters" that it computed every length REFERENCE has;
- curves of lengths it did not compute are absent; its curves against 1/L are the first points of
  REFERENCE's.
Keys that CANDIDATE adds are allowed only where listed in ADDED_KEYS. The run's provenance (times,
command line, thread count) is not compared. `--allow PART` lets values whose place contains PART
differ (a documented method change, e.g. `population.ci95_bits.shuffle_corrected`): they are counted
and reported, not failed.

Exit 0 when everything agrees, 1 otherwise (listing the first differences).
Usage: same_results.py REFERENCE.json CANDIDATE.json [--quiet] [--allow PART]...
"""
import argparse
import json
import sys

ADDED_KEYS = {"record": {"letters_computed", "letters_computed_until"}}


class Checker:
    def __init__(self):
        self.problems = []
        self.values = 0

    def equal(self, where, a, b):
        """Deep equality, counting compared leaves."""
        if isinstance(a, dict):
            if not isinstance(b, dict) or set(a) != set(b):
                return self.problems.append(f"{where}: keys differ ({sorted(set(a) ^ set(b if isinstance(b, dict) else {}))})")
            for k in a:
                self.equal(f"{where}.{k}", a[k], b[k])
        elif isinstance(a, list):
            if not isinstance(b, list) or len(a) != len(b):
                return self.problems.append(f"{where}: {len(a)} items in the reference, {b!r:.80} in the candidate")
            for i, (x, y) in enumerate(zip(a, b)):
                self.equal(f"{where}[{i}]", x, y)
        else:
            self.values += 1
            if a != b or type(a) is not type(b):
                self.problems.append(f"{where}: reference {a!r}, candidate {b!r}")

    def prefix(self, where, a, b):
        """b is the first len(b) items of a, each equal."""
        if len(b) > len(a):
            return self.problems.append(f"{where}: candidate has {len(b)} items, reference {len(a)}")
        self.equal(where, a[:len(b)], b)


def record_name(r):
    parts = [r.get("unit") or "+".join(r.get("units", []) or [])]
    for key in ("bin_ms", "window_ms", "stimulus"):
        if r.get(key) is not None:
            parts.append(f"{key}={r[key]}")
    return " ".join(str(p) for p in parts)


def check_lengths(c, where, ref, new):
    """The direct method's rows of word lengths: new's are a prefix of ref's, with a reason that holds."""
    rows_ref, rows_new = ref["by_letters"], new["by_letters"]
    if not rows_new:
        return c.problems.append(f"{where}: no word lengths computed")
    c.prefix(f"{where}.by_letters", rows_ref, rows_new)
    first, last = new.get("letters_computed", [None, None])
    if [first, last] != [rows_new[0]["letters"], rows_new[-1]["letters"]]:
        c.problems.append(f"{where}: letters_computed {new.get('letters_computed')} is not the rows' range")
    why = new.get("letters_computed_until")
    last_row = rows_ref[len(rows_new) - 1] if len(rows_new) <= len(rows_ref) else None
    if why == "--letters":
        ok = len(rows_new) == len(rows_ref)
    elif why == "sampling rule":
        ok = new["fit_letters_from"] == "sampling rule" and last_row is not None and not last_row["well_sampled"]
    elif why == "calibration":
        # The calibration's search ends at the first range beyond its tolerance, or at the longest
        # length whose model words it can enumerate (then the reference's search ended there too).
        fits = (new.get("calibration") or {}).get("by_fit") or []
        ref_fits = (ref.get("calibration") or {}).get("by_fit")
        ok = (new["fit_letters_from"] == "calibration" and bool(fits) and fits[-1]["fit_letters"][1] == last
              and (not fits[-1]["within_tolerance"] or ref_fits == fits))
    elif why == "--fit-letters":
        ok = new["fit_letters_from"] == "option" and last == new["fit_letters"][1]
    else:  # any other reason: the reference stopped for it too, at the same length
        ok = why == ref.get("letters_computed_until") and len(rows_new) == len(rows_ref)
    if not ok:
        c.problems.append(f"{where}: stopped at {last} letters for '{why}', which the reference's rows do not bear out")


def check_records(c, ref, new):
    if len(ref["records"]) != len(new["records"]):
        return c.problems.append(f"{len(ref['records'])} records in the reference, {len(new['records'])} in the candidate")
    computed = {}
    for i, (a, b) in enumerate(zip(ref["records"], new["records"])):
        where = f"record {i} ({record_name(a)})"
        extra = set(b) - set(a)
        if extra - ADDED_KEYS["record"]:
            c.problems.append(f"{where}: keys the reference lacks: {sorted(extra - ADDED_KEYS['record'])}")
        if set(a) - set(b):
            c.problems.append(f"{where}: keys missing from the candidate: {sorted(set(a) - set(b))}")
        for key in a:
            if key not in b or key in ADDED_KEYS["record"]:  # the added keys are checked with the rows
                continue
            if key == "by_letters":
                check_lengths(c, where, a, b)
            else:
                c.equal(f"{where}.{key}", a[key], b[key])
        if "by_letters" in b:
            computed[(b["unit"], b.get("stimulus"), b["bin_ms"])] = {le["letters"] for le in b["by_letters"]}
    return computed


def curve_key(x):
    return tuple(json.dumps(x.get(k)) for k in ("curve", "unit", "units", "stimulus", "bin_ms", "letters", "window_ms",
                                                  "series"))


def check_curves(c, ref, new, computed):
    refs = {curve_key(x): x for x in ref.get("curves", [])}
    news = {curve_key(x): x for x in new.get("curves", [])}
    for key, x in refs.items():
        if key in news:
            continue
        lengths = computed.get((x.get("unit"), x.get("stimulus"), x.get("bin_ms")))
        if x["curve"] == "entropy_vs_inverse_trials" and lengths is not None and x["letters"] not in lengths:
            continue  # a word length the candidate did not compute
        c.problems.append(f"curve {key}: missing from the candidate")
    for key, y in news.items():
        if key not in refs:
            c.problems.append(f"curve {key}: not in the reference")
            continue
        x = refs[key]
        if y["curve"] != "entropy_rate_vs_inverse_letters":
            c.equal(f"curve {key}", x, y)
            continue
        for field in set(x) | set(y):
            where = f"curve {key}.{field}"
            if field in ("x", "y"):
                rest = {k: v for k, v in x[field].items() if k != "values"}
                c.equal(where, rest, {k: v for k, v in y[field].items() if k != "values"})
                c.prefix(where + ".values", x[field]["values"], y[field]["values"])
            elif field == "in_fit":
                c.prefix(where, x[field], y[field])
            else:
                c.equal(where, x.get(field), y.get(field))


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("reference")
    p.add_argument("candidate")
    p.add_argument("--quiet", action="store_true", help="print only differences")
    p.add_argument("--allow", action="append", default=[], help="values whose place contains this may differ")
    opt = p.parse_args()
    with open(opt.reference) as f:
        ref = json.load(f)
    with open(opt.candidate) as f:
        new = json.load(f)
    c = Checker()
    if ref.get("analysis") != new.get("analysis"):
        c.problems.append(f"analyses differ: {ref.get('analysis')} and {new.get('analysis')}")
    computed = check_records(c, ref, new)
    check_curves(c, ref, new, computed)
    allowed = [line for line in c.problems if any(part in line.split(":")[0] for part in opt.allow)]
    c.problems = [line for line in c.problems if line not in allowed]
    rows = [(len(a.get("by_letters", [])), len(b.get("by_letters", []))) for a, b in zip(ref["records"], new["records"])]
    if not opt.quiet:
        print(f"{len(ref['records'])} records, {c.values} values compared; word-length rows: "
              f"{sum(r[1] for r in rows)} computed of the reference's {sum(r[0] for r in rows)}"
              + (f"; {len(allowed)} values differ where allowed ({', '.join(opt.allow)})" if opt.allow else ""))
    for line in c.problems[:30]:
        print("DIFFERS: " + line)
    if len(c.problems) > 30:
        print(f"... and {len(c.problems) - 30} more")
    return 1 if c.problems or c.values == 0 else 0


if __name__ == "__main__":
    sys.exit(main())
