#include <rastrum/errors.hpp>
#include <rastrum/letter_chain.hpp>
#include <rastrum/random.hpp>

#include <algorithm>
#include <cmath>
#include <iterator>
#include <limits>

namespace rastrum {

namespace {

double entropy_bits(const double* p, std::size_t n) {
    double h = 0;
    for (std::size_t a = 0; a < n; ++a) {
        if (p[a] > 0) h -= p[a] * std::log2(p[a]);
    }
    return h;
}

/// One letter more on each word of `size` (a table of probabilities whose first `silent_block` words
/// end in a silent letter), in place, into the table's first size * alphabet entries.
void grow_words(std::size_t alphabet, double* words, std::size_t size, std::size_t silent_block, const double* silent,
                const double* spiking) {
    // Word w of the grown table is (newest letter a) * size + (older word); highest a first, so that
    // the older words are read before the block of a = 0 overwrites them in place.
    for (std::size_t a = alphabet; a-- > 0;) {
        double* out = words + a * size;
        const double after_silent = silent[a], after_spike = spiking[a];
        for (std::size_t w = 0; w < silent_block; ++w) out[w] = words[w] * after_silent;
        for (std::size_t w = silent_block; w < size; ++w) out[w] = words[w] * after_spike;
    }
}

/// The same, added into `sums` instead of stored.
void add_grown_words(std::size_t alphabet, const double* words, std::size_t size, std::size_t silent_block,
                     const double* silent, const double* spiking, double* sums) {
    for (std::size_t a = 0; a < alphabet; ++a) {
        double* out = sums + a * size;
        const double after_silent = silent[a], after_spike = spiking[a];
        for (std::size_t w = 0; w < silent_block; ++w) out[w] += words[w] * after_silent;
        for (std::size_t w = silent_block; w < size; ++w) out[w] += words[w] * after_spike;
    }
}

}  // namespace

letter_chain::letter_chain(const sparse_letters& letters, std::optional<double> pseudo_trials)
    : bins_(letters.bins), alphabet_(std::max<std::size_t>(2, std::size_t{letters.largest} + 1)) {
    if (letters.trials == 0 || letters.bins == 0) throw internal_error("letter_chain needs at least one trial and one bin");
    const std::size_t A = alphabet_;
    // counts[(t * 2 + s) * A + a]: trials with letter a in bin t whose previous bin was in state s.
    // The first bin of a trial counts as following a silent one, as it does when drawn.
    std::vector<double> counts(bins_ * 2 * A, 0.0);
    std::vector<std::uint8_t> spiked(letters.trials, 0);
    std::vector<std::uint32_t> spiked_before;  // the trials whose previous bin held a spike
    double spiking_trials = 0;
    for (std::size_t t = 0; t < bins_; ++t) {
        double* silent = counts.data() + (t * 2) * A;
        double* after_spike = silent + A;
        silent[0] = static_cast<double>(letters.trials) - spiking_trials;
        after_spike[0] = spiking_trials;
        for (std::uint32_t i = letters.bin_start[t]; i < letters.bin_start[t + 1]; ++i) {
            const auto& e = letters.nonzero[i];
            double* row = spiked[e.trial] ? after_spike : silent;
            row[0] -= 1;
            row[e.value] += 1;
        }
        for (const std::uint32_t k: spiked_before) spiked[k] = 0;
        spiked_before.clear();
        for (std::uint32_t i = letters.bin_start[t]; i < letters.bin_start[t + 1]; ++i) {
            spiked[letters.nonzero[i].trial] = 1;
            spiked_before.push_back(letters.nonzero[i].trial);
        }
        spiking_trials = static_cast<double>(spiked_before.size());
    }

    // Each state's letter distribution pooled over bins: where a bin has few trials in a state, its
    // distribution is drawn toward this one. A state never seen borrows the other's.
    std::vector<double> pooled(2 * A, 0.0);
    for (std::size_t t = 0; t < bins_; ++t) {
        for (std::size_t j = 0; j < 2 * A; ++j) pooled[j] += counts[t * 2 * A + j];
    }
    for (int s = 0; s < 2; ++s) {
        double n = 0;
        for (std::size_t a = 0; a < A; ++a) n += pooled[s * A + a];
        if (n > 0) {
            for (std::size_t a = 0; a < A; ++a) pooled[s * A + a] /= n;
        } else {
            std::fill(pooled.begin() + static_cast<std::ptrdiff_t>(s * A), pooled.begin() + static_cast<std::ptrdiff_t>((s + 1) * A), 0.0);
        }
    }
    for (int s = 0; s < 2; ++s) {
        double n = 0;
        for (std::size_t a = 0; a < A; ++a) n += pooled[s * A + a];
        if (n == 0) std::copy_n(pooled.begin() + static_cast<std::ptrdiff_t>((1 - s) * A), A, pooled.begin() + static_cast<std::ptrdiff_t>(s * A));
    }

    // Each state's variance of the spike probability across bins beyond the sampling noise.
    double between[2] = {0, 0};
    for (int s = 0; s < 2 && !pseudo_trials; ++s) {
        std::vector<double> spikes, trials;
        for (std::size_t t = 0; t < bins_; ++t) {
            const double* c = counts.data() + (t * 2 + static_cast<std::size_t>(s)) * A;
            double n = 0;
            for (std::size_t a = 0; a < A; ++a) n += c[a];
            if (n > 0) {
                spikes.push_back(n - c[0]);
                trials.push_back(n);
            }
        }
        between[s] = variance_beyond_noise(spikes, trials);
    }

    p_.assign(bins_ * 2 * A, 0.0);
    for (std::size_t t = 0; t < bins_; ++t) {
        for (int s = 0; s < 2; ++s) {
            const double* c = counts.data() + (t * 2 + static_cast<std::size_t>(s)) * A;
            const double* g = pooled.data() + static_cast<std::size_t>(s) * A;
            double n = 0;
            for (std::size_t a = 0; a < A; ++a) n += c[a];
            double* p = p_.data() + (t * 2 + static_cast<std::size_t>(s)) * A;
            if (pseudo_trials) {
                // A state no trial was in at this bin (and no pseudo-trials) takes the pooled distribution.
                for (std::size_t a = 0; a < A; ++a) {
                    p[a] = n + *pseudo_trials > 0 ? (c[a] + *pseudo_trials * g[a]) / (n + *pseudo_trials) : g[a];
                }
                continue;
            }
            // The bin's frequencies moved toward the pooled ones by the factor that leaves them the
            // variance across bins the data show beyond their noise (a convex mix: still a distribution).
            const double m = 1 - g[0];
            const double noise = n > 0 ? m * (1 - m) / n : 0;
            const double keep = n > 0 && between[s] > 0 ? std::sqrt(between[s] / (between[s] + noise)) : 0.0;
            for (std::size_t a = 0; a < A; ++a) p[a] = g[a] + keep * ((n > 0 ? c[a] / n : g[a]) - g[a]);
        }
    }

    spiking_.resize(bins_);
    double before = 0;  // a trial starts after a silent bin
    for (std::size_t t = 0; t < bins_; ++t) {
        spiking_[t] = (1 - before) * (1 - distribution(t, 0)[0]) + before * (1 - distribution(t, 1)[0]);
        before = spiking_[t];
    }

    // Letter t's marginal distribution and its entropy given letter t - 1: the next letter depends
    // on the past only through whether the previous bin spiked, so by the chain rule a word's
    // entropy at t is H(X_t) + sum over j of H(X_t+j | state of t+j-1) (Cover & Thomas 2006,
    // Theorem 2.5.1, and the Markov property; from memory).
    letter_entropy_.resize(bins_);
    conditional_entropy_.resize(bins_);
    std::vector<double> marginal(A);
    for (std::size_t t = 0; t < bins_; ++t) {
        const double prior = t == 0 ? 0.0 : spiking_[t - 1];
        for (std::size_t a = 0; a < A; ++a) marginal[a] = (1 - prior) * distribution(t, 0)[a] + prior * distribution(t, 1)[a];
        letter_entropy_[t] = entropy_bits(marginal.data(), A);
        conditional_entropy_[t] = (1 - prior) * entropy_bits(distribution(t, 0), A) + prior * entropy_bits(distribution(t, 1), A);
    }
}

double letter_chain::variance_beyond_noise(const std::vector<double>& spikes, const std::vector<double>& trials) {
    double k = 0, n = 0;
    for (std::size_t t = 0; t < spikes.size(); ++t) {
        k += spikes[t];
        n += trials[t];
    }
    if (spikes.size() < 2 || n <= 0) return 0;
    const double m = k / n;
    if (m <= 0 || m >= 1) return 0;
    double observed = 0, binomial = 0;
    for (std::size_t t = 0; t < spikes.size(); ++t) {
        const double f = spikes[t] / trials[t];
        observed += (f - m) * (f - m);
        binomial += m * (1 - m) / trials[t];
    }
    return std::max(0.0, (observed - binomial) / static_cast<double>(spikes.size()));
}

int letter_chain::longest_enumerable() const {
    int L = 0;
    std::size_t words = 1;
    while (static_cast<std::size_t>(L) < bins_ && words * alphabet_ <= max_enumerated_words) {
        words *= alphabet_;
        ++L;
    }
    return L;
}

letter_chain::word_entropies letter_chain::entropies(int letters_per_word) const {
    if (letters_per_word < 1 || letters_per_word > longest_enumerable()) {
        throw internal_error("letter_chain::entropies: word length out of range");
    }
    const std::size_t A = alphabet_;
    const auto L = static_cast<std::size_t>(letters_per_word);
    const std::size_t positions = bins_ - L + 1;
    word_entropies out;
    double window = 0;  // sum of conditional_entropy_[t + 1 .. t + L - 1]
    for (std::size_t j = 1; j < L; ++j) window += conditional_entropy_[j];
    for (std::size_t t = 0; t < positions; ++t) {
        if (t > 0 && L > 1) window += conditional_entropy_[t + L - 1] - conditional_entropy_[t];
        out.noise += letter_entropy_[t] + window;
    }
    out.noise /= static_cast<double>(positions);

    // The pooled words: each position's word distribution, grown letter by letter, summed over
    // positions. A word's newest letter is its most significant digit, so that the words whose last
    // letter is silent are the first block of the table and the others the rest: growing a word by a
    // letter scales each block by one number (contiguous loops the compiler vectorises), where the
    // newest letter as the least significant digit needed a branch per word (this enumeration was a
    // third of a calibrated run's instructions at 1 and 2 ms bins). The last letter is added straight
    // into the pooled sums, not stored first.
    std::size_t words = 1;
    for (std::size_t j = 0; j < L; ++j) words *= A;
    std::vector<double> pooled(words, 0.0), one(words / A);
    for (std::size_t t = 0; t < positions; ++t) {
        const double before = t == 0 ? 0.0 : spiking_[t - 1];
        double* first = L == 1 ? pooled.data() : one.data();
        for (std::size_t a = 0; a < A; ++a) {
            const double p = (1 - before) * distribution(t, 0)[a] + before * distribution(t, 1)[a];
            first[a] = L == 1 ? first[a] + p : p;
        }
        if (L == 1) continue;
        std::size_t size = A, silent_block = 1;  // words of j + 1 letters; those ending silent
        for (std::size_t j = 1; j + 1 < L; ++j) {
            grow_words(A, one.data(), size, silent_block, distribution(t + j, 0), distribution(t + j, 1));
            silent_block = size;
            size *= A;
        }
        add_grown_words(A, one.data(), size, silent_block, distribution(t + L - 1, 0), distribution(t + L - 1, 1),
                        pooled.data());
    }
    for (double& x: pooled) x /= static_cast<double>(positions);
    out.total = entropy_bits(pooled.data(), words);
    return out;
}

void letter_chain::draw(std::size_t trials, std::uint64_t seed, sparse_letters& out) const {
    random_stream rng(seed);
    out.trials = trials;
    out.bins = bins_;
    out.largest = 0;
    out.spikes = 0;
    out.bin_start.assign(1, 0);
    out.nonzero.clear();
    // Most trials follow a silent bin and most of those stay silent: rather than a draw per trial and
    // bin (a tenth of a calibrated run at 0.5 ms bins), the silent-state trials that spike are found
    // by geometric skips (the number of trials passed over before the next one with a non-zero letter,
    // floor(E / -ln(1 - q)) for E exponential with mean 1; Devroye 1986, Non-Uniform Random Variate
    // Generation, ch. 2, from memory): together the same as one Bernoulli(q) draw per silent trial.
    // A skip that lands on a trial which spiked in the bin before is passed over: that trial's letter
    // is drawn from the other distribution, and whether the skip picked it is independent of it.
    std::vector<std::uint8_t> spiked(trials, 0);
    std::vector<std::uint32_t> before, after;  // the trials that spiked in the previous bin, and in this one
    std::vector<sparse_letters::entry> quiet, active;  // this bin's non-zero letters by state
    // Inversion of u (uniform on [0, the mass of p[from..]) over the letters from `from` up.
    auto invert = [this](const double* p, letter from, double u) {
        letter a = from;
        while (u >= p[a] && a + 1 < alphabet_) {
            u -= p[a];
            ++a;
        }
        return a;
    };
    for (std::size_t t = 0; t < bins_; ++t) {
        const double* silent = distribution(t, 0);
        const double* after_spike = distribution(t, 1);
        quiet.clear();
        active.clear();
        const double q = 1 - silent[0];
        if (q > 0) {
            const double rate = -std::log1p(-q);
            for (double k = std::floor(rng.exponential() / rate); k < static_cast<double>(trials);
                 k += 1 + std::floor(rng.exponential() / rate)) {
                const auto trial = static_cast<std::uint32_t>(k);
                if (spiked[trial]) continue;
                // The letter given that it is not 0: inversion over silent[1..].
                quiet.push_back({trial, invert(silent, 1, rng.uniform() * q)});
            }
        }
        for (const std::uint32_t trial: before) {
            const letter a = invert(after_spike, 0, rng.uniform());
            if (a > 0) active.push_back({trial, a});
        }
        // Both lists ascend by trial; merged, the bin's letters are in trial order.
        for (const std::uint32_t trial: before) spiked[trial] = 0;
        after.clear();
        const std::size_t first = out.nonzero.size();
        std::merge(quiet.begin(), quiet.end(), active.begin(), active.end(), std::back_inserter(out.nonzero),
                   [](const sparse_letters::entry& x, const sparse_letters::entry& y) { return x.trial < y.trial; });
        for (std::size_t i = first; i < out.nonzero.size(); ++i) {
            const sparse_letters::entry& e = out.nonzero[i];
            out.largest = std::max(out.largest, e.value);
            out.spikes += e.value;
            after.push_back(e.trial);
            spiked[e.trial] = 1;
        }
        before.swap(after);
        out.bin_start.push_back(static_cast<std::uint32_t>(out.nonzero.size()));
    }
}

}  // namespace rastrum
