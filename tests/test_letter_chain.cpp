// The record-fitted letter model behind the direct method's calibration (letter_chain.hpp): its
// exact word entropies against a brute-force enumeration of whole trials, and its draws against
// its own exact entropies.
#include <rastrum/binning.hpp>
#include <rastrum/letter_chain.hpp>
#include <rastrum/sparse_letters.hpp>
#include <rastrum/random.hpp>

#include <gtest/gtest.h>

#include <array>
#include <cmath>
#include <map>
#include <vector>

using namespace rastrum;

namespace {

letter_matrix random_letters(std::size_t trials, std::size_t bins, letter largest, std::uint64_t seed) {
    letter_matrix m;
    m.trials = trials;
    m.bins = bins;
    m.letters.resize(trials * bins);
    random_stream rng(seed);
    for (std::size_t b = 0; b < bins; ++b) {
        for (std::size_t k = 0; k < trials; ++k) {
            // Mostly silent, and more likely to spike again after a spike: dependence to model.
            const bool before = b > 0 && m.at(b - 1, k) > 0;
            const double u = rng.uniform();
            letter x = 0;
            if (u < (before ? 0.45 : 0.2)) x = 1 + static_cast<letter>(rng.below(largest));
            m.letters[b * trials + k] = x;
            m.largest = std::max(m.largest, x);
            m.spikes += x;
        }
    }
    return m;
}

double entropy_of(const std::map<std::vector<letter>, double>& dist) {
    double h = 0;
    for (const auto& [w, p]: dist) {
        if (p > 0) h -= p * std::log2(p);
    }
    return h;
}

}  // namespace

// The model fitted with no pseudo-trials holds the empirical transition frequencies (computed here
// from the letter matrix by a separate count). Enumerating every whole trial (alphabet^bins of
// them) with its probability, the product of its transitions, and marginalising to the words at
// each start position gives the noise entropy (mean over positions) and the total entropy (of the
// mixture over positions) by definition (Strong et al. 1998, Phys. Rev. Lett. 80:197, for the two
// ensembles). Both must equal the model's chain-rule and prefix-growth computation.
TEST(letter_chain, word_entropies_equal_a_brute_force_enumeration_of_whole_trials) {
    const std::size_t trials = 40, bins = 7;
    const letter_matrix m = random_letters(trials, bins, 2, 11);
    const std::size_t A = m.largest + 1;
    ASSERT_EQ(A, 3u);
    // Empirical transitions: probs[t][state][a].
    std::vector<std::array<std::vector<double>, 2>> probs(bins);
    for (std::size_t t = 0; t < bins; ++t) {
        std::array<std::vector<double>, 2> c{std::vector<double>(A, 0), std::vector<double>(A, 0)};
        for (std::size_t k = 0; k < trials; ++k) {
            const int s = t > 0 && m.at(t - 1, k) > 0;
            c[s][m.at(t, k)] += 1;
        }
        for (auto& row: c) {
            double n = 0;
            for (double x: row) n += x;
            for (double& x: row) x = n > 0 ? x / n : 0;
        }
        probs[t] = c;
    }
    const letter_chain chain(sparse_of(m), 0.0);
    std::size_t sequences = 1;
    for (std::size_t t = 0; t < bins; ++t) sequences *= A;
    for (int L = 1; L <= 4; ++L) {
        const std::size_t positions = bins - static_cast<std::size_t>(L) + 1;
        std::vector<std::map<std::vector<letter>, double>> at(positions);
        for (std::size_t code = 0; code < sequences; ++code) {
            std::vector<letter> x(bins);
            std::size_t c = code;
            for (std::size_t t = 0; t < bins; ++t, c /= A) x[t] = static_cast<letter>(c % A);
            double p = 1;
            for (std::size_t t = 0; t < bins && p > 0; ++t) p *= probs[t][t > 0 && x[t - 1] > 0][x[t]];
            if (p == 0) continue;
            for (std::size_t t = 0; t < positions; ++t) at[t][std::vector<letter>(x.begin() + t, x.begin() + t + L)] += p;
        }
        double noise = 0;
        std::map<std::vector<letter>, double> pooled;
        for (const auto& d: at) {
            noise += entropy_of(d);
            for (const auto& [w, p]: d) pooled[w] += p / static_cast<double>(positions);
        }
        noise /= static_cast<double>(positions);
        const auto e = chain.entropies(L);
        EXPECT_NEAR(e.noise, noise, 1e-12) << "L = " << L;
        EXPECT_NEAR(e.total, entropy_of(pooled), 1e-12) << "L = " << L;
    }
}

// Data drawn from the model, fitted again, give back the model's entropies within the sampling
// error of many trials: the draw follows the model's transitions, state by state.
TEST(letter_chain, data_drawn_from_the_model_refit_to_its_entropies) {
    const letter_matrix m = random_letters(60, 50, 2, 5);
    const letter_chain chain(sparse_of(m), 1.0);
    sparse_letters drawn;
    chain.draw(20000, 99, drawn);
    EXPECT_EQ(drawn.trials, 20000u);
    EXPECT_EQ(drawn.bins, 50u);
    const letter_chain again(drawn, 0.0);
    for (int L: {1, 3, 5}) {
        const auto a = chain.entropies(L), b = again.entropies(L);
        EXPECT_NEAR(a.noise, b.noise, 0.01 * L) << "L = " << L;
        EXPECT_NEAR(a.total, b.total, 0.01 * L) << "L = " << L;
        EXPECT_GT(a.total, a.noise);
    }
    // The same seed draws the same data.
    sparse_letters twice;
    chain.draw(20000, 99, twice);
    EXPECT_EQ(twice.nonzero.size(), drawn.nonzero.size());
    EXPECT_EQ(twice.spikes, drawn.spikes);
}

// The draw, letter by letter: a model fitted with no pseudo-trials holds the empirical transition
// frequencies of its data, counted here from the letter matrix (state: whether the trial's previous
// bin held a spike; the first bin follows a silent one). Trials drawn from it must show, in every bin
// and state, each letter at that frequency within 5 binomial standard errors, with each bin's
// non-zero letters in ascending trial order (sparse_letters' contract). Spike-count letters up to 3
// and spike probabilities of 0.2-0.45 exercise both the skips over silent trials and the draws after
// a spike.
TEST(letter_chain, draws_follow_each_bins_transition_frequencies) {
    const letter_matrix m = random_letters(400, 6, 3, 17);
    const std::size_t A = 4;
    auto tally = [&](auto letter_of, std::size_t trials) {
        std::vector<double> n(m.bins * 2 * A, 0.0);
        for (std::size_t k = 0; k < trials; ++k) {
            int state = 0;
            for (std::size_t b = 0; b < m.bins; ++b) {
                const letter x = letter_of(b, k);
                n[(b * 2 + static_cast<std::size_t>(state)) * A + x] += 1;
                state = x > 0;
            }
        }
        return n;
    };
    const std::vector<double> expected = tally([&](std::size_t b, std::size_t k) { return m.at(b, k); }, m.trials);
    const letter_chain chain(sparse_of(m), 0.0);
    ASSERT_EQ(chain.alphabet(), A);
    sparse_letters drawn;
    const std::size_t trials = 200000;
    chain.draw(trials, 23, drawn);
    for (std::size_t b = 0; b < drawn.bins; ++b) {
        for (std::uint32_t i = drawn.bin_start[b] + 1; i < drawn.bin_start[b + 1]; ++i) {
            ASSERT_LT(drawn.nonzero[i - 1].trial, drawn.nonzero[i].trial) << "bin " << b;
        }
    }
    const std::vector<double> seen = tally([&](std::size_t b, std::size_t k) { return drawn.at(b, k); }, trials);
    for (std::size_t b = 0; b < m.bins; ++b) {
        for (std::size_t state = 0; state < 2; ++state) {
            const double* e = expected.data() + (b * 2 + state) * A;
            const double* g = seen.data() + (b * 2 + state) * A;
            double e_n = 0, g_n = 0;
            for (std::size_t a = 0; a < A; ++a) e_n += e[a], g_n += g[a];
            if (e_n == 0) continue;  // a state the data never show in this bin
            ASSERT_GT(g_n, 0);
            for (std::size_t a = 0; a < A; ++a) {
                const double p = e[a] / e_n;
                EXPECT_NEAR(g[a] / g_n, p, 5 * std::sqrt(p * (1 - p) / g_n) + 1e-12)
                    << "bin " << b << ", state " << state << ", letter " << a;
            }
        }
    }
}

// A recording without spikes fits a model that never spikes; the enumeration limit holds.
TEST(letter_chain, silence_and_the_enumeration_limit) {
    letter_matrix m;
    m.trials = 10;
    m.bins = 30;
    m.letters.assign(300, 0);
    const letter_chain chain(sparse_of(m));
    EXPECT_EQ(chain.alphabet(), 2u);
    EXPECT_EQ(chain.longest_enumerable(), 14);
    const auto e = chain.entropies(5);
    EXPECT_DOUBLE_EQ(e.total, 0.0);
    EXPECT_DOUBLE_EQ(e.noise, 0.0);
}

// The variance beyond the noise by hand: bins at 0 of 100 and 50 of 100 spikes have pooled mean
// 1/4, observed variance (1/16 + 1/16) / 2 and binomial part (3/16) / 100, so 0.060625 (method of
// moments, common practice). Bins that differ by less than their sampling noise give 0.
TEST(letter_chain, variance_beyond_noise_by_hand) {
    EXPECT_NEAR(letter_chain::variance_beyond_noise({0, 50}, {100, 100}), 0.060625, 1e-12);
    EXPECT_EQ(letter_chain::variance_beyond_noise({1, 3}, {10, 10}), 0.0);
    EXPECT_EQ(letter_chain::variance_beyond_noise({5}, {10}), 0.0);
}

// With the default fit, a model drawn from a known chain and fitted again keeps about the known
// chain's variance of spike probabilities across bins: the between-bin spread of the refitted
// model's probabilities matches the one the data show beyond their noise.
TEST(letter_chain, the_default_fit_keeps_the_spread_the_data_show) {
    const letter_matrix m = random_letters(300, 400, 1, 17);
    const letter_chain chain(sparse_of(m));
    sparse_letters drawn;
    chain.draw(300, 5, drawn);
    const letter_chain raw(drawn, 0.0), fitted(drawn);
    // The information in single letters (total minus noise entropy at L = 1) of the raw refit
    // exceeds the model's; the default refit's is near it.
    const double truth = chain.entropies(1).total - chain.entropies(1).noise;
    const double raw_info = raw.entropies(1).total - raw.entropies(1).noise;
    const double fitted_info = fitted.entropies(1).total - fitted.entropies(1).noise;
    EXPECT_GT(raw_info, truth);
    EXPECT_NEAR(fitted_info, truth, 0.25 * std::abs(raw_info - truth) + 1e-4);
}
