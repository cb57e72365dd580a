#!/usr/bin/python3
"""The direct method written the straightforward way a lab would write it in NumPy: the baseline
that `rastrum direct` is timed against (tests/bench/workloads.sh) and checked against
(tests/bench/baseline/compare_direct.py, run by ctest).

It computes the same quantities as `rastrum direct` without rotations (notes/methods.md, sections
1-4): spike-count letters (or --binary), words as integer codes, total and noise entropies on the
trials of random nested splits by plug-in, Miller-Madow and jackknife, the quadratic extrapolation
in 1/N, the sampling rule, the extrapolation in 1/L, the 95% interval, bits per spike and coding
efficiency; it writes them under the JSON keys the tool uses. Every trial of the recording is
analysed (no --stimulus, --trials or --null-rotations).

What it loops over in Python and what it leaves to NumPy, so that the comparison is honest:
- Python loops: units, bin widths, word lengths, splits, and the 15 nested subsets of each split
  (the full set is counted once, as a lab would, not once per split as the tool does); trials when
  binning; the fits.
- NumPy per subset: the words of the subset's trials are copied out (boolean row selection); the
  total entropy's histogram is np.unique(..., return_counts=True) on them; the noise entropy's
  histograms at every start position at once by np.sort along the trial axis and the run lengths
  of equal neighbours (the vectorised form of one np.unique per start position). Words of L letters
  are built from those of L - 1 in one array expression.
- Nothing is reused between subsets or word lengths beyond the word codes themselves.
- Every word length of --letters is computed, as the tool did before issue 15; with --stop-early the
  lengths stop where the tool's do (notes/methods.md 4.3), for a like-for-like timing.

The random nested splits are those of toolkit/src/trial_partition.cpp: xoshiro256** (Blackman &
Vigna 2021, ACM TOMS 47:36) seeded through SplitMix64 (Steele, Lea & Flood 2014), FNV-1a for the
unit id, Lemire's unbiased integers (2019, ACM TOMACS 29:3) and a Fisher-Yates shuffle, all on
Python integers masked to 64 bits.

Usage: direct_baseline.py RECORDING.h5 --bin-ms 2,4 --letters 1-6 [--unit ID]... [--first-units K | --spread-units K]
       [--splits 8] [--seed 1] [--subset-estimator jackknife] [--bias-tolerance 0.03]
       [--fit-letters A-B] [--binary] [--stop-early] --json OUT
Needs Debian's python3 with python3-numpy and python3-h5py.
"""
import argparse
import json
import math
import re
import struct
import sys

import h5py
import numpy as np

from tool_random import RandomStream, derive_seed, shuffle, text_hash



# Randomness as toolkit/src/random.cpp: tool_random.py, shared with the stimulus-information baseline.


def bits_of(x):
    return struct.unpack("<Q", struct.pack("<d", x))[0]


def nested_splits(trials, splits, seed):
    """Block (0..7) of every trial in each split, as make_nested_splits."""
    result = []
    for s in range(splits):
        rng = RandomStream(derive_seed(seed, [0x5B117, s]))
        order = list(range(trials))
        shuffle(order, rng)
        block_of = np.zeros(trials, dtype=np.int64)
        for i, k in enumerate(order):
            block_of[k] = i * 8 // trials
        result.append(block_of)
    return result


# ---- recording ----

def natural_key(name):
    """Natural order: digit runs by value (ties broken by the plain text)."""
    return ([(0, int(p)) if p.isdigit() else (1, p) for p in re.split(r"(\d+)", name) if p != ""], name)


def read_recording(path):
    with h5py.File(path, "r") as f:
        units = {name: np.sort(np.asarray(f["units"][name]["spike_times"][()], dtype=np.float64))
                 for name in f["units"]}
        start = np.asarray(f["trials"]["start_time"][()], dtype=np.float64)
        stop = np.asarray(f["trials"]["stop_time"][()], dtype=np.float64)
    return units, start, stop


# ---- estimators (notes/methods.md, section 3) ----

def f_nlog2n(n):
    n = np.asarray(n, dtype=np.float64)
    out = np.zeros_like(n)
    pos = n > 0
    out[pos] = n[pos] * np.log2(n[pos])
    return out


def summary(counts):
    """Samples, distinct words, sum n log2 n and the jackknife's sum n (f(n) - f(n-1))."""
    counts = np.asarray(counts, dtype=np.int64)
    f = f_nlog2n(counts)
    return [float(counts.sum()), float(counts.size), float(f.sum()), float((counts * (f - f_nlog2n(counts - 1))).sum())]


def plugin(s):
    n, _, sf, _ = s
    return 0.0 if n <= 0 else math.log2(n) - sf / n


def miller_madow(s):
    n, m, _, _ = s
    return 0.0 if n <= 0 else plugin(s) + (m - 1) / (2.0 * n * math.log(2.0))


def jackknife(s):
    n, _, sf, loo = s
    if n < 2:
        return plugin(s)
    sum_left_out = n * math.log2(n - 1) - (n * sf - loo) / (n - 1)
    return n * plugin(s) - (n - 1) * sum_left_out / n


ESTIMATORS = {"plug-in": plugin, "miller-madow": miller_madow, "jackknife": jackknife}
NAMES = list(ESTIMATORS)


def noise_summary(words):
    """The histograms of the word at each start position across the rows (trials) of `words`, their
    sums averaged over positions (the estimators are affine in them, notes/methods.md 3)."""
    trials, positions = words.shape
    s = np.sort(words, axis=0).T  # one row per start position
    new_run = np.ones(s.shape, dtype=bool)
    new_run[:, 1:] = s[:, 1:] != s[:, :-1]
    starts = np.flatnonzero(new_run.ravel())
    counts = np.diff(np.append(starts, new_run.size))
    n, m, sf, loo = summary(counts)
    return [float(trials), m / positions, sf / positions, loo / positions]


def total_summary(words):
    _, counts = np.unique(words, return_counts=True)
    return summary(counts)


# ---- fits ----

def distinct_values(x):
    x = sorted(x)
    return sum(1 for i in range(len(x)) if i == 0 or abs(x[i] - x[i - 1]) > 1e-12 * max(1.0, abs(x[i])))


def fit_inverse_size(x, y, w):
    """Weighted least squares H(N) = H_inf + a/N + b/N^2 in x = 1/N (fewer terms for fewer sizes)."""
    terms = min(distinct_values(x), 3)
    sw = np.sqrt(np.asarray(w, dtype=np.float64))
    design = sw[:, None] * np.vander(np.asarray(x, dtype=np.float64), terms, increasing=True)
    beta = np.linalg.lstsq(design, sw * np.asarray(y, dtype=np.float64), rcond=None)[0]
    return list(beta) + [0.0] * (3 - terms)


def fit_line(x, y):
    """Ordinary least squares y = a + b x; the intercept's standard error from the residuals (n >= 3)."""
    x = np.asarray(x, dtype=np.float64)
    y = np.asarray(y, dtype=np.float64)
    n = x.size
    mx, my = x.mean(), y.mean()
    sxx = float(((x - mx) ** 2).sum())
    sxy = float(((x - mx) * (y - my)).sum())
    if n == 1 or not sxx > 0:
        return float(my), 0.0, 0.0
    slope = sxy / sxx
    intercept = my - slope * mx
    se = 0.0
    if n >= 3:
        rss = float(((y - intercept - slope * x) ** 2).sum())
        se = math.sqrt(rss / (n - 2) * (1.0 / n + mx * mx / sxx))
    return float(intercept), float(slope), se


def sd(v):
    v = np.asarray(v, dtype=np.float64)
    return float(math.sqrt(((v - v.mean()) ** 2).sum() / (v.size - 1)))


# ---- the direct method for one unit at one bin width ----

def subset_index(level, block):
    return (1 << level) - 1 + block


def estimate(letters, bin_width, opt, seed):
    """letters: trials x bins spike counts. Returns the tool's per-record quantities."""
    trials, bins = letters.shape
    if trials < 8:
        raise SystemExit("the direct method needs at least 8 trials")
    if bins < opt.letters_max + 1:
        raise SystemExit(f"trials hold {bins} whole bins; words of up to {opt.letters_max} letters need at least {opt.letters_max + 1}")
    splits = nested_splits(trials, opt.splits, seed)
    # members[s][i]: the trials of subset i (0 full, 1-2 halves, 3-6 quarters, 7-14 eighths) of split s
    members, sizes = [], []
    for block_of in splits:
        rows, size = [], []
        for level in range(4):
            for b in range(1 << level):
                mask = (block_of >> (3 - level)) == b
                rows.append(mask)
                size.append(int(mask.sum()))
        members.append(rows)
        sizes.append(size)
    primary = opt.subset_estimator
    other = "jackknife" if primary == "plug-in" else "plug-in"
    alphabet = max(2, int(letters.max()) + 1 if letters.size else 2)
    if alphabet ** opt.letters_max > 2 ** 64:
        raise SystemExit("words do not fit in 64 bits")

    def extrapolate_all(h):
        x, y, w = [1.0 / sizes[0][0]], [h[0][0]], [1.0]
        for s in range(opt.splits):
            for level in (1, 2):
                for b in range(1 << level):
                    i = subset_index(level, b)
                    x.append(1.0 / sizes[s][i])
                    y.append(h[s][i])
                    w.append(1.0 / ((1 << level) * opt.splits))
        return fit_inverse_size(x, y, w)

    def extrapolate_half(h, s, half):
        x, y, w = [], [], []
        for level in (1, 2, 3):
            per_half = 1 << (level - 1)
            for b in range(half * per_half, (half + 1) * per_half):
                i = subset_index(level, b)
                x.append(1.0 / sizes[s][i])
                y.append(h[s][i])
                w.append(1.0 / per_half)
        return fit_inverse_size(x, y, w)[0]

    def level_means(h):
        xs, ys = [], []
        for level in range(4):
            x = y = n = 0.0
            for s in range(opt.splits):
                for b in range(1 << level):
                    i = subset_index(level, b)
                    x += 1.0 / sizes[s][i]
                    y += h[s][i]
                    n += 1
            xs.append(x / n)
            ys.append(y / n)
        return xs, ys

    by_letters, curves = [], []
    total_all, noise_all, total_other, noise_other = [], [], [], []
    total_half = [[] for _ in range(2 * opt.splits)]
    noise_half = [[] for _ in range(2 * opt.splits)]
    words = letters.astype(np.uint64)
    for L in range(1, opt.letters_max + 1):
        if L > 1:
            words = words[:, :-1] * np.uint64(alphabet) + letters[:, L - 1:].astype(np.uint64)
        if L < opt.letters_min:
            continue
        # entropies[kind][estimator][split][subset]
        entropies = {k: {e: [[0.0] * 15 for _ in range(opt.splits)] for e in NAMES} for k in ("total", "noise")}
        full = {"total": total_summary(words), "noise": noise_summary(words)}
        for s in range(opt.splits):
            for i in range(15):
                if i == 0:
                    summaries = full
                else:
                    sub = words[members[s][i]]
                    summaries = {"total": total_summary(sub), "noise": noise_summary(sub)}
                for kind, summ in summaries.items():
                    for e in NAMES:
                        entropies[kind][e][s][i] = ESTIMATORS[e](summ)
        extrapolated = {k: {e: extrapolate_all(entropies[k][e]) for e in NAMES} for k in ("total", "noise")}
        info_by = {e: extrapolated["total"][e][0] - extrapolated["noise"][e][0] for e in NAMES}
        total_bits = extrapolated["total"][primary][0]
        noise_bits = extrapolated["noise"][primary][0]
        info_bits = total_bits - noise_bits
        spread = abs(info_by[primary] - info_by[other])
        info_halves = []
        for s in range(opt.splits):
            for half in (0, 1):
                i = 2 * s + half
                total_half[i].append(extrapolate_half(entropies["total"][primary], s, half))
                noise_half[i].append(extrapolate_half(entropies["noise"][primary], s, half))
                info_halves.append(total_half[i][-1] - noise_half[i][-1])
        info_se = sd(info_halves) / math.sqrt(2.0)
        well = spread <= opt.bias_tolerance * max(abs(info_bits), 2 * info_se)
        by_letters.append({
            "letters": L,
            "samples": int(full["total"][0]),
            "distinct_words": int(full["total"][1]),
            "total_entropy_bits": total_bits,
            "noise_entropy_bits": noise_bits,
            "info_bits": info_bits,
            "total_entropy_plugin_bits": entropies["total"]["plug-in"][0][0],
            "noise_entropy_plugin_bits": entropies["noise"]["plug-in"][0][0],
            "total_entropy_miller_madow_bits": entropies["total"]["miller-madow"][0][0],
            "noise_entropy_miller_madow_bits": entropies["noise"]["miller-madow"][0][0],
            "info_bits_by_subset_estimator": info_by,
            "estimator_spread_bits": spread,
            "info_se_bits": info_se,
            "info_half_trials_bits": float(np.mean(info_halves)),
            "well_sampled": bool(well),
        })
        # The entropy_vs_inverse_trials curves: level means of the primary estimator and the fits.
        for kind in ("total", "noise"):
            xs, ys = level_means(entropies[kind][primary])
            curves.append(curve("entropy_vs_inverse_trials", kind, xs, ys, extrapolated[kind][primary], L))
        total_all.append(total_bits)
        noise_all.append(noise_bits)
        total_other.append(extrapolated["total"][other][0])
        noise_other.append(extrapolated["noise"][other][0])
        # The fit lies in the run of well-sampled lengths from the shortest on (or in --fit-letters).
        if opt.stop_early and (L >= opt.fit_letters[1] if opt.fit_letters else not well):
            break

    # The fit range: the upper half of the well-sampled lengths (notes/methods.md 4.3).
    if opt.fit_letters:
        fit = opt.fit_letters
    else:
        longest = 0
        for le in by_letters:
            if not le["well_sampled"]:
                break
            longest = le["letters"]
        if longest == 0:
            longest = opt.letters_min
        fit = (max(opt.letters_min, (longest + 1) // 2), longest)
    lo, hi = fit[0] - opt.letters_min, fit[1] - opt.letters_min

    def rates(total, noise):
        lengths = [fit[0] + i for i in range(hi - lo + 1)]
        x = [1.0 / L for L in lengths]
        t = total[lo:hi + 1]
        n = noise[lo:hi + 1]
        total_line = fit_line(x, [t[i] / (L * bin_width) for i, L in enumerate(lengths)])
        noise_line = fit_line(x, [n[i] / (L * bin_width) for i, L in enumerate(lengths)])
        info_line = fit_line(x, [(t[i] - n[i]) / (L * bin_width) for i, L in enumerate(lengths)])
        return total_line, noise_line, info_line

    total_line, noise_line, info_line = rates(total_all, noise_all)
    info_rate = info_line[0]
    half_rates = [rates(total_half[i], noise_half[i])[2][0] for i in range(2 * opt.splits)]
    parts = {
        "resampling": sd(half_rates) / math.sqrt(2.0),
        "data_size_extrapolation": abs(float(np.mean(half_rates)) - info_rate),
        "word_length_extrapolation": info_line[2],
        "bias_correction": abs(info_rate - rates(total_other, noise_other)[2][0]),
    }
    se = math.sqrt(sum(v * v for v in parts.values()))
    return {
        "by_letters": by_letters,
        "fit_letters": list(fit),
        "fit_letters_from": "option" if opt.fit_letters else "sampling rule",
        "total_entropy_rate_bits_per_s": total_line[0],
        "noise_entropy_rate_bits_per_s": noise_line[0],
        "info_rate_bits_per_s": info_rate,
        "info_rate_se_bits_per_s": se,
        "info_rate_se_parts_bits_per_s": parts,
        "info_rate_ci95_bits_per_s": [info_rate - 1.96 * se, info_rate + 1.96 * se],
    }, curves + rate_curves(by_letters, bin_width, fit, total_line, noise_line)


def curve(name, series, x, y, coefficients, letters=None):
    """One series under the keys of the tool's `curves` (unit and bin width added by the caller)."""
    return {"curve": name, "letters": letters, "series": series, "x": {"values": list(x)},
            "y": {"values": list(y)}, "fit": None if coefficients is None else {"coefficients": list(coefficients)}}


def rate_curves(by_letters, bin_width, fit, total_line, noise_line):
    """Entropy rates against 1/L, with the lines of the 1/L fit (entropy_rate_vs_inverse_letters)."""
    x = [1.0 / le["letters"] for le in by_letters]
    out = []
    for series, key, line in (("total", "total_entropy_bits", total_line), ("noise", "noise_entropy_bits", noise_line),
                              ("information", "info_bits", None)):
        y = [le[key] / (le["letters"] * bin_width) for le in by_letters]
        c = curve("entropy_rate_vs_inverse_letters", series, x, y, None if line is None else line[:2])
        c["in_fit"] = [fit[0] <= le["letters"] <= fit[1] for le in by_letters]
        out.append(c)
    return out


def int_range(text):
    a, _, b = text.partition("-")
    return int(a), int(b or a)


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("recording")
    p.add_argument("--bin-ms", required=True)
    p.add_argument("--letters", required=True, type=int_range)
    p.add_argument("--unit", action="append", default=[])
    p.add_argument("--first-units", type=int, default=0, help="only the first K units in natural order")
    p.add_argument("--spread-units", type=int, default=0,
                   help="only K units spread evenly over the natural order (1: the middle one; 2: the first and "
                        "the last), so that a subset has the whole recording's range of rates")
    p.add_argument("--splits", type=int, default=8)
    p.add_argument("--seed", type=int, default=1)
    p.add_argument("--subset-estimator", default="jackknife", choices=NAMES)
    p.add_argument("--bias-tolerance", type=float, default=0.03)
    p.add_argument("--fit-letters", type=int_range)
    p.add_argument("--binary", action="store_true")
    p.add_argument("--stop-early", action="store_true",
                   help="stop growing words at the first length after which no longer one can enter the fit (the "
                        "first length the sampling rule rejects, or the end of --fit-letters), as the tool does")
    p.add_argument("--json", required=True)
    opt = p.parse_args()
    opt.letters_min, opt.letters_max = opt.letters
    bin_ms = [float(b) for b in opt.bin_ms.split(",")]

    units, start, stop = read_recording(opt.recording)
    names = sorted(units, key=natural_key)
    if opt.unit:
        names = opt.unit
    if opt.first_units:
        names = names[:opt.first_units]
    if opt.spread_units:
        k, n = opt.spread_units, len(names)
        names = [names[(n - 1) // 2]] if k == 1 else [names[round(i * (n - 1) / (k - 1))] for i in range(min(k, n))]
    duration = float(np.min(stop - start))
    records, curves = [], []
    for name in names:
        spikes = units[name]
        aligned = [spikes[np.searchsorted(spikes, a, "left"):np.searchsorted(spikes, b, "left")] - a
                   for a, b in zip(start, stop)]
        for b_ms in bin_ms:
            dt = b_ms / 1000.0
            bins = int(math.floor(duration / dt + 1e-9)) if duration > 0 else 0
            letters = np.zeros((len(aligned), bins), dtype=np.int64)
            per_second = 1.0 / dt  # the tool multiplies by 1/dt; t / dt can round the other way
            for k, t in enumerate(aligned):
                position = t * per_second
                b = np.floor(position[position >= 0]).astype(np.int64)
                letters[k] = np.bincount(b[b < bins], minlength=bins)
            analysed = bins * dt
            spikes_in = int(sum(np.count_nonzero(t < analysed) for t in aligned))
            if opt.binary:
                letters = np.minimum(letters, 1)
            rate = spikes_in / (len(aligned) * analysed)
            seed = derive_seed(opt.seed, [text_hash(name), bits_of(b_ms)])
            est, unit_curves = estimate(letters, dt, opt, seed)
            info = est["info_rate_bits_per_s"]
            total = est["total_entropy_rate_bits_per_s"]
            record = {"unit": name, "bin_ms": b_ms, "trials": len(aligned), "trial_duration_s": duration,
                      "mean_rate_hz": rate}
            record.update(est)
            record["bits_per_spike"] = info / rate if spikes_in > 0 else None
            record["coding_efficiency"] = info / total if total > 0 else None
            records.append(record)
            for c in unit_curves:
                c.update({"unit": name, "bin_ms": b_ms})
                curves.append(c)
            print(f"{name} at {b_ms:g} ms done", file=sys.stderr, flush=True)
    parameters = {"bin_ms": bin_ms, "letters": [opt.letters_min, opt.letters_max], "binary": opt.binary,
                  "fit_letters": list(opt.fit_letters) if opt.fit_letters else None, "splits": opt.splits,
                  "subset_estimator": opt.subset_estimator, "bias_tolerance": opt.bias_tolerance, "seed": opt.seed,
                  "units": names}
    with open(opt.json, "w") as f:
        json.dump({"tool": "direct_baseline.py", "analysis": "direct", "parameters": parameters,
                   "records": records, "curves": curves}, f, indent=1)


if __name__ == "__main__":
    main()
