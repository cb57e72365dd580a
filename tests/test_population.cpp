// Joint information of two units, against exact enumeration.
#include <rastrum/population.hpp>
#include <rastrum/stiminfo_analysis.hpp>
#include <rastrum/recording.hpp>
#include <rastrum/synthetic.hpp>

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <map>

using namespace rastrum;

namespace {

std::vector<double> poisson_pmf(double mean, std::size_t n) {
    std::vector<double> p(n);
    p[0] = std::exp(-mean);
    for (std::size_t k = 1; k < n; ++k) p[k] = p[k - 1] * mean / static_cast<double>(k);
    return p;
}

// Exact I(S; R1, R2) for conditionally independent Poisson counts, equally likely conditions, by
// summing the joint probability mass functions (analytic).
double exact_pair_information(const std::vector<double>& m1, const std::vector<double>& m2) {
    const std::size_t n = 60, k = m1.size();
    std::vector<std::vector<double>> joint(k);
    std::vector<double> pooled(n * n, 0);
    for (std::size_t s = 0; s < k; ++s) {
        const auto a = poisson_pmf(m1[s], n), b = poisson_pmf(m2[s], n);
        joint[s].resize(n * n);
        for (std::size_t i = 0; i < n; ++i) {
            for (std::size_t j = 0; j < n; ++j) {
                joint[s][i * n + j] = a[i] * b[j];
                pooled[i * n + j] += a[i] * b[j] / static_cast<double>(k);
            }
        }
    }
    double info = 0;
    for (std::size_t s = 0; s < k; ++s) {
        for (std::size_t r = 0; r < n * n; ++r) {
            if (joint[s][r] > 0) info += joint[s][r] / static_cast<double>(k) * std::log2(joint[s][r] / pooled[r]);
        }
    }
    return info;
}

std::vector<labelled_responses> pair_counts(std::size_t trials_per_condition, std::uint64_t seed,
                                            const std::vector<double>& m1, const std::vector<double>& m2) {
    conditions_spec spec;
    spec.means = {m1, m2};
    spec.trials_per_condition = trials_per_condition;
    spec.session.duration = 0.5;
    spec.seed = seed;
    const auto synth = make_conditions(spec);
    std::map<std::string, std::uint32_t> index;
    for (const auto& l: spec.labels) index.emplace(l, static_cast<std::uint32_t>(index.size()));
    std::vector<std::size_t> all(synth.rec.trial_count());
    for (std::size_t k = 0; k < all.size(); ++k) all[k] = k;
    std::vector<labelled_responses> units(2);
    for (std::size_t u = 0; u < 2; ++u) {
        const auto aligned = align_to_trials(synth.rec.units[u].spike_times, synth.rec, all);
        units[u].conditions = index.size();
        word_code largest = 0;
        for (std::size_t k = 0; k < all.size(); ++k) {
            units[u].condition.push_back(index.at(synth.rec.stimulus[k]));
            units[u].response.push_back(aligned[k].size());
            largest = std::max<word_code>(largest, aligned[k].size());
        }
        units[u].alphabet = static_cast<double>(largest + 1);
    }
    return units;
}

const std::vector<double> first{0.5, 1, 2, 3}, second{2, 1, 2, 1};

}  // namespace

// The product of the marginals of conditionally independent units is their joint distribution, so
// I_ind computed from exact marginals equals the exact joint information; with the empirical
// marginals of many trials it converges to it (analytic; Panzeri, Senatore, Montemurro & Petersen
// 2007, J. Neurophysiol. 98:1064, define I_ind this way).
TEST(population, independent_information_of_many_trials_matches_exact) {
    const double exact = exact_pair_information(first, second);
    const auto units = pair_counts(2000, 5, first, second);
    EXPECT_NEAR(independent_information(units), exact, 0.01);
}

// Over 30 seeds with 50 trials per condition: joint, single-unit sum, synergy and the shuffle-corrected
// estimate (quadratic extrapolation, the population default) land on the exact values on average (exact: I_sh = I_joint for conditionally
// independent units, Montemurro, Senatore & Panzeri 2007, Neural Comput. 19:2913), and I_sh is the
// less biased of I_sh and I_joint by plug-in at small trial counts (the property they report).
TEST(population, pair_values_match_exact_enumeration_over_seeds) {
    const double exact_joint = exact_pair_information(first, second);
    const double exact_sum = poisson_count_information(first) + poisson_count_information(second);
    const int seeds = 30;
    double joint = 0, sum = 0, synergy = 0, shuffle_corrected = 0, plugin_joint = 0, plugin_sh = 0;
    for (int seed = 1; seed <= seeds; ++seed) {
        const auto units = pair_counts(50, static_cast<std::uint64_t>(seed), first, second);
        info_settings s;
        s.seed = static_cast<std::uint64_t>(seed);
        const auto v = population_information(units, info_estimator::quadratic_extrapolation, s, 5);
        joint += v.joint / seeds;
        sum += v.sum_single / seeds;
        synergy += v.synergy / seeds;
        shuffle_corrected += v.shuffle_corrected / seeds;
        const auto p = population_information(units, info_estimator::plugin, s, 5);
        plugin_joint += (p.joint - exact_joint) / seeds;
        plugin_sh += (p.shuffle_corrected - exact_joint) / seeds;
        RecordProperty("jk_joint_" + std::to_string(seed), std::to_string(v.joint));
    }
    EXPECT_NEAR(joint, exact_joint, 0.08);
    EXPECT_NEAR(sum, exact_sum, 0.05);
    EXPECT_NEAR(synergy, exact_joint - exact_sum, 0.08);
    EXPECT_NEAR(shuffle_corrected, exact_joint, 0.08);
    EXPECT_LT(std::abs(plugin_sh), std::abs(plugin_joint));
    RecordProperty("plugin_joint_bias", std::to_string(plugin_joint));
    RecordProperty("plugin_shuffle_corrected_bias", std::to_string(plugin_sh));
}

// I_sh and I_joint converge to the same value as trials grow (Montemurro et al. 2007).
TEST(population, shuffle_corrected_and_joint_converge_with_trials) {
    const auto units = pair_counts(1000, 11, first, second);
    info_settings s;
    const auto v = population_information(units, info_estimator::jackknife, s, 3);
    EXPECT_NEAR(v.shuffle_corrected, v.joint, 0.02);
    EXPECT_NEAR(v.joint, exact_pair_information(first, second), 0.03);
}

TEST(population, joint_codes_are_mixed_radix) {
    labelled_responses a, b;
    a.condition = b.condition = {0, 1, 1};
    a.conditions = b.conditions = 2;
    a.response = {0, 2, 1};
    a.alphabet = 3;
    b.response = {4, 0, 3};
    b.alphabet = 5;
    const auto j = joint_responses({a, b});
    EXPECT_EQ(j.response, (std::vector<word_code>{4, 10, 8}));
    EXPECT_EQ(j.alphabet, 15);
}

// The analysis reports joint, single-unit sum, synergy, independent and shuffle-corrected values, each
// with a 95% interval; over 20 recordings each interval must hold the exact value from enumeration
// (analytic, above) in most of them. Coverage is measured and recorded, not assumed.
// Run at 50 trials per condition and at 30, where the joint response has more distinct values than a
// condition has trials and a bootstrap-only interval around a biased estimate missed the truth.
class population_coverage: public ::testing::TestWithParam<std::size_t> {};

TEST_P(population_coverage, stiminfo_population_intervals_hold_the_exact_values) {
    const double joint = exact_pair_information(first, second);
    const double sum = poisson_count_information(first) + poisson_count_information(second);
    std::map<std::string, int> held;
    std::map<std::string, double> width;
    // RASTRUM_COVERAGE_SEEDS=100 measures coverage more finely (notes/methods.md, section 8.3).
    const char* asked = std::getenv("RASTRUM_COVERAGE_SEEDS");
    const int seeds = asked ? std::max(20, std::atoi(asked)) : 20;
    for (int seed = 1; seed <= seeds; ++seed) {
        conditions_spec spec;
        spec.means = {first, second};
        spec.trials_per_condition = GetParam();
        spec.session.duration = 0.5;
        spec.seed = static_cast<std::uint64_t>(seed);
        stiminfo_request q;
        q.response.code = response_code::spike_count;
        q.response.window_stop = 0.5;
        q.populations = {{"u1", "u2"}};
        q.null_shuffles = 0;
        q.bootstrap = 50;
        q.settings.seed = static_cast<std::uint64_t>(seed);
        const auto records = run_stiminfo(make_conditions(spec).rec, q);
        // The members alone first (asked for by the population), then the population.
        ASSERT_EQ(records.size(), 3u);
        EXPECT_EQ(records[0].unit, "u1");
        EXPECT_EQ(records[1].unit, "u2");
        EXPECT_FALSE(records[0].population);
        ASSERT_TRUE(records[2].population);
        EXPECT_EQ(records[2].unit, "u1+u2");
        const auto& p = *records[2].population;
        auto count_if_held = [&](double low, double high, double exact, const char* what) {
            if (low <= exact && exact <= high) ++held[what];
            width[what] += (high - low) / seeds;
        };
        count_if_held(p.low.joint, p.high.joint, joint, "joint");
        count_if_held(p.low.sum_single, p.high.sum_single, sum, "sum_single");
        count_if_held(p.low.synergy, p.high.synergy, joint - sum, "synergy");
        count_if_held(p.low.independent, p.high.independent, joint, "independent");
        count_if_held(p.low.shuffle_corrected, p.high.shuffle_corrected, joint, "shuffle_corrected");
    }
    for (const char* what: {"joint", "sum_single", "synergy", "independent", "shuffle_corrected"}) {
        RecordProperty(what, std::to_string(held[what]));
        std::printf("coverage: %zu trials per condition, %s held in %d of %d, mean width %.4f bits\n", GetParam(), what,
                    held[what], seeds, width[what]);
        EXPECT_GE(held[what], seeds * 4 / 5) << what << " held the exact value in " << held[what] << " of " << seeds;
    }
}
INSTANTIATE_TEST_SUITE_P(trials_per_condition, population_coverage, ::testing::Values(50, 30, 20));

// Identities of the population entropies that hold for any empirical distribution (common practice;
// Cover & Thomas 2006, ch. 2): H(R1,R2) <= H(R1) + H(R2), H(R1,R2|S) <= H(R1|S) + H(R2|S), the chain rule
// I(S;R1,R2) = I(S;R1) + [H(R2|R1) - H(R2|R1,S)], and I(S;R1,R2) >= max(I(S;R1), I(S;R2)); by plug-in.
TEST(population, entropy_identities_hold_for_joint_responses) {
    const info_settings s;
    for (std::uint64_t seed = 1; seed <= 10; ++seed) {
        const auto units = pair_counts(20, seed, first, second);
        const auto joint = joint_responses(units);
        const auto plugin = info_estimator::plugin;
        auto h = [&](const labelled_responses& t) { return response_entropy(t.response, t.alphabet, plugin, s); };
        auto h_given_s = [&](const labelled_responses& t) { return conditional_response_entropy(t, plugin, s); };
        EXPECT_LE(h(joint), h(units[0]) + h(units[1]) + 1e-12);
        EXPECT_LE(h_given_s(joint), h_given_s(units[0]) + h_given_s(units[1]) + 1e-12);
        const double i_joint = stimulus_information(joint, plugin, s);
        const double i1 = stimulus_information(units[0], plugin, s), i2 = stimulus_information(units[1], plugin, s);
        EXPECT_GE(i_joint, std::max(i1, i2) - 1e-12);
        // H(R2|R1) = H(R1,R2) - H(R1); H(R2|R1,S) = H(R1,R2|S) - H(R1|S).
        const double h2_given_1 = h(joint) - h(units[0]);
        const double h2_given_1s = h_given_s(joint) - h_given_s(units[0]);
        EXPECT_NEAR(i_joint, i1 + (h2_given_1 - h2_given_1s), 1e-12);
    }
}
