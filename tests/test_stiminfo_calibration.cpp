// Stimulus information's calibration at the record's own sample size: the surrogate model, its exact
// information, the procedure's determinism and the coverage of its interval.
#include <rastrum/errors.hpp>
#include <rastrum/stiminfo_analysis.hpp>
#include <rastrum/stiminfo_calibration.hpp>
#include <rastrum/synthetic.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <map>
#include <string>

using namespace rastrum;

namespace {

/// I(S;R) = sum_{s,r} p(s,r) log2 [p(s,r) / (p(s) p(r))], the definition (Cover & Thomas 2006,
/// Elements of Information Theory, eq. 2.28), written here independently of response_model.
double information_by_definition(const std::vector<std::vector<double>>& p_r_given_s, const std::vector<double>& p_s) {
    std::vector<double> p_r(p_r_given_s[0].size(), 0);
    for (std::size_t s = 0; s < p_s.size(); ++s) {
        for (std::size_t r = 0; r < p_r.size(); ++r) p_r[r] += p_s[s] * p_r_given_s[s][r];
    }
    double info = 0;
    for (std::size_t s = 0; s < p_s.size(); ++s) {
        for (std::size_t r = 0; r < p_r.size(); ++r) {
            const double joint = p_s[s] * p_r_given_s[s][r];
            if (joint > 0) info += joint * std::log2(joint / (p_s[s] * p_r[r]));
        }
    }
    return info;
}

/// Exact I(S; count) for Poisson counts of the given means, conditions equally likely: the
/// probability mass functions summed over counts 0..199 (the tail beyond is below 1e-60 for means
/// up to 10; analytic, the pmf by its recursion p(k) = p(k - 1) m / k).
double poisson_information(const std::vector<double>& means) {
    const int top = 200;
    std::vector<std::vector<double>> p(means.size(), std::vector<double>(top));
    for (std::size_t s = 0; s < means.size(); ++s) {
        p[s][0] = std::exp(-means[s]);
        for (int k = 1; k < top; ++k) p[s][static_cast<std::size_t>(k)] = p[s][static_cast<std::size_t>(k) - 1] * means[s] / k;
    }
    return information_by_definition(p, std::vector<double>(means.size(), 1.0 / static_cast<double>(means.size())));
}

labelled_responses trials_of(const std::vector<std::vector<word_code>>& by_condition, double alphabet) {
    labelled_responses t;
    t.conditions = by_condition.size();
    t.alphabet = alphabet;
    for (std::size_t s = 0; s < by_condition.size(); ++s) {
        for (word_code r: by_condition[s]) {
            t.condition.push_back(static_cast<std::uint32_t>(s));
            t.response.push_back(r);
        }
    }
    return t;
}

stiminfo_request calibrated_request(unsigned surrogates) {
    stiminfo_request q;
    q.response.code = response_code::spike_count;
    q.response.window_start = 0;
    q.response.window_stop = 0.5;
    q.null_shuffles = 0;
    q.bootstrap = 0;
    q.trial_fraction_repeats = 0;
    q.surrogates = surrogates;
    return q;
}

synthetic_recording poisson_conditions(std::vector<std::vector<double>> means, std::size_t trials, std::uint64_t seed) {
    conditions_spec spec;
    spec.means = std::move(means);
    spec.trials_per_condition = trials;
    spec.session.duration = 0.5;
    spec.seed = seed;
    return make_conditions(spec);
}

}  // namespace

// A binary symmetric channel with crossover 0.1 and equally likely inputs carries 1 - H2(0.1) =
// 0.531004406 bits (Cover & Thomas 2006, section 7.1.4, analytic); an asymmetric three-response model
// against the definition summed independently (above).
TEST(response_model, information_is_exact) {
    const response_model channel({0, 1}, {{0.9, 0.1}, {0.1, 0.9}}, {0.5, 0.5}, 2);
    EXPECT_NEAR(channel.information(), 1 + 0.1 * std::log2(0.1) + 0.9 * std::log2(0.9), 1e-12);
    EXPECT_NEAR(channel.information(), 0.531004406, 1e-9);
    const std::vector<std::vector<double>> p{{0.7, 0.2, 0.1, 0.0}, {0.1, 0.3, 0.4, 0.2}, {0.25, 0.25, 0.25, 0.25}};
    const std::vector<double> w{0.5, 0.3, 0.2};
    const response_model three({0, 3, 7, 9}, p, w, 10);
    EXPECT_NEAR(three.information(), information_by_definition(p, w), 1e-12);
}

// The model fitted to data without smoothing is the data's own empirical distribution, so its exact
// information is the plug-in information of the same trials (by definition of the plug-in estimator;
// computed by stimulus_information's own histograms, a separate path). Smoothed, every condition's
// probabilities stay a distribution and the information is at most the raw one (the factor only
// moves conditions toward the pooled distribution, and information is convex in p(r|s): Cover &
// Thomas 2006, theorem 2.7.4).
TEST(response_model, fitted_model_against_the_plugin_information) {
    const labelled_responses t = trials_of({{0, 0, 1, 2, 0, 1, 0}, {1, 2, 2, 3, 2, 1}, {3, 3, 2, 3, 0, 3, 3, 3}}, 4);
    const response_model raw(t, response_smoothing::none);
    EXPECT_NEAR(raw.information(), stimulus_information(t, info_estimator::plugin, {}), 1e-12);
    const response_model smooth(t);
    EXPECT_LE(smooth.information(), raw.information() + 1e-12);
    EXPECT_GT(smooth.information(), 0.0);
    for (const auto& row: smooth.probabilities()) {
        double sum = 0;
        for (double x: row) {
            EXPECT_GE(x, 0.0);
            sum += x;
        }
        EXPECT_NEAR(sum, 1.0, 1e-12);
    }
    for (double k: smooth.shrinkage()) {
        EXPECT_GT(k, 0.0);
        EXPECT_LT(k, 1.0);
    }
    std::vector<word_code> seen = smooth.responses();
    EXPECT_EQ(seen, (std::vector<word_code>{0, 1, 2, 3}));  // only responses seen: 4 of the alphabet's 4
}

// Sizing the model: moved along its shrinkage to a target information, its information (by the
// definition, computed independently above) is the target; a target of 0 or below gives the pooled
// distribution in every condition (I = 0 exactly), one beyond the raw frequencies gives those.
TEST(response_model, matched_to_a_target_information) {
    const labelled_responses t = trials_of({{0, 0, 1, 2, 0, 1, 0}, {1, 2, 2, 3, 2, 1}, {3, 3, 2, 3, 0, 3, 3, 3}}, 4);
    const response_model model(t);
    const std::vector<double> w{7.0 / 21, 6.0 / 21, 8.0 / 21};
    for (double target: {0.05, 0.2, 0.4}) {
        const response_model m = model.matched_to(target);
        EXPECT_NEAR(information_by_definition(m.probabilities(), w), target, 1e-9) << target;
    }
    EXPECT_EQ(model.matched_to(-0.1).information(), 0.0);
    const double raw = response_model(t, response_smoothing::none).information();
    EXPECT_NEAR(model.matched_to(raw + 1).information(), raw, 1e-12);
}

// A null design: every condition holds exactly the same responses, so the frequencies do not vary
// across conditions at all; the variance-matched model is then the pooled distribution in every
// condition and carries exactly 0 bits (analytic: I = 0 when p(r|s) does not depend on s).
TEST(response_model, null_design_carries_no_information) {
    const std::vector<word_code> same{0, 1, 1, 2, 2, 2, 5};
    const labelled_responses t = trials_of({same, same, same, same}, 6);
    const response_model model(t);
    EXPECT_EQ(model.information(), 0.0);
    for (double k: model.shrinkage()) EXPECT_EQ(k, 0.0);
    // Raw frequencies agree here (no noise to remove): also 0.
    EXPECT_NEAR(response_model(t, response_smoothing::none).information(), 0.0, 1e-15);
}

// Draws follow the model: over 200,000 draws each frequency is within 0.005 of its probability (the
// binomial SD is at most 0.0011; common practice), a response of probability 0 never appears, and
// the same seed gives the same draw.
TEST(response_model, draws_follow_the_model) {
    const response_model model({4, 8, 15}, {{0.5, 0.0, 0.5}, {0.2, 0.3, 0.5}}, {0.5, 0.5}, 16);
    const std::vector<std::size_t> trials{100000, 100000};
    const labelled_responses d = model.draw(trials, 7);
    ASSERT_EQ(d.response.size(), 200000u);
    std::map<std::pair<std::uint32_t, word_code>, double> freq;
    for (std::size_t k = 0; k < d.response.size(); ++k) freq[{d.condition[k], d.response[k]}] += 1e-5;
    EXPECT_EQ(freq.count(std::make_pair(0u, word_code{8})), 0u);
    EXPECT_NEAR(freq[std::make_pair(0u, word_code{4})], 0.5, 0.005);
    EXPECT_NEAR(freq[std::make_pair(1u, word_code{8})], 0.3, 0.005);
    EXPECT_NEAR(freq[std::make_pair(1u, word_code{15})], 0.5, 0.005);
    EXPECT_EQ(model.draw(trials, 7).response, d.response);
}

// Student's t quantiles from the standard table (Fisher & Yates, Statistical Tables, table III;
// common practice): t_0.975 = 2.262 at 9 degrees of freedom, 2.010 at 49.
TEST(stiminfo_calibration, the_interval_factor_is_students_t_for_10_and_50_surrogates) {
    EXPECT_NEAR(calibrated_interval_factor(10), 2.2622, 1e-4);
    EXPECT_NEAR(calibrated_interval_factor(50), 2.0096, 1e-4);
}

// e(n) = 1 / sqrt(n) (analytic) falls to 0.05 at n = 400; not within 4 x 50 = 200; an error that
// does not fall gives nothing.
TEST(stiminfo_calibration, trials_needed_from_a_power_law) {
    std::vector<std::pair<double, double>> points;
    for (double n: {50.0, 100.0, 200.0}) points.emplace_back(n, 1 / std::sqrt(n));
    ASSERT_TRUE(trials_needed(points, 0.05, 1000).has_value());
    EXPECT_NEAR(*trials_needed(points, 0.05, 1000), 400, 1e-6);
    EXPECT_FALSE(trials_needed(points, 0.05, 200).has_value());
    EXPECT_FALSE(trials_needed({{50, 0.1}, {100, 0.1}, {200, 0.11}}, 0.05, 1000).has_value());
}

// The same seed gives the same calibration with one thread or three (derive_seed per record and
// surrogate; DEVELOPERS.md).
TEST(stiminfo_calibration, same_numbers_for_any_thread_count) {
    const auto rec = poisson_conditions({{2, 4, 6, 9}, {1, 1, 3, 3}, {5, 5, 5, 5}}, 20, 4).rec;
    auto q = calibrated_request(10);
    q.threads = 1;
    const auto one = run_stiminfo(rec, q);
    q.threads = 3;
    const auto three = run_stiminfo(rec, q);
    ASSERT_EQ(one.size(), three.size());
    for (std::size_t i = 0; i < one.size(); ++i) {
        ASSERT_TRUE(one[i].calibration && three[i].calibration);
        EXPECT_EQ(one[i].calibration->value, three[i].calibration->value);
        EXPECT_EQ(one[i].calibration->interval, three[i].calibration->interval);
        EXPECT_EQ(one[i].calibration->recommended, three[i].calibration->recommended);
        EXPECT_EQ(one[i].calibration->by_size.back().error, three[i].calibration->by_size.back().error);
    }
}

// The calibrated interval holds the exact count information of Poisson means 2, 4, 6, 9 (0.6079 bits,
// by summing the pmfs above; analytic) on most of 10 seeds at 30 trials per condition: nominal 95%,
// so 8 or more of 10 (binomial: fewer than 8 has probability 0.012 at 95%).
TEST(stiminfo_calibration, interval_covers_the_exact_count_information) {
    const std::vector<double> means{2, 4, 6, 9};
    const double exact = poisson_information(means);
    EXPECT_NEAR(exact, poisson_count_information(means), 1e-9);  // the generator's own answer agrees
    auto q = calibrated_request(30);
    int covered = 0;
    for (std::uint64_t seed = 1; seed <= 10; ++seed) {
        q.settings.seed = seed;
        const auto r = run_stiminfo(poisson_conditions({means}, 30, 200 + seed).rec, q).at(0);
        ASSERT_TRUE(r.calibration);
        const auto [low, high] = r.calibration->interval;
        EXPECT_LT(low, high);
        if (low <= exact && exact <= high) ++covered;
    }
    EXPECT_GE(covered, 8) << covered << " of 10";
}

// Off (0) keeps the record as it was; 1 surrogate cannot measure a spread and is refused before any work.
TEST(stiminfo_calibration, off_and_refused) {
    const auto rec = poisson_conditions({{1, 3, 1, 3}}, 10, 1).rec;
    EXPECT_FALSE(run_stiminfo(rec, calibrated_request(0)).at(0).calibration.has_value());
    EXPECT_THROW(check_stiminfo_request(calibrated_request(1)), usage_error);
}

// The posterior predictive check (notes/methods-calibration.md, "When the model cannot stand in for
// the record"): an estimate far outside its estimator's values on the surrogates is listed as unlike
// the model and never recommended; when every estimate is, the record is not calibrated. The record's
// estimates are given here, so the check can be made to fire: -11 bits for NSB is what NSB gave on
// binary words of 50 letters, far from anything four conditions of counts can carry (information is
// at least 0 and at most H(S) = 2 bits: Cover & Thomas 2006, theorem 2.6.5, from memory).
TEST(stiminfo_calibration, an_estimate_unlike_the_models_data_is_never_recommended) {
    const labelled_responses t = trials_of({{0, 1, 1, 2, 0, 1, 3, 2, 1, 0, 2, 1}, {2, 3, 4, 3, 2, 5, 4, 3, 3, 4, 2, 3},
                                            {5, 6, 4, 7, 5, 6, 8, 5, 6, 7, 4, 6}, {8, 9, 7, 10, 9, 8, 11, 9, 8, 10, 9, 7}},
                                           12);
    info_settings settings;
    std::map<info_estimator, double> estimates;
    for (info_estimator e: all_info_estimators) estimates[e] = stimulus_information(t, e, settings);
    calibration_request q;
    q.surrogates = q.scaled_surrogates = 10;
    const stiminfo_calibration plain = calibrate_stiminfo(t, estimates, settings, q);
    ASSERT_FALSE(plain.not_calibrated);
    EXPECT_TRUE(plain.unlike_model.empty()) << "the record's own estimates look like the surrogates'";
    // The recommended estimator's value made absurd: it is flagged, and another is recommended.
    std::map<info_estimator, double> odd = estimates;
    odd[plain.recommended] = -11;
    const stiminfo_calibration flagged = calibrate_stiminfo(t, odd, settings, q);
    ASSERT_EQ(flagged.unlike_model, std::vector<info_estimator>{plain.recommended});
    EXPECT_NE(flagged.recommended, plain.recommended);
    EXPECT_FALSE(flagged.not_calibrated);
    EXPECT_TRUE(std::isfinite(flagged.value));
    // Every value absurd: not calibrated, no value or interval, a reason that says so.
    for (auto& [e, v]: odd) v = -11;
    const stiminfo_calibration none = calibrate_stiminfo(t, odd, settings, q);
    EXPECT_TRUE(none.not_calibrated);
    EXPECT_TRUE(none.uncertain);
    EXPECT_EQ(none.unlike_model.size(), estimates.size());
    EXPECT_TRUE(std::isnan(none.value) && std::isnan(none.interval.first) && std::isnan(none.interval.second));
    EXPECT_NE(uncertain_caution(none).find("not calibrated: the record is unlike data drawn from the model"), std::string::npos);
}
