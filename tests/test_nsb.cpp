// NSB entropy estimator: fixed-beta pieces against Monte Carlo and closed forms, the beta integral
// against a brute-force integration, and the estimator against properties stated in
// Nemenman, Shafee & Bialek 2002 (NIPS 14, "Entropy and inference, revisited").
#include "nsb_moments.hpp"

#include <rastrum/entropy.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/nsb.hpp>
#include <rastrum/random.hpp>

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <limits>

using namespace rastrum;
using namespace rastrum::nsb_detail;

namespace {
const double ln2 = std::log(2.0);
/// Entropy (nats) of one draw p ~ Dirichlet(alpha), by normalising independent gammas
/// (e.g. Devroye 1986, Non-Uniform Random Variate Generation, ch. XI; from memory).
double dirichlet_entropy_draw(const std::vector<double>& alpha, random_stream& rng) {
    std::vector<double> l(alpha.size());
    for (std::size_t i = 0; i < alpha.size(); ++i) l[i] = log_gamma_variate(alpha[i], rng);
    const double top = *std::max_element(l.begin(), l.end());
    double z = 0;
    for (double v: l) z += std::exp(v - top);
    const double log_z = top + std::log(z);
    double h = 0;
    for (double v: l) h -= std::exp(v - log_z) * (v - log_z);
    return h;
}

std::vector<count> uniform_sample(std::size_t k, std::size_t n, random_stream& rng) {
    std::vector<count> h(k, 0);
    for (std::size_t i = 0; i < n; ++i) ++h[rng.below(k)];
    return h;
}

/// Brute-force NSB: Simpson's rule on a fixed fine grid in ln beta over a range far wider than the
/// estimator's, no peak search, no adaptivity, no tail terms. Uses the fixed-beta pieces, which
/// are checked on their own below.
nsb_estimate reference_nsb(const std::vector<count>& counts, double k, double step = 1e-3) {
    const auto g = group_counts(counts, k);
    const double lo = std::log(1e-14 / k), hi = std::log(1e14) + 2 * std::log1p(g.samples);
    auto n = static_cast<std::size_t>(std::ceil((hi - lo) / step));
    n += n % 2;
    const double h = (hi - lo) / static_cast<double>(n);
    std::vector<double> log_w(n + 1);
    for (std::size_t i = 0; i <= n; ++i) {
        const double x = lo + h * static_cast<double>(i), beta = std::exp(x);
        log_w[i] = log_evidence(g, beta) + std::log(prior_mean_entropy_slope(k, beta)) + x;
    }
    const auto peak = std::max_element(log_w.begin(), log_w.end());
    const double top = *peak;
    // Second moments about the entropy at the peak, so a tiny spread is not lost to cancellation.
    const double shift = dirichlet_entropy_moments(g, std::exp(lo + h * static_cast<double>(peak - log_w.begin()))).mean;
    double z = 0, s1 = 0, s2 = 0;
    for (std::size_t i = 0; i <= n; ++i) {
        const double simpson = (i == 0 || i == n) ? 1 : (i % 2 ? 4 : 2);
        const double w = simpson * std::exp(log_w[i] - top);
        if (w < 1e-300) continue;
        const auto m = dirichlet_entropy_moments(g, std::exp(lo + h * static_cast<double>(i)));
        z += w;
        s1 += w * m.mean;
        s2 += w * (m.variance + (m.mean - shift) * (m.mean - shift));
    }
    const double mean = s1 / z;
    return {mean / ln2, std::sqrt(s2 / z - (mean - shift) * (mean - shift)) / ln2};
}
}  // namespace

// --- Fixed beta -----------------------------------------------------------------------------------

// The closed-form posterior mean and variance of H under Dirichlet(n + beta) (mean: Wolpert & Wolf
// 1995, Phys. Rev. E 52:6841, from memory; variance derived in notes/methods-nsb.md) against
// 20000 Monte Carlo draws, within 4 standard errors. The standard error of a sample variance is
// sqrt((m4 - s^4)/M) (large-sample result, from memory). The tables cover N = 0, N = 1, zero
// counts among the entries, tiny and large beta, many unseen symbols, and counts above 100 with a
// flat posterior (where the variance is all in the series branch of the code).
TEST(nsb_moments, match_monte_carlo_dirichlet_draws) {
    struct table {
        std::vector<count> counts;
        double k, beta;
    };
    const std::vector<table> tables = {
        {{5, 3, 1}, 5, 0.5},        {{1}, 4, 0.02},          {{}, 3, 1.0},
        {{20, 1, 1, 1}, 10, 0.05},  {{2, 2, 7, 0, 1, 4}, 6, 10}, {{40, 12}, 2, 0.3},
        {{3, 1, 1}, 50, 0.001},     {{200, 200}, 2, 0.5},
    };
    random_stream rng(20020101);
    const int draws = 20000;
    for (const auto& t: tables) {
        std::vector<double> alpha(static_cast<std::size_t>(t.k), t.beta);
        for (std::size_t i = 0; i < t.counts.size(); ++i) alpha[i] += static_cast<double>(t.counts[i]);
        std::vector<double> h(draws);
        double mean = 0;
        for (auto& v: h) mean += (v = dirichlet_entropy_draw(alpha, rng)) / draws;
        double m2 = 0, m4 = 0, raw2 = 0, raw4 = 0;
        for (double v: h) {
            const double d = v - mean;
            m2 += d * d / draws, m4 += d * d * d * d / draws;
            raw2 += v * v / draws, raw4 += v * v * v * v / draws;
        }
        const auto exact = dirichlet_entropy_moments(t.counts, t.k, t.beta);
        SCOPED_TRACE("K=" + std::to_string(t.k) + " beta=" + std::to_string(t.beta) +
                     " N=" + std::to_string(t.counts.size()));
        EXPECT_NEAR(exact.mean, mean, 4 * std::sqrt(m2 / draws));
        EXPECT_NEAR(exact.variance, m2, 4 * std::sqrt((m4 - m2 * m2) / draws));
        EXPECT_NEAR(exact.variance + exact.mean * exact.mean, raw2, 4 * std::sqrt((raw4 - raw2 * raw2) / draws));
    }
}

// With no data the posterior mean at fixed beta is the prior mean xi(beta) = psi(K beta + 1) -
// psi(beta + 1) (Nemenman, Shafee & Bialek 2002, Sec. 3; from memory). Monte Carlo above reaches
// only small alphabets; this carries the grouped formula to K = 2^40 (all symbols one zero group).
TEST(nsb_moments, prior_mean_is_xi) {
    for (double k: {2.0, 1000.0, std::ldexp(1.0, 40)}) {
        for (double beta: {1e-9, 1e-3, 1.0, 30.0, 1e4}) {
            EXPECT_NEAR(dirichlet_entropy_moments({}, k, beta).mean, prior_mean_entropy(k, beta), 1e-12 * std::log(k));
        }
    }
}

// xi'(beta) against a central difference of xi (through ln K - xi, which keeps its digits at large
// beta), across the switch to the asymptotic series at beta = 1e3; the limits xi -> 0 as beta -> 0
// and xi -> ln K as beta -> infinity (Nemenman, Shafee & Bialek 2002, Sec. 3; from memory).
TEST(nsb_moments, xi_slope_is_derivative_of_xi) {
    for (double k: {2.0, 1000.0, std::ldexp(1.0, 40)}) {
        for (double beta: {1e-4, 0.01, 1.0, 50.0, 999.0, 1001.0, 1e5, 1e9}) {
            const double h = 1e-4 * beta;
            const double numeric = -(prior_mean_entropy_gap(k, beta + h) - prior_mean_entropy_gap(k, beta - h)) / (2 * h);
            EXPECT_NEAR(prior_mean_entropy_slope(k, beta), numeric, 1e-6 * numeric) << "K=" << k << " beta=" << beta;
        }
        EXPECT_LT(prior_mean_entropy(k, 1e-15), 1e-14 * k);
        EXPECT_NEAR(prior_mean_entropy_gap(k, 1e12), 0.5e-12 * (1 - 1 / k), 1e-24);  // (1 - 1/K)/(2 beta) + O(beta^-2)
    }
}

// The series and direct branches meet: each exact function is continuous, so the code's value just
// below and just above a switch point must agree (analytic property). The {a, a} table over K = 2
// has no spread term, so its variance is all from the trigamma terms whose series starts at 100.
TEST(nsb_moments, continuous_across_series_switches) {
    for (double k: {2.0, 7.0, 1e6}) {
        const double lo = 1e3 * (1 - 1e-12), hi = 1e3 * (1 + 1e-12);
        EXPECT_NEAR(prior_mean_entropy_gap(k, lo), prior_mean_entropy_gap(k, hi), 1e-9 * prior_mean_entropy_gap(k, hi));
        EXPECT_NEAR(prior_mean_entropy_slope(k, lo), prior_mean_entropy_slope(k, hi), 1e-9 * prior_mean_entropy_slope(k, hi));
    }
    const double below = dirichlet_entropy_moments({60, 60}, 2, 40 - 1e-9).variance;
    const double above = dirichlet_entropy_moments({60, 60}, 2, 40 + 1e-9).variance;
    EXPECT_NEAR(below, above, 1e-9 * above);
    const double below_a = dirichlet_entropy_moments({99}, 1e6, 1 - 1e-9).variance;
    const double above_a = dirichlet_entropy_moments({99}, 1e6, 1 + 1e-9).variance;
    EXPECT_NEAR(below_a, above_a, 1e-8 * above_a);
}

// The evidence of an ordered sequence is the product of the Polya-urn predictive probabilities
// (n_i + beta) / (t + K beta) (Dirichlet-multinomial; e.g. Johnson, Kotz & Balakrishnan 1997,
// Discrete Multivariate Distributions, ch. 40; from memory), including beta far beyond where a
// plain difference of lgamma values keeps any digit, and K = 2^40.
TEST(nsb_moments, evidence_matches_sequential_predictive_product) {
    random_stream rng(6841);
    for (double k: {3.0, 50.0, std::ldexp(1.0, 40)}) {
        for (double beta: {1e-8, 0.1, 2.0, 1e6, 1e15}) {
            std::vector<count> counts(std::min<std::size_t>(static_cast<std::size_t>(k), 12), 0);
            double log_p = 0, t = 0;
            for (int s = 0; s < 200; ++s) {
                const auto i = static_cast<std::size_t>(rng.below(counts.size() > 4 && s % 3 ? 4 : counts.size()));
                log_p += std::log((static_cast<double>(counts[i]) + beta) / (t + k * beta));
                ++counts[i];
                t += 1;
            }
            EXPECT_NEAR(log_evidence(counts, k, beta), log_p, 1e-9 * std::abs(log_p)) << "K=" << k << " beta=" << beta;
        }
    }
    // One sample: the first draw of the urn has probability 1/K whatever beta.
    for (double beta: {1e-12, 1.0, 1e20}) EXPECT_NEAR(log_evidence({1}, 1000, beta), -std::log(1000.0), 1e-12);
}

// --- The integral over beta ------------------------------------------------------------------------

namespace {
/// n draws of floor(M^U) - 1, U uniform: p_j proportional to ln((j + 1)/j), a heavy (1/j) tail.
std::vector<count> log_uniform_sample(std::size_t m, std::size_t n, random_stream& rng) {
    std::vector<count> h(m, 0);
    const double log_m = std::log(static_cast<double>(m));
    for (std::size_t i = 0; i < n; ++i) ++h[static_cast<std::size_t>(std::floor(std::exp(rng.uniform() * log_m))) - 1];
    return h;
}
}  // namespace

// The adaptive integration against brute force on a fixed grid (step 1e-3 in ln beta, at least 7
// points per posterior sd here): the accuracy target of 1e-6 bits, relative. Cases: N = 0, N = 1,
// one symbol seen many times, a narrow posterior (K = 2, N = 2000), a posterior pressed against
// beta -> infinity (flat counts, N = 1e4 K), a sparse sample from K = 2^40, and 1e5 samples over
// K = 2^40 whose posterior (sd 0.008 in ln beta) falls between the estimator's coarse grid points.
TEST(nsb_integral, matches_brute_force_integration) {
    random_stream rng(2002);
    std::vector<count> skewed(2, 0);
    for (int i = 0; i < 2000; ++i) ++skewed[rng.uniform() < 0.2 ? 0 : 1];
    const auto zipf = log_uniform_sample(3000, 400, rng);
    random_stream narrow_rng(5);
    const auto narrow = log_uniform_sample(200000, 100000, narrow_rng);
    struct table {
        std::vector<count> counts;
        double k;
        const char* what;
    };
    const std::vector<table> tables = {
        {{}, 8, "no samples"},
        {{1}, 16, "one sample"},
        {{300}, 50, "one symbol seen 300 times"},
        {skewed, 2, "binary, N = 2000"},
        {std::vector<count>(10, 10000), 10, "flat counts, N = 1e5"},
        {uniform_sample(100, 50, rng), 100, "uniform, N = K/2"},
        {zipf, std::ldexp(1.0, 40), "400 samples, K = 2^40"},
        {narrow, std::ldexp(1.0, 40), "1e5 samples, K = 2^40"},
    };
    for (const auto& t: tables) {
        const auto got = nsb_entropy(t.counts, t.k);
        const auto want = reference_nsb(t.counts, t.k);
        EXPECT_NEAR(got.entropy_bits, want.entropy_bits, 1e-6 * want.entropy_bits) << t.what;
        EXPECT_NEAR(got.sd_bits, want.sd_bits, 1e-6 * want.sd_bits) << t.what;
    }
}

// --- Properties of the estimator ----------------------------------------------------------------

// A uniform distribution over K symbols: with N = 10 K samples the estimate is within 1% of
// log2 K for every sample and within 2 posterior sd of it for at least 90% of 20 samples
// (consistency and honest error bars, Nemenman, Shafee & Bialek 2002, Sec. 4 and Fig. 2; from
// memory). Not for all: log2 K is the largest entropy possible, so the posterior lies below it
// and the truth sits near 1.3 sd above the mean on average.
TEST(nsb_estimator, converges_on_uniform_distribution) {
    for (std::size_t k: {100, 1000}) {
        random_stream rng(derive_seed(1995, {k}));
        const double truth = std::log2(static_cast<double>(k));
        int covered = 0;
        const int seeds = 20;
        for (int s = 0; s < seeds; ++s) {
            const auto e = nsb_entropy(uniform_sample(k, 10 * k, rng), static_cast<double>(k));
            EXPECT_NEAR(e.entropy_bits, truth, 0.01 * truth) << "K=" << k;
            covered += std::abs(e.entropy_bits - truth) <= 2 * e.sd_bits;
        }
        EXPECT_GE(covered, 18) << "K=" << k;
    }
}

// At N = K/2 from a uniform distribution the posterior spread is an honest error bar: the true
// log2 K lies within 2 sd for at least 90% of 50 samples (Nemenman, Shafee & Bialek 2002, Sec. 4 and
// Fig. 2: the estimate is reliable from N ~ sqrt(K) coincidences on; from memory). On the same
// samples the plug-in estimate falls well below the truth (its bias is negative, of order
// (K - 1)/(2N ln 2) when N >> K, larger here: Miller 1955; Paninski 2003, Neural Comput. 15:1191;
// from memory) and NSB's mean error is less than a quarter of plug-in's.
TEST(nsb_estimator, honest_error_bars_and_small_bias_at_half_k_samples) {
    for (std::size_t k: {100, 1000}) {
        random_stream rng(derive_seed(2002, {k}));
        const double truth = std::log2(static_cast<double>(k));
        int covered = 0;
        double nsb_bias = 0, plugin_bias = 0;
        const int seeds = 50;
        for (int s = 0; s < seeds; ++s) {
            const auto counts = uniform_sample(k, k / 2, rng);
            const auto e = nsb_entropy(counts, static_cast<double>(k));
            covered += std::abs(e.entropy_bits - truth) <= 2 * e.sd_bits;
            nsb_bias += (e.entropy_bits - truth) / seeds;
            plugin_bias += (plugin_entropy(summarize_counts(counts)) - truth) / seeds;
        }
        EXPECT_GE(covered, 45) << "K=" << k;
        EXPECT_LT(plugin_bias, -0.3) << "K=" << k;
        EXPECT_LT(std::abs(nsb_bias), 0.25 * std::abs(plugin_bias)) << "K=" << k;
    }
}

// --- Edge cases ------------------------------------------------------------------------------------

// One symbol: the entropy is 0 under any prior (definition).
TEST(nsb_estimator, single_symbol_alphabet_has_zero_entropy) {
    for (const std::vector<count>& c: {std::vector<count>{}, std::vector<count>{7}, std::vector<count>{0, 3}}) {
        const auto e = nsb_entropy(c, 1);
        EXPECT_EQ(e.entropy_bits, 0.0);
        EXPECT_EQ(e.sd_bits, 0.0);
    }
}

// With no samples the NSB prior makes xi uniform on [0, ln K] (Nemenman, Shafee & Bialek 2002, the
// defining property of the prior), so the prior mean is log2(K)/2 and the prior variance is at
// least that of a uniform variable, (log2 K)^2/12, plus the mean fixed-beta variance.
TEST(nsb_estimator, no_samples_gives_the_flat_prior_in_xi) {
    for (double k: {2.0, 8.0, 1000.0, std::ldexp(1.0, 40)}) {
        const auto e = nsb_entropy({}, k);
        EXPECT_NEAR(e.entropy_bits, 0.5 * std::log2(k), 1e-7 * std::log2(k)) << "K=" << k;
        EXPECT_GT(e.sd_bits, std::log2(k) / std::sqrt(12.0)) << "K=" << k;
        EXPECT_EQ(nsb_entropy(std::vector<count>{0, 0, 0}, k).entropy_bits, e.entropy_bits);
    }
}

// The alphabet must hold every symbol seen (usage rule of the API).
TEST(nsb_estimator, invalid_alphabet_sizes_throw) {
    EXPECT_THROW(nsb_entropy({1, 2}, 0), usage_error);
    EXPECT_THROW(nsb_entropy({}, 0.5), usage_error);
    EXPECT_THROW(nsb_entropy({1, 2, 3}, 2), usage_error);
    EXPECT_THROW(nsb_entropy({1}, std::numeric_limits<double>::quiet_NaN()), usage_error);
    EXPECT_THROW(nsb_entropy({1}, std::numeric_limits<double>::infinity()), usage_error);
    EXPECT_THROW(nsb_entropy({1}, 1e101), usage_error);  // documented cap: K beta must stay finite
    EXPECT_NO_THROW(nsb_entropy({1, 0, 0, 2}, 2));  // zeros beyond K are symbols never seen
}
