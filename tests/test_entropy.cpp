// Entropy estimators on count histograms, checked against closed forms and Monte Carlo.
#include <rastrum/entropy.hpp>
#include <rastrum/random.hpp>
#include <rastrum/synthetic.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <map>

using namespace rastrum;

namespace {
const double ln2 = std::log(2.0);

// Draws N samples uniformly from m symbols and returns their histogram.
std::vector<count> uniform_sample(std::size_t m, std::size_t n, random_stream& rng) {
    std::vector<count> h(m, 0);
    for (std::size_t i = 0; i < n; ++i) ++h[rng.below(m)];
    return h;
}

double plugin_of(const std::vector<count>& h) { return plugin_entropy(summarize_counts(h)); }
}  // namespace

// Binary entropy closed forms: H(1/2) = 1 bit; H(1/4) = 2 - (3/4) log2 3; H(p) = H(1-p); H(0) = 0.
// Definition: Cover & Thomas, Elements of Information Theory, 2nd ed. (2006), eq. 2.5 and Fig. 2.1 (numbers from memory).
TEST(entropy, binary_entropy_closed_forms) {
    EXPECT_DOUBLE_EQ(binary_entropy(0.5), 1.0);
    EXPECT_NEAR(binary_entropy(0.25), 2.0 - 0.75 * std::log2(3.0), 1e-15);
    EXPECT_NEAR(binary_entropy(0.1), binary_entropy(0.9), 1e-15);
    EXPECT_EQ(binary_entropy(0.0), 0.0);
    EXPECT_EQ(binary_entropy(1.0), 0.0);
}

// Plug-in entropy of counts {3, 1} is H(3/4) = 2 - (3/4) log2 3 (closed form above); of m equal
// counts, log2 m. Miller-Madow adds (m-1)/(2N ln 2) (Miller 1955, "Note on the bias of information
// estimates", in Information Theory in Psychology, ed. Quastler, pp. 95-100).
TEST(entropy, plugin_and_miller_madow_on_hand_tables) {
    const auto s = summarize_counts({3, 1});
    EXPECT_NEAR(plugin_entropy(s), 2.0 - 0.75 * std::log2(3.0), 1e-14);
    EXPECT_NEAR(miller_madow_entropy(s), plugin_entropy(s) + 1.0 / (8 * ln2), 1e-14);
    EXPECT_NEAR(plugin_entropy(summarize_counts({5, 5, 5, 5, 5, 5, 5, 5})), 3.0, 1e-14);
    EXPECT_EQ(plugin_entropy(summarize_counts({0, 7, 0})), 0.0);
    EXPECT_EQ(summarize_counts({0, 7, 0}).distinct, 1u);
    EXPECT_EQ(plugin_entropy(count_summary{}), 0.0);
}

// The jackknife is defined by leaving each sample out in turn (Efron & Stein 1981, Ann. Statist.
// 9:586; for diversity indices, Zahl 1977, Ecology 58:907). Compare the closed form used in the code
// with that definition, computed by brute force, on random tables.
TEST(entropy, jackknife_matches_leave_one_out_definition) {
    random_stream rng(7);
    for (int rep = 0; rep < 50; ++rep) {
        std::vector<count> h(1 + rng.below(6));
        for (auto& n: h) n = rng.below(9);
        h[0] += 1;  // at least one sample
        h.back() += 1;
        count n_total = 0;
        for (count n: h) n_total += n;
        double sum_left_out = 0;
        for (std::size_t i = 0; i < h.size(); ++i) {
            if (h[i] == 0) continue;
            auto less = h;
            --less[i];
            sum_left_out += static_cast<double>(h[i]) * plugin_of(less);
        }
        const double N = static_cast<double>(n_total);
        const double expected = N * plugin_of(h) - (N - 1) * sum_left_out / N;
        EXPECT_NEAR(jackknife_entropy(summarize_counts(h)), expected, 1e-11) << "rep " << rep;
    }
}

// Miller's first-order bias of the plug-in estimator, E[H_plugin] - H = -(m-1)/(2N ln 2) + O(1/N^2),
// for m equally likely symbols and N samples (Miller 1955; also Panzeri & Treves 1996, Network 7:87). Monte Carlo over 4000 samples of N = 400 from m = 8 symbols: the mean plug-in value
// must sit within 4 standard errors of H - (m-1)/(2N ln 2), and Miller-Madow and the jackknife
// within 4 standard errors of the true 3 bits.
TEST(entropy, miller_bias_by_monte_carlo) {
    random_stream rng(2024);
    const std::size_t m = 8, n = 400, reps = 4000;
    double sum_p = 0, sum_p2 = 0, sum_mm = 0, sum_jk = 0;
    for (std::size_t r = 0; r < reps; ++r) {
        const auto s = summarize_counts(uniform_sample(m, n, rng));
        const double p = plugin_entropy(s);
        sum_p += p;
        sum_p2 += p * p;
        sum_mm += miller_madow_entropy(s);
        sum_jk += jackknife_entropy(s);
    }
    const double mean = sum_p / reps;
    const double se = std::sqrt((sum_p2 / reps - mean * mean) / reps);
    const double predicted_bias = -(static_cast<double>(m) - 1) / (2.0 * n * ln2);
    EXPECT_NEAR(mean - 3.0, predicted_bias, 4 * se);
    EXPECT_LT(mean - 3.0, -10 * se);  // the bias is real, not noise
    EXPECT_NEAR(sum_mm / reps, 3.0, 4 * se);
    EXPECT_NEAR(sum_jk / reps, 3.0, 4 * se);
}

TEST(entropy, n_log2_n_is_exact_beyond_the_table) {
    for (count n: {count{1}, count{2}, count{4095}, count{4096}, count{1} << 20}) {
        const double x = static_cast<double>(n);
        EXPECT_NEAR(n_log2_n(n), x * std::log2(x), 1e-9 * x * std::log2(x + 1)) << n;
    }
    EXPECT_EQ(n_log2_n(0), 0.0);
}

TEST(entropy, summaries_merge_like_concatenated_tables) {
    auto a = summarize_counts({1, 2, 3});
    const auto b = summarize_counts({4, 5});
    a.merge(b);
    const auto c = summarize_counts({1, 2, 3, 4, 5});
    EXPECT_EQ(a.samples, c.samples);
    EXPECT_EQ(a.distinct, c.distinct);
    EXPECT_DOUBLE_EQ(a.sum_n_log2_n, c.sum_n_log2_n);
    EXPECT_DOUBLE_EQ(a.sum_leave_one_out, c.sum_leave_one_out);
}
