// Estimators of the information between discrete stimulus conditions and responses.
#include <rastrum/information.hpp>
#include <rastrum/random.hpp>
#include <rastrum/recording.hpp>
#include <rastrum/stimulus_information.hpp>
#include <rastrum/synthetic.hpp>

#include "ranked_trials.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <map>
#include <set>

using namespace rastrum;

namespace {

labelled_responses random_trials(random_stream& rng, std::size_t conditions, std::size_t trials, std::uint64_t values) {
    labelled_responses t;
    t.conditions = conditions;
    t.alphabet = static_cast<double>(values);
    for (std::size_t k = 0; k < trials; ++k) {
        t.condition.push_back(static_cast<std::uint32_t>(k % conditions));
        t.response.push_back(rng.below(values));
    }
    return t;
}

const info_settings defaults;

double estimate(const labelled_responses& t, info_estimator e) { return stimulus_information(t, e, defaults); }

// Spike counts per trial of one unit of a `conditions` recording, with its labels as conditions.
labelled_responses counts_from(const synthetic_recording& synth, std::size_t unit) {
    labelled_responses t;
    std::map<std::string, std::uint32_t> index;
    for (const auto& label: synth.rec.stimulus) index.emplace(label, static_cast<std::uint32_t>(index.size()));
    t.conditions = index.size();
    std::vector<std::size_t> all(synth.rec.trial_count());
    for (std::size_t k = 0; k < all.size(); ++k) all[k] = k;
    const auto aligned = align_to_trials(synth.rec.units[unit].spike_times, synth.rec, all);
    word_code largest = 0;
    for (std::size_t k = 0; k < all.size(); ++k) {
        t.condition.push_back(index.at(synth.rec.stimulus[k]));
        t.response.push_back(aligned[k].size());
        largest = std::max<word_code>(largest, aligned[k].size());
    }
    t.alphabet = static_cast<double>(largest + 1);
    return t;
}

}  // namespace

// The plug-in value equals the plug-in mutual information of the (condition, response) table
// (definition; Cover & Thomas 2006, eq. 2.28, from memory).
TEST(stimulus_information, plugin_equals_the_table_information) {
    random_stream rng(1);
    const auto t = random_trials(rng, 3, 90, 5);
    Eigen::ArrayXXd table = Eigen::ArrayXXd::Zero(3, 5);
    for (std::size_t k = 0; k < t.response.size(); ++k) table(t.condition[k], static_cast<Eigen::Index>(t.response[k])) += 1;
    EXPECT_NEAR(estimate(t, info_estimator::plugin), information_of_table(table).mutual_information, 1e-12);
}

// Miller-Madow applied to H(R) and to each H(R|s) changes the information by
// [(m - 1) - sum_s (m_s - 1)] / (2 N ln 2), m and m_s the numbers of distinct responses overall and
// in condition s (Miller 1955 term, weighted by p(s) = N_s / N).
TEST(stimulus_information, miller_madow_term_on_a_hand_table) {
    labelled_responses t;
    t.conditions = 2;
    t.alphabet = 4;
    // condition 0: responses 0 0 1 1 2 ; condition 1: responses 3 3 3 1
    t.condition = {0, 0, 0, 0, 0, 1, 1, 1, 1};
    t.response = {0, 0, 1, 1, 2, 3, 3, 3, 1};
    const double expected_term = ((4 - 1) - ((3 - 1) + (2 - 1))) / (2 * 9 * std::log(2.0));
    EXPECT_NEAR(estimate(t, info_estimator::miller_madow) - estimate(t, info_estimator::plugin), expected_term, 1e-12);
}

// Panzeri & Treves 1996 (Network 7:87): the plug-in information's first-order bias is
// [sum_s (R_s - 1) - (R - 1)] / (2 N ln 2) for R_s relevant responses per condition and R overall.
TEST(stimulus_information, panzeri_treves_bias_formula) {
    EXPECT_NEAR(panzeri_treves_bias({3, 2}, 4, 10), 0.0, 1e-15);
    EXPECT_NEAR(panzeri_treves_bias({4, 4}, 5, 20), 2 / (40 * std::log(2.0)), 1e-15);
    // The relevant-response count never drops below what was seen nor exceeds the alphabet.
    EXPECT_DOUBLE_EQ(relevant_responses({3, 2, 1}, 3), 3.0);
    const double r = relevant_responses({5, 1, 1, 1}, 50);
    EXPECT_GE(r, 4.0);
    EXPECT_LE(r, 50.0);
    EXPECT_GT(r, 4.0) << "three singletons suggest unseen responses";
    // No singletons: the Good-Turing estimate of unseen mass is 0 (Good 1953, Biometrika 40:237), and a
    // Dirichlet posterior expects less than one unseen response more.
    EXPECT_LT(relevant_responses({40, 40}, 1000), 3.0);
}

// The jackknife is N I - (N - 1) mean of the N leave-one-trial-out plug-in values
// (Efron & Stein 1981, Ann. Statist. 9:586), computed here by brute force.
TEST(stimulus_information, jackknife_matches_leave_one_out_definition) {
    random_stream rng(4);
    for (int rep = 0; rep < 10; ++rep) {
        const auto t = random_trials(rng, 2 + rng.below(3), 20 + rng.below(30), 2 + rng.below(6));
        double sum = 0;
        for (std::size_t j = 0; j < t.response.size(); ++j) {
            labelled_responses less = t;
            less.condition.erase(less.condition.begin() + static_cast<std::ptrdiff_t>(j));
            less.response.erase(less.response.begin() + static_cast<std::ptrdiff_t>(j));
            sum += estimate(less, info_estimator::plugin);
        }
        const double n = static_cast<double>(t.response.size());
        EXPECT_NEAR(estimate(t, info_estimator::jackknife), n * estimate(t, info_estimator::plugin) - (n - 1) * sum / n,
                    1e-10);
    }
}

// Poisson spike counts under 4 conditions, 30 trials each, means 2, 4, 6, 9: the exact information
// sums the Poisson probability mass functions (analytic). Over 50 seeds plug-in is biased upward by
// more than 0.05 bits, and the best bias-corrected estimator is within 0.05 bits on average.
TEST(stimulus_information, poisson_counts_bias_corrections_beat_plugin_over_seeds) {
    const std::vector<double> means{2, 4, 6, 9};
    const double exact = poisson_count_information(means);
    std::map<info_estimator, double> mean_error;
    const int seeds = 50;
    for (int seed = 1; seed <= seeds; ++seed) {
        conditions_spec spec;
        spec.means = {means};
        spec.trials_per_condition = 30;
        spec.session.duration = 0.5;
        spec.seed = static_cast<std::uint64_t>(seed);
        const auto t = counts_from(make_conditions(spec), 0);
        info_settings s;
        s.seed = static_cast<std::uint64_t>(seed);
        for (info_estimator e: all_info_estimators) mean_error[e] += (stimulus_information(t, e, s) - exact) / seeds;
    }
    EXPECT_GT(mean_error[info_estimator::plugin], 0.05);
    double best = INFINITY;
    for (const auto& [e, err]: mean_error) {
        if (e == info_estimator::plugin) continue;
        best = std::min(best, std::abs(err));
        EXPECT_LT(std::abs(err), mean_error[info_estimator::plugin]) << info_estimator_name(e) << " does worse than plug-in";
        RecordProperty(info_estimator_name(e), std::to_string(err));
    }
    EXPECT_LT(best, 0.05);
}

// A null: every condition has the same response distribution, so I = 0 (analytic); the
// bias-corrected estimators must centre much nearer 0 than plug-in over seeds. NSB, estimating H(R)
// and each H(R|s) separately, keeps part of the bias at 30 trials per condition (its entropies of few
// samples lean toward its prior), so it is only required to beat plug-in.
TEST(stimulus_information, null_conditions_centre_near_zero) {
    std::map<info_estimator, double> mean;
    const int seeds = 40;
    for (int seed = 1; seed <= seeds; ++seed) {
        random_stream rng(static_cast<std::uint64_t>(seed));
        const auto t = random_trials(rng, 4, 120, 6);
        for (info_estimator e: all_info_estimators) mean[e] += estimate(t, e) / seeds;
    }
    for (info_estimator e: all_info_estimators) {
        if (e == info_estimator::plugin) continue;
        const double limit = e == info_estimator::nsb ? 1.0 : 0.5;
        EXPECT_LT(std::abs(mean[e]), limit * mean[info_estimator::plugin])
            << info_estimator_name(e) << " " << mean[e] << " against plug-in " << mean[info_estimator::plugin];
    }
}

TEST(stimulus_information, names_round_trip_and_unknown_names_are_refused) {
    for (info_estimator e: all_info_estimators) EXPECT_EQ(parse_info_estimator(info_estimator_name(e)), e);
    EXPECT_ANY_THROW(parse_info_estimator("plugin"));
}

// Conditionally independent binary words: L = 3 bins, bin b of condition s fires with probability
// p[s][b] independently, so P(word | s) is a product and the exact information follows by enumerating
// the 8 words (analytic). Over 40 seeds of 25 trials per condition every bias-corrected estimator is
// closer to the exact value than plug-in on average.
TEST(stimulus_information, binary_words_bias_corrections_beat_plugin_over_seeds) {
    const std::vector<std::vector<double>> p{{0.1, 0.5, 0.8}, {0.6, 0.2, 0.3}, {0.4, 0.4, 0.9}};
    const std::size_t conditions = p.size(), letters = 3, words = 8;
    const double n_conditions = static_cast<double>(conditions);
    std::vector<std::vector<double>> pw(conditions, std::vector<double>(words, 1.0));
    for (std::size_t s = 0; s < conditions; ++s) {
        for (std::size_t w = 0; w < words; ++w) {
            for (std::size_t b = 0; b < letters; ++b) {
                const bool fires = (w >> (letters - 1 - b)) & 1;
                pw[s][w] *= fires ? p[s][b] : 1 - p[s][b];
            }
        }
    }
    double exact = 0;
    for (std::size_t w = 0; w < words; ++w) {
        double pooled = 0;
        for (std::size_t s = 0; s < conditions; ++s) pooled += pw[s][w] / n_conditions;
        for (std::size_t s = 0; s < conditions; ++s) exact += pw[s][w] / n_conditions * std::log2(pw[s][w] / pooled);
    }
    std::map<info_estimator, double> error;
    const int seeds = 40;
    for (int seed = 1; seed <= seeds; ++seed) {
        random_stream rng(static_cast<std::uint64_t>(seed));
        labelled_responses t;
        t.conditions = conditions;
        t.alphabet = words;
        for (std::size_t s = 0; s < conditions; ++s) {
            for (int k = 0; k < 25; ++k) {
                word_code w = 0;
                for (std::size_t b = 0; b < letters; ++b) w = 2 * w + (rng.uniform() < p[s][b] ? 1 : 0);
                t.condition.push_back(static_cast<std::uint32_t>(s));
                t.response.push_back(w);
            }
        }
        info_settings settings;
        settings.seed = static_cast<std::uint64_t>(seed);
        for (info_estimator e: all_info_estimators) error[e] += (stimulus_information(t, e, settings) - exact) / seeds;
    }
    EXPECT_GT(error[info_estimator::plugin], 0.02) << "plug-in is biased upward";
    for (info_estimator e: all_info_estimators) {
        if (e == info_estimator::plugin) continue;
        EXPECT_LT(std::abs(error[e]), error[info_estimator::plugin]) << info_estimator_name(e) << " " << error[e];
        RecordProperty(info_estimator_name(e), std::to_string(error[e]));
    }
}

// Ranks of responses: the dense ranking of the distinct codes (common practice: a code's rank is the
// number of distinct codes below it), here from a std::set. ranked_trials ranks codes of a small
// span through a bitmap and others by a sort; both must give exactly this ranking, whatever the
// span, at the span's edges and for codes near 2^64.
TEST(RankedTrials, RanksAreTheDenseRankingOfTheCodesWhateverTheirSpan) {
    random_stream rng(29);
    const std::uint64_t top = std::numeric_limits<std::uint64_t>::max();
    const std::vector<std::pair<std::uint64_t, std::uint64_t>> spans = {
        {0, 1}, {0, 60}, {5, 40000}, {0, 64 * 1700}, {0, 64 * 1800}, {1000, 1u << 30}, {top - 500, top}, {0, top}};
    for (const auto& [low, span]: spans) {
        for (const std::size_t n: {1u, 2u, 200u}) {
            std::vector<word_code> codes;
            std::vector<std::uint32_t> condition;
            for (std::size_t k = 0; k < n; ++k) {
                const std::uint64_t offset = span == top ? rng.next() : rng.below(span + 1);
                codes.push_back(k == 0 ? low : k == 1 ? low + span : low + offset);  // both ends present
                condition.push_back(static_cast<std::uint32_t>(k % 3));
            }
            const std::set<word_code> distinct(codes.begin(), codes.end());
            const detail::ranked_trials ranked(condition, 3, codes);
            ASSERT_EQ(ranked.distinct(), distinct.size()) << "span " << span << ", " << n << " trials";
            for (std::size_t k = 0; k < n; ++k) {
                EXPECT_EQ(ranked.rank()[k], static_cast<std::uint32_t>(std::distance(distinct.begin(), distinct.find(codes[k]))))
                    << "span " << span << ", trial " << k;
            }
        }
    }
}
