#!/usr/bin/python3
"""Stimulus information the way a lab would script it in NumPy: the baseline of issue 6.

Computes what `rastrum stiminfo` computes for one window, for single units and populations, from the
recording itself (read with h5py), and writes JSON with the tool's field names:

    stiminfo_baseline.py RECORDING.h5 --window-ms 0:500 --code count|word [--bin-ms 10] [--binary]
        [--unit ID]... [--population ID,ID,...]... [--null-shuffles 200] [--bootstrap 200]
        [--splits 8] [--seed 1] [--json OUT]

Written as a competent lab member would, not as a tuned program: spike times are cut into trials
with np.searchsorted and boolean masks, letters counted with np.add.at, word codes built from the
letters with Python integers, and every histogram is an np.unique(..., return_counts=True) over the trials concerned.
Everything above one histogram is a Python loop: over units (and populations), over conditions,
over the estimators, over the 1,000 label shuffles, the bootstrap resamples, the random splits of the
quadratic extrapolation, the draws of the trial-fraction curve, over left-out trials for the
jackknife (one plug-in estimate per left-out trial, the textbook definition), over the grid of beta
for Panzeri-Treves, over the quadrature nodes and count groups for NSB (a scalar integrand in Python,
as one would hand to scipy.integrate.quad; vectorising the 15 nodes of a tiny histogram with NumPy
was measured slower), and over joint responses (dicts) for the independent-units information.

To give the tool's numbers exactly, the randomness is the tool's own (toolkit/src/random.cpp):
SplitMix64 mixing, FNV-1a text hashes, derive_seed, xoshiro256** (Blackman & Vigna 2021, ACM TOMS
47:36), Lemire's unbiased integers (Lemire 2019, ACM TOMACS 29:3) and Fisher-Yates shuffles, written
here from the published algorithms with Python integers masked to 64 bits; and every task draws from
the stream the tool derives for it (seed tags as in stiminfo_analysis.cpp, stimulus_information.cpp
and population.cpp). The estimators follow notes/methods.md section 8 and notes/methods-nsb.md; NSB
uses the same integration scheme (coarse scan, golden-section peaks, Gauss-Kronrod 15 with the
embedded Gauss 7, the same breakpoints and tolerances), with scipy's digamma and a trigamma of its
own (recurrence and asymptotic series).

Only the single-window analysis with the count, word and latency codes is covered (no --slide-ms,
--stimuli or trial selection); units are read in natural order of their ids, labels in order of first
appearance, as the tool does.
"""
import argparse
import itertools
import json
import math
import re
import sys

import h5py
import numpy as np
from scipy.special import digamma

from tool_random import RandomStream, derive_seed, shuffle, text_hash

ESTIMATORS = ["plug-in", "miller-madow", "jackknife", "panzeri-treves", "quadratic-extrapolation", "nsb"]
LN2 = math.log(2.0)


# Randomness as toolkit/src/random.cpp: tool_random.py, shared with the direct-method baseline.


# ---------------------------------------------------------------- reading and coding

def natural_key(text):
    return [int(p) if p.isdigit() else p for p in re.split(r"(\d+)", text)]


def read_recording(path):
    with h5py.File(path, "r") as f:
        units = {name: np.asarray(f["units"][name]["spike_times"][()], dtype=np.float64) for name in f["units"]}
        start = np.asarray(f["trials/start_time"][()], dtype=np.float64)
        stop = np.asarray(f["trials/stop_time"][()], dtype=np.float64)
        raw = f["trials/stimulus"][()]
    labels = [x.decode("utf-8") if isinstance(x, bytes) else str(x) for x in raw]
    ids = sorted(units, key=natural_key)
    return {"units": units, "ids": ids, "start": start, "stop": stop, "labels": labels}


def trial_spikes(spikes, start, stop):
    """Spike times of each trial, relative to its start: spikes in [start_k, stop_k)."""
    first = np.searchsorted(spikes, start, side="left")
    last = np.searchsorted(spikes, stop, side="left")
    return [spikes[a:b] - s for a, b, s in zip(first, last, start)]


def whole_bins(duration, width):
    return int(math.floor(duration / width + 1e-9)) if duration > 0 else 0


def code_responses(trials, a, b, code, bin_width, binary):
    """(codes, spikes per trial, alphabet) as notes/methods.md section 8.1 defines them."""
    in_window = [t[(t >= a) & (t < b)] - a for t in trials]
    spikes = np.array([len(t) for t in in_window], dtype=np.int64)
    if code == "count":
        return [int(c) for c in spikes], spikes, float(spikes.max() + 1)
    bins = whole_bins(b - a, bin_width)
    if code == "latency":
        codes = [bins if len(t) == 0 else min(bins, int(t[0] / bin_width)) for t in in_window]
        return codes, spikes, float(bins + 1)
    letters = np.zeros((len(trials), bins), dtype=np.int64)
    for k, t in enumerate(in_window):
        index = (t * (1.0 / bin_width)).astype(np.int64)
        index = index[index < bins]
        np.add.at(letters[k], index, 1)
    if binary:
        letters = np.minimum(letters, 1)
    base = max(2, int(letters.max()) + 1)
    if base ** bins > 2 ** 64:
        sys.exit(f"words of {bins} letters over an alphabet of {base} do not fit in 64 bits")
    codes = []
    for row in letters:
        c = 0
        for x in row:
            c = c * base + int(x)
        codes.append(c)
    return codes, spikes, float(base) ** bins


# ---------------------------------------------------------------- entropies of one histogram

def plugin_entropy(counts):
    n = counts.sum()
    if n == 0:
        return 0.0
    return math.log2(n) - float(np.sum(counts * np.log2(counts))) / n


def miller_madow_entropy(counts):
    n = counts.sum()
    if n == 0:
        return 0.0
    return plugin_entropy(counts) + (len(counts) - 1) / (2.0 * n * LN2)


def jackknife_entropy(counts):
    """N H - (N - 1) <H_(-j)>: each sample left out in turn (samples of one bin give the same value)."""
    n = int(counts.sum())
    if n < 2:
        return plugin_entropy(counts)
    left_out = []
    for i in range(len(counts)):
        c = counts.copy()
        c[i] -= 1
        left_out.extend([plugin_entropy(c[c > 0])] * int(counts[i]))
    return n * plugin_entropy(counts) - (n - 1) * float(np.mean(left_out))


def counts_of(codes):
    return np.unique(np.asarray(codes, dtype=object if max(codes, default=0) >= 2 ** 63 else np.int64),
                     return_counts=True)[1].astype(np.float64)


def relevant_responses(counts, alphabet):
    """Observed responses plus the unseen ones a maximum-evidence symmetric Dirichlet expects."""
    seen = [float(c) for c in counts if c > 0]
    observed = float(len(seen))
    k = max(alphabet, observed)
    n = sum(seen)
    if n == 0 or k <= observed:
        return observed
    best_beta, best = 1e-6, -math.inf
    log_beta = -14.0
    while log_beta <= 7:
        beta = math.exp(log_beta)
        e = math.lgamma(k * beta) - math.lgamma(n + k * beta)
        for c in seen:
            e += math.lgamma(c + beta) - math.lgamma(beta)
        if e > best:
            best, best_beta = e, beta
        log_beta += 0.05
    total = n + k * best_beta
    relevant = sum(-math.expm1(n * math.log1p(-(c + best_beta) / total)) for c in seen)
    relevant += (k - observed) * -math.expm1(n * math.log1p(-best_beta / total))
    return min(k, max(observed, relevant))


# ---------------------------------------------------------------- NSB (notes/methods-nsb.md)

KRONROD_X = [0.0, 2.07784955007898468e-01, 4.05845151377397167e-01, 5.86087235467691130e-01,
             7.41531185599394440e-01, 8.64864423359769073e-01, 9.49107912342758525e-01, 9.91455371120812639e-01]
KRONROD_W = [2.09482141084727828e-01, 2.04432940075298892e-01, 1.90350578064785410e-01, 1.69004726639267903e-01,
             1.40653259715525919e-01, 1.04790010322250184e-01, 6.30920926299785533e-02, 2.29353220105292250e-02]
GAUSS_W = [4.17959183673469388e-01, 3.81830050505118945e-01, 2.79705391489276668e-01, 1.29484966168869693e-01]


def stirling_remainder(x):
    r = 1 / x
    r2 = r * r
    return r * (1.0 / 12 + r2 * (-1.0 / 360 + r2 * (1.0 / 1260 + r2 * (-1.0 / 1680 + r2 * (1.0 / 1188 + r2 * (-691.0 / 360360))))))


def log_rising_excess(z, m):
    """lnGamma(z + m) - lnGamma(z) - m ln z."""
    if m == 0:
        return 0.0
    if z < 10:
        return math.lgamma(z + m) - math.lgamma(z) - m * math.log(z)
    return (z + m - 0.5) * math.log1p(m / z) - m + stirling_remainder(z + m) - stirling_remainder(z)


def trigamma(x):
    """psi1(x) for x > 0: the recurrence psi1(x) = psi1(x + 1) + 1/x^2 up to x >= 20, then the asymptotic
    series (Abramowitz & Stegun 6.4.12; written here because scipy.special.polygamma costs 20 us a call)."""
    s = 0.0
    while x < 20:
        s += 1 / (x * x)
        x += 1
    r = 1 / x
    r2 = r * r
    return s + r + r2 * (0.5 + r * (1.0 / 6 + r2 * (-1.0 / 30 + r2 * (1.0 / 42 + r2 * (-1.0 / 30 + r2 * (5.0 / 66 + r2 * (-691.0 / 2730)))))))


def chi(a):
    """a (a + 1) psi1(a + 1) - a, by its asymptotic series from a = 100 on."""
    if a < 100:
        return a * ((a + 1) * trigamma(a + 1) - 1)
    r = 1 / a
    return 0.5 + r * (-1.0 / 3 + r * (1.0 / 6 + r * (-1.0 / 30 + r * (-1.0 / 30 + r * (1.0 / 42 + r * (1.0 / 42 + r * (-1.0 / 30 + r * (-1.0 / 30))))))))


def prior_slope(k, beta):
    """xi'(beta) = K psi1(K beta + 1) - psi1(beta + 1), by its series for beta >= 1e3."""
    if beta < 1e3:
        return k * trigamma(k * beta + 1) - trigamma(beta + 1)
    r, q = 1 / beta, 1 / k
    q2 = q * q
    q4 = q2 * q2
    r2 = r * r
    return r2 * ((1 - q) / 2 + r * (-(1 - q2) / 6 + r2 * ((1 - q4) / 30 + r2 * (-(1 - q4 * q2) / 42 + r2 * (1 - q4 * q4) / 30))))


def prior_mean(k, beta):
    return float(digamma(k * beta + 1) - digamma(beta + 1))


def prior_gap(k, beta):
    if beta < 1e3:
        return math.log(k) - prior_mean(k, beta)
    r, q = 1 / beta, 1 / k
    q2 = q * q
    return r * ((1 - q) / 2 + r * (-(1 - q2) / 12 + r * r * ((1 - q2 * q2) / 120 - r * r * (1 - q2 * q2 * q2) / 252)))


class NsbPosterior:
    """The posterior over x = ln beta for a histogram grouped by count value."""

    def __init__(self, counts, k):
        values, mult = np.unique(np.asarray(counts, dtype=np.float64), return_counts=True)
        self.seen = float(len(counts))
        self.n = float(np.sum(counts))
        self.k = k
        self.groups = ([(0.0, k - self.seen)] if k > self.seen else []) + [(float(v), float(m)) for v, m in zip(values, mult)]
        self.log_peak = 0.0
        self.reference = 0.0

    def log_evidence(self, beta):
        s = -self.n * math.log(self.k) - log_rising_excess(self.k * beta, self.n)
        for v, m in self.groups:
            if v > 0:
                s += m * log_rising_excess(beta, v)
        return s

    def log_density(self, x):
        beta = math.exp(x)
        return self.log_evidence(beta) + math.log(prior_slope(self.k, beta)) + x

    def moments(self, beta):
        """Posterior mean and variance of H (nats) at fixed beta."""
        total = self.n + self.k * beta
        psi = [float(digamma(v + beta + 1)) for v, m in self.groups]
        dbar = 0.0
        for (v, m), p in zip(self.groups, psi):
            dbar += m * ((v + beta) / total) * p
        spread, chi_sum = 0.0, -chi(total)
        for (v, m), p in zip(self.groups, psi):
            a = v + beta
            d = p - dbar
            spread += m * a * d * d
            chi_sum += m * chi(a)
        return float(digamma(total + 1)) - dbar, max(0.0, (spread + chi_sum) / (total * (total + 1)))

    def weighted(self, w, beta):
        if not w > 1e-300:
            return [0.0, 0.0, 0.0, 0.0]
        mean, var = self.moments(beta)
        d = mean - self.reference
        return [w, w * d, w * var, w * d * d]

    def at(self, x):
        return self.weighted(math.exp(self.log_density(x) - self.log_peak), math.exp(x))

    def per_xi(self, beta):
        return self.weighted(math.exp(self.log_evidence(beta) - self.log_peak), beta)


def gauss_kronrod(p, a, b):
    """Gauss-Kronrod 15 over [a, b] and its difference from the embedded Gauss 7, for the four integrands."""
    half, mid = 0.5 * (b - a), 0.5 * (a + b)
    k, g = [0.0] * 4, [0.0] * 4
    for i, t in enumerate(KRONROD_X):
        f = p.at(mid + half * t)
        if i > 0:
            f = [u + v for u, v in zip(f, p.at(mid - half * t))]
        for c in range(4):
            k[c] += KRONROD_W[i] * f[c]
            if i % 2 == 0:
                g[c] += GAUSS_W[i // 2] * f[c]
    return [a, b, [half * v for v in k], [half * (u - v) for u, v in zip(k, g)]]


def nsb_integrate(p, breaks):
    parts = [gauss_kronrod(p, breaks[i], breaks[i + 1]) for i in range(len(breaks) - 1)]
    while True:
        total = [0.0] * 4
        for part in parts:
            for c in range(4):
                total[c] += part[2][c]
        shift = total[1] / total[0]
        variance = (total[2] + total[3]) / total[0] - shift * shift
        mean = p.reference + shift
        second = (total[2] + total[3]) / total[0]
        mean_target = 1e-9 * max(abs(mean), math.sqrt(max(variance, 0.0)))
        variance_target = 1e-7 * max(variance, 1e-30)
        mean_error = variance_error = worst_score = 0.0
        worst = None
        for index, part in enumerate(parts):
            d = part[3]
            e0 = abs(d[1] - shift * d[0]) / total[0]
            e1 = abs(d[2] + d[3] - second * d[0] - 2 * shift * (d[1] - shift * d[0])) / total[0]
            mean_error += e0
            variance_error += e1
            s = max(e0 / mean_target, e1 / variance_target)
            if s > worst_score and part[1] - part[0] > 1e-7:
                worst_score, worst = s, index
        if (mean_error <= mean_target and variance_error <= variance_target) or worst is None or len(parts) >= 4000:
            return total
        a, b = parts[worst][0], parts[worst][1]
        mid = 0.5 * (a + b)
        parts[worst] = gauss_kronrod(p, a, mid)
        parts.append(gauss_kronrod(p, mid, b))


def golden_peak(p, a, b):
    ratio = 0.5 * (math.sqrt(5.0) - 1)
    c, d = b - ratio * (b - a), a + ratio * (b - a)
    fc, fd = p.log_density(c), p.log_density(d)
    i = 0
    while i < 80 and b - a > 1e-12 * max(1.0, abs(a)):
        if fc > fd:
            b, d, fd = d, c, fc
            c = b - ratio * (b - a)
            fc = p.log_density(c)
        else:
            a, c, fc = c, d, fd
            d = a + ratio * (b - a)
            fd = p.log_density(d)
        i += 1
    return 0.5 * (a + b)


def peak_width(p, x):
    def width_from(step):
        curvature = (p.log_density(x + step) - 2 * p.log_density(x) + p.log_density(x - step)) / (step * step)
        return min(1.0, max(1e-10, 1 / math.sqrt(-curvature))) if curvature < -1e-6 else 1.0
    first = width_from(1e-3)
    return width_from(min(0.1 * first, 1e-3))


def nsb_entropy(counts, k):
    """NSB posterior mean entropy in bits over an alphabet of k symbols."""
    if k == 1:
        return 0.0
    p = NsbPosterior(counts, k)
    x_low = math.log(1e-12 / k)
    x_high = math.log(1e6) + 2 * math.log1p(p.n)
    steps = int(math.ceil((x_high - x_low) / 0.5))
    xs = [x_low + (x_high - x_low) * i / steps for i in range(steps + 1)]
    dens = [p.log_density(x) for x in xs]
    top = max(dens)
    peaks = []
    for i in range(steps + 1):
        here = dens[i]
        if (i == 0 or here >= dens[i - 1]) and (i == steps or here >= dens[i + 1]) and here >= top - 40:
            peaks.append(golden_peak(p, xs[max(i - 1, 0)], xs[min(i + 1, steps)]))
    peak_dens = [p.log_density(x) for x in peaks]
    best = int(np.argmax(peak_dens))
    p.log_peak = peak_dens[best]
    p.reference = p.moments(math.exp(peaks[best]))[0]
    covered = [i for i in range(steps + 1) if dens[i] >= p.log_peak - 60]
    step = xs[1] - xs[0]
    for x in peaks:
        below = int(max(0.0, math.floor((x - xs[0]) / step)))
        covered += [min(below, steps), min(below + 1, steps)]
    first, last = max(min(covered) - 1, 0), min(max(covered) + 1, steps)
    breaks = xs[first:last + 1]
    for x in peaks:
        width = peak_width(p, x)
        for m in [0.0, 0.5, 1.0, 2.0, 3.0, 4.0, 6.0, 8.0, 12.0, 16.0]:
            for s in [-1.0, 1.0]:
                b = x + s * m * width
                if xs[first] < b < xs[last]:
                    breaks.append(b)
    breaks.sort()
    kept = [breaks[0]]
    for b in breaks[1:]:
        if not b - kept[-1] < 1e-13:
            kept.append(b)
    total = nsb_integrate(p, kept)
    if first == 0:
        f = p.per_xi(math.exp(x_low))
        xi = prior_mean(k, math.exp(x_low))
        total = [t + xi * v for t, v in zip(total, f)]
    if last == steps:
        f = p.per_xi(math.exp(x_high))
        gap = prior_gap(k, math.exp(x_high))
        total = [t + gap * v for t, v in zip(total, f)]
    return (p.reference + total[1] / total[0]) / LN2


# ---------------------------------------------------------------- information (notes/methods.md section 8)

def entropy_by(estimator, codes, alphabet):
    c = counts_of(codes)
    if estimator == "plug-in":
        return plugin_entropy(c)
    if estimator == "miller-madow":
        return miller_madow_entropy(c)
    if estimator == "nsb":
        return nsb_entropy(c, alphabet)
    raise ValueError(estimator)


def information_with(estimator, cond, resp, conditions, alphabet):
    """H(R) - sum_s p(s) H(R|s), each entropy by `estimator`."""
    n = len(resp)
    if n == 0:
        return 0.0
    cond = np.asarray(cond)
    resp_array = np.asarray(resp, dtype=object)
    noise = 0.0
    for s in range(conditions):
        r_s = resp_array[cond == s]
        if len(r_s):
            noise += len(r_s) / n * entropy_by(estimator, list(r_s), alphabet)
    return entropy_by(estimator, resp, alphabet) - noise


def plugin_information(cond, resp, conditions):
    return information_with("plug-in", cond, resp, conditions, 0)


def jackknife_information(cond, resp, conditions):
    """N I - (N - 1) <I_(-j)>, leaving out each trial in turn."""
    n = len(resp)
    if n < 2:
        return plugin_information(cond, resp, conditions)
    left_out = []
    for j in range(n):
        left_out.append(plugin_information(cond[:j] + cond[j + 1:], resp[:j] + resp[j + 1:], conditions))
    return n * plugin_information(cond, resp, conditions) - (n - 1) * float(np.mean(left_out))


def panzeri_treves_information(cond, resp, conditions, alphabet):
    n = len(resp)
    cond_array = np.asarray(cond)
    resp_array = np.asarray(resp, dtype=object)
    per = [relevant_responses(counts_of(list(resp_array[cond_array == s])), alphabet)
           for s in range(conditions) if np.any(cond_array == s)]
    bias = (sum(r - 1 for r in per) - (relevant_responses(counts_of(resp), alphabet) - 1)) / (2 * n * LN2)
    return plugin_information(cond, resp, conditions) - bias


def fit_at_infinity(x, y, w):
    """Weighted least squares y = v_inf + a x + b x^2 (fewer terms with fewer distinct x)."""
    xs = sorted(x)
    distinct = sum(1 for i in range(len(xs)) if i == 0 or abs(xs[i] - xs[i - 1]) > 1e-12 * max(1.0, abs(xs[i])))
    degree = min(distinct, 3) - 1
    return float(np.polyfit(np.asarray(x), np.asarray(y), degree, w=np.sqrt(np.asarray(w)))[-1])


def extrapolate_over_trials(cond, conditions, value, splits, seed):
    """value(use) on all trials and on stratified random halves and quarters, fitted in 1/N."""
    members = [[k for k in range(len(cond)) if cond[k] == s] for s in range(conditions)]
    x, y, w = [1 / len(cond)], [value(None)], [1.0]
    for split in range(splits):
        rng = RandomStream(derive_seed(seed, [0x9E0, split]))
        quarter = [[], [], [], []]
        for m in members:
            m = list(m)
            shuffle(m, rng)
            for i, k in enumerate(m):
                quarter[i * 4 // len(m)].append(k)
        for level in (1, 2):
            blocks = 1 << level
            for b in range(blocks):
                use = []
                for q in range(b * 4 // blocks, (b + 1) * 4 // blocks):
                    use += quarter[q]
                if not use:
                    continue
                use.sort()
                x.append(1 / len(use))
                y.append(value(use))
                w.append(1.0 / (blocks * splits))
    return fit_at_infinity(x, y, w)


def subset(values, use):
    return values if use is None else [values[k] for k in use]


def stimulus_information(estimator, cond, resp, conditions, alphabet, splits, seed):
    if estimator in ("plug-in", "miller-madow", "nsb"):
        return information_with(estimator, cond, resp, conditions, alphabet)
    if estimator == "jackknife":
        return jackknife_information(cond, resp, conditions)
    if estimator == "panzeri-treves":
        return panzeri_treves_information(cond, resp, conditions, alphabet)
    if estimator == "quadratic-extrapolation":
        return extrapolate_over_trials(
            cond, conditions, lambda use: plugin_information(subset(cond, use), subset(resp, use), conditions), splits, seed)
    raise ValueError(estimator)


def response_entropy(estimator, resp, alphabet, splits, seed):
    """H(R) of the pooled responses by `estimator`."""
    c = counts_of(resp)
    if estimator in ("plug-in", "miller-madow", "nsb"):
        return entropy_by(estimator, resp, alphabet)
    if estimator == "jackknife":
        return jackknife_entropy(c)
    if estimator == "panzeri-treves":
        return plugin_entropy(c) + (relevant_responses(c, alphabet) - 1) / (2 * len(resp) * LN2)
    # quadratic extrapolation: plug-in on all responses and on halves and quarters of one running shuffle
    n = len(resp)
    x, y, w = [1 / n], [plugin_entropy(c)], [1.0]
    order = list(resp)
    for split in range(splits):
        shuffle(order, RandomStream(derive_seed(seed, [0xE47, split])))
        for level in (1, 2):
            blocks = 1 << level
            for b in range(blocks):
                lo, hi = len(order) * b // blocks, len(order) * (b + 1) // blocks
                if hi <= lo:
                    continue
                x.append(1 / (hi - lo))
                y.append(plugin_entropy(counts_of(order[lo:hi])))
                w.append(1.0 / (blocks * splits))
    return fit_at_infinity(x, y, w)


# ---------------------------------------------------------------- populations (notes/methods.md section 8.3)

def joint_codes(units):
    """Mixed radix, first unit most significant."""
    codes = [0] * len(units[0]["resp"])
    alphabet = 1.0
    for u in units:
        radix = int(u["alphabet"])
        codes = [c * radix + r for c, r in zip(codes, u["resp"])]
        alphabet *= u["alphabet"]
    return codes, alphabet


def shuffled_within_conditions(units, cond, conditions, seed):
    out = []
    for index, u in enumerate(units):
        rng = RandomStream(derive_seed(seed, [0x5A11, index]))
        resp = list(u["resp"])
        for s in range(conditions):
            m = [k for k in range(len(cond)) if cond[k] == s]
            values = [u["resp"][k] for k in m]
            shuffle(values, rng)
            for k, v in zip(m, values):
                resp[k] = v
        out.append({"resp": resp, "alphabet": u["alphabet"]})
    return out


def independent_information(units, cond, conditions, use):
    """Plug-in information of the product of the units' empirical conditional distributions."""
    trials = list(range(len(cond))) if use is None else use
    n = len(trials)
    p_s = [0.0] * conditions
    for k in trials:
        p_s[cond[k]] += 1 / n
    conditional = []
    for s in range(conditions):
        per_unit = []
        for u in units:
            r = np.array([u["resp"][k] for k in trials if cond[k] == s], dtype=object)
            values, counts = np.unique(r, return_counts=True) if len(r) else ([], [])
            per_unit.append({v: c / len(r) for v, c in zip(values, counts)})
        table = {}
        if p_s[s] > 0:
            for combination in itertools.product(*[list(d.items()) for d in per_unit]):
                table[tuple(v for v, _ in combination)] = math.prod(q for _, q in combination)
        conditional.append(table)
    pooled = {}
    for s in range(conditions):
        for r, p in conditional[s].items():
            pooled[r] = pooled.get(r, 0.0) + p_s[s] * p
    info = 0.0
    for s in range(conditions):
        for r, p in conditional[s].items():
            if p > 0:
                info += p_s[s] * p * math.log2(p / pooled[r])
    return info


def population_information(units, cond, conditions, estimator, splits, seed, shuffles=5):
    joint, alphabet = joint_codes(units)
    v = {"joint": stimulus_information(estimator, cond, joint, conditions, alphabet, splits, seed)}
    sum_single = independent_noise = 0.0
    for u in units:
        info = stimulus_information(estimator, cond, u["resp"], conditions, u["alphabet"], splits, seed)
        sum_single += info
        independent_noise += response_entropy(estimator, u["resp"], u["alphabet"], splits, seed) - info
    v["sum_single"] = sum_single
    v["synergy"] = v["joint"] - sum_single
    v["independent"] = extrapolate_over_trials(
        cond, conditions, lambda use: independent_information(units, cond, conditions, use), splits, seed)
    shuffled_noise = 0.0
    for i in range(max(1, shuffles)):
        sh, sh_alphabet = joint_codes(shuffled_within_conditions(units, cond, conditions, derive_seed(seed, [0x5B, i])))
        h = response_entropy(estimator, sh, sh_alphabet, splits, seed) - \
            stimulus_information(estimator, cond, sh, conditions, sh_alphabet, splits, seed)
        shuffled_noise += h / max(1, shuffles)
    v["shuffle_corrected"] = v["joint"] + shuffled_noise - independent_noise
    return v


# ---------------------------------------------------------------- one record

def resample_within_conditions(cond, responses, conditions, rng):
    """Trials drawn with replacement within each condition (the same draw for every response list)."""
    new_cond, new_resp = [], [[] for _ in responses]
    for s in range(conditions):
        m = [k for k in range(len(cond)) if cond[k] == s]
        for _ in range(len(m)):
            k = m[rng.below(len(m))]
            new_cond.append(cond[k])
            for i, r in enumerate(responses):
                new_resp[i].append(r[k])
    return new_cond, new_resp


def sample_sd(values):
    return float(np.std(values, ddof=1))


def quantile(values, q):
    """Hyndman & Fan definition 7, as numpy's default 'linear' method."""
    return float(np.quantile(values, q))


def envelope_estimators(asked, centre):
    return [centre] + [e for e in asked if e != "plug-in" and e != centre]


def analyse(name, members, cond, conditions, spikes_total, args, seed):
    """One record: a unit, or a population whose members are `members`."""
    splits = args.splits
    seed = derive_seed(seed, [text_hash(name), 0])
    if len(members) == 1:
        resp, alphabet = members[0]["resp"], members[0]["alphabet"]
    else:
        resp, alphabet = joint_codes(members)
    n = len(resp)
    per_condition = [cond.count(s) for s in range(conditions)]
    record = {"unit": name, "trials": n, "response_alphabet": alphabet, "distinct_responses": len(set(resp)),
              "mean_spikes": spikes_total / n}
    if len(members) > 1:
        est = args.population_estimator
        values = population_information(members, cond, conditions, est, splits, seed)
        low, high = dict(values), dict(values)
        if args.bootstrap >= 2:
            for e in envelope_estimators(args.estimators, est):
                if e == est:
                    continue
                other = population_information(members, cond, conditions, e, splits, seed)
                for f in values:
                    low[f], high[f] = min(low[f], other[f]), max(high[f], other[f])
            rng = RandomStream(derive_seed(seed, [0xB0B0]))
            boot = []
            for _ in range(args.bootstrap):
                new_cond, new_resp = resample_within_conditions(cond, [m["resp"] for m in members], conditions, rng)
                resampled = [{"resp": r, "alphabet": m["alphabet"]} for r, m in zip(new_resp, members)]
                # Each resample's extrapolations use the first 2 splits only, and its shuffle-corrected
                # value 1 within-condition shuffle (notes/methods.md, 8.3).
                boot.append(population_information(resampled, new_cond, conditions, est, min(splits, 2), seed,
                                                   shuffles=1))
            for f in values:
                sd = sample_sd([b[f] for b in boot])
                low[f] -= 1.96 * sd
                high[f] += 1.96 * sd
        record["population"] = {"estimator": est, **{f + "_bits": values[f] for f in values},
                                "ci95_bits": None if args.bootstrap < 2 else {f: [low[f], high[f]] for f in values}}
    info = {e: stimulus_information(e, cond, resp, conditions, alphabet, splits, seed) for e in args.estimators}
    record["info_bits"] = info
    record["bits_per_spike"] = {e: (v / record["mean_spikes"] if record["mean_spikes"] > 0 else None) for e, v in info.items()}

    # trial-fraction curve: each estimator on 1/4, 1/2, 3/4 of the trials within condition, 4 draws each
    rng = RandomStream(derive_seed(seed, [0xF4AC]))
    curve = {e: [] for e in args.estimators}
    members_of = [[k for k in range(n) if cond[k] == s] for s in range(conditions)]
    for f in (0.25, 0.5, 0.75):
        sums = {e: 0.0 for e in args.estimators}
        for _ in range(4):
            part_cond, part_resp = [], []
            for m in members_of:
                order = list(m)
                shuffle(order, rng)
                keep = max(min(2, len(m)), int(math.floor(f * len(m) + 0.5)))
                part_cond += [cond[k] for k in order[:keep]]
                part_resp += [resp[k] for k in order[:keep]]
            for e in args.estimators:
                sums[e] += stimulus_information(e, part_cond, part_resp, conditions, alphabet, splits, seed)
        for e in args.estimators:
            curve[e].append(sums[e] / 4)
    for e in args.estimators:
        curve[e].append(info[e])
    record["info_vs_trial_fraction"] = {"fractions": [0.25, 0.5, 0.75, 1.0], **curve}

    # label-shuffle null of the plug-in value
    plugin = plugin_information(cond, resp, conditions)
    rng = RandomStream(derive_seed(seed, [0x5B0FF]))
    shuffled = list(cond)
    null = []
    for _ in range(args.null_shuffles):
        shuffle(shuffled, rng)
        null.append(plugin_information(shuffled, resp, conditions))
    if args.null_shuffles > 0:
        at_least = sum(1 for v in null if v >= plugin - 1e-12)
        record["null"] = {"shuffles": args.null_shuffles, "mean_bits": float(np.mean(null)),
                          "p_value": (1 + at_least) / (1 + args.null_shuffles),
                          "band95_bits": [quantile(null, 0.025), quantile(null, 0.975)]}
        record["info_null_subtracted_bits"] = plugin - record["null"]["mean_bits"]
    else:
        record["null"] = record["info_null_subtracted_bits"] = None

    # interval: envelope of the bias-corrected estimates, widened by 1.96 bootstrap sd of the interval estimator
    centre = stimulus_information(args.interval_estimator, cond, resp, conditions, alphabet, splits, seed)
    low = high = centre
    for e in envelope_estimators(args.estimators, args.interval_estimator):
        v = centre if e == args.interval_estimator else info[e]
        low, high = min(low, v), max(high, v)
    if args.null_shuffles > 0:
        low = min(low, record["info_null_subtracted_bits"])
        high = max(high, record["info_null_subtracted_bits"])
    record["info_ci95_bits"] = None
    if args.bootstrap > 1:
        rng = RandomStream(derive_seed(seed, [0xB007]))
        values = []
        for _ in range(args.bootstrap):
            new_cond, (new_resp,) = resample_within_conditions(cond, [resp], conditions, rng)
            values.append(stimulus_information(args.interval_estimator, new_cond, new_resp, conditions, alphabet, splits, seed))
        sd = sample_sd(values)
        record["info_ci95_bits"] = [low - 1.96 * sd, high + 1.96 * sd]
    record["few_trials"] = min(per_condition) < record["distinct_responses"]
    return record


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("recording")
    parser.add_argument("--window-ms", required=True)
    parser.add_argument("--code", required=True, choices=["count", "word", "latency"])
    parser.add_argument("--bin-ms", type=float, default=10)
    parser.add_argument("--binary", action="store_true")
    parser.add_argument("--unit", action="append", default=[])
    parser.add_argument("--population", action="append", default=[])
    parser.add_argument("--population-estimator", default="quadratic-extrapolation", choices=ESTIMATORS)
    parser.add_argument("--estimators", default="all")
    parser.add_argument("--interval-estimator", default="jackknife", choices=ESTIMATORS)
    parser.add_argument("--null-shuffles", type=int, default=200)
    parser.add_argument("--bootstrap", type=int, default=200)
    parser.add_argument("--splits", type=int, default=8)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--json", default="-")
    args = parser.parse_args()
    args.estimators = ESTIMATORS if args.estimators == "all" else args.estimators.split(",")
    a_ms, b_ms = (float(v) for v in args.window_ms.split(":"))
    a, b = a_ms / 1000, b_ms / 1000

    rec = read_recording(args.recording)
    labels = []
    for label in rec["labels"]:
        if label not in labels:
            labels.append(label)
    kept = [label for label in labels if rec["labels"].count(label) >= 2]
    trials = [k for k, label in enumerate(rec["labels"]) if label in kept]
    cond = [kept.index(rec["labels"][k]) for k in trials]
    conditions = len(kept)
    start, stop = rec["start"][trials], rec["stop"][trials]
    if b > float(np.min(stop - start)) + 1e-12:
        sys.exit("the window is longer than the shortest trial")

    populations = [p.split(",") for p in args.population]
    singles = list(args.unit) if (args.unit or populations) else list(rec["ids"])
    for p in populations:
        singles += [u for u in p if u not in singles]
    coded = {}
    for unit in singles:
        resp, spikes, alphabet = code_responses(trial_spikes(rec["units"][unit], start, stop), a, b,
                                                args.code, args.bin_ms / 1000, args.binary)
        coded[unit] = {"resp": resp, "alphabet": alphabet, "spikes": float(spikes.sum())}
    records = []
    for group in [[u] for u in singles] + populations:
        members = [coded[u] for u in group]
        record = analyse("+".join(group), members, cond, conditions, sum(m["spikes"] for m in members), args, args.seed)
        record["units"] = group
        record["window_ms"] = [a_ms, b_ms]
        records.append(record)
        print(f"baseline: {record['unit']} done", file=sys.stderr, flush=True)
    p_s = [cond.count(s) / len(cond) for s in range(conditions)]
    result = {"analysis": "stiminfo", "baseline": "tests/bench/baseline/stiminfo_baseline.py",
              "stimulus_entropy_bits": -sum(p * math.log2(p) for p in p_s), "records": records}
    text = json.dumps(result, indent=1)
    if args.json == "-":
        print(text)
    else:
        with open(args.json, "w") as f:
            f.write(text + "\n")


if __name__ == "__main__":
    main()
