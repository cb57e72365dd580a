#pragma once
/// Information I(S;R) between discrete stimulus conditions S and a discrete response R, from trials,
/// by several estimators that differ in how they handle the upward bias of small samples. Values in
/// bits. Formulas and references in notes/methods.md ("Stimulus information").
#include <rastrum/types.hpp>

#include <array>
#include <cstdint>
#include <functional>
#include <string>
#include <vector>

namespace rastrum {

/// One response code and one condition index per trial.
struct labelled_responses {
    std::vector<std::uint32_t> condition;  // 0 .. conditions - 1
    std::vector<word_code> response;
    std::size_t conditions = 0;
    /// Size of the response space the code can take (for example 2^L binary words); NSB needs it
    /// and Panzeri-Treves bounds its count of relevant responses by it.
    double alphabet = 0;
};

enum class info_estimator { plugin, miller_madow, jackknife, panzeri_treves, quadratic_extrapolation, nsb };
inline constexpr int info_estimator_count = 6;
inline constexpr std::array<info_estimator, info_estimator_count> all_info_estimators{
    info_estimator::plugin, info_estimator::miller_madow, info_estimator::jackknife,
    info_estimator::panzeri_treves, info_estimator::quadratic_extrapolation, info_estimator::nsb};

/// "plug-in", "miller-madow", "jackknife", "panzeri-treves", "quadratic-extrapolation", "nsb"; and
/// back (usage_error on anything else).
const char* info_estimator_name(info_estimator e);
info_estimator parse_info_estimator(const std::string& name);

struct info_settings {
    unsigned splits = 8;     // quadratic extrapolation: random stratified splits of the trials
    std::uint64_t seed = 1;
};

/// I(S;R) by `estimator`. Expects every condition index below `conditions` and at least one trial.
double stimulus_information(const labelled_responses& trials, info_estimator estimator, const info_settings& settings);

/// Extrapolates any statistic of a set of trials to infinitely many: `value(use)` on all trials (an
/// empty `use`) and on random halves and quarters drawn within each condition over `settings.splits`
/// splits, fitted as v(N) = v_inf + a/N + b/N^2 with each level weighing alike.
double extrapolate_over_trials(const std::vector<std::uint32_t>& condition, std::size_t conditions,
                               const std::function<double(const std::vector<std::size_t>&)>& value,
                               const info_settings& settings);

/// Entropy of the responses alone (all conditions pooled) by `estimator`: the estimator applied to a
/// single histogram (quadratic extrapolation: plug-in values on random halves and quarters of the trials).
double response_entropy(const std::vector<word_code>& responses, double alphabet, info_estimator estimator,
                        const info_settings& settings);

/// H(R|S) by `estimator`, defined as response_entropy - stimulus_information, so that every estimator's
/// conditional entropy and information agree with each other.
double conditional_response_entropy(const labelled_responses& trials, info_estimator estimator,
                                    const info_settings& settings);

/// The first-order bias of the plug-in information, [sum_s (R_s - 1) - (R - 1)] / (2 N ln 2), for
/// given counts of relevant responses R_s (per condition) and R (pooled), N trials
/// (Panzeri & Treves 1996, Network 7:87).
double panzeri_treves_bias(const std::vector<double>& relevant_per_condition, double relevant_pooled, double trials);

/// The number of response values with non-zero probability in a histogram of `samples` samples,
/// estimated as in notes/methods.md (observed values plus the expected number of unseen ones),
/// bounded by `alphabet`.
double relevant_responses(const std::vector<count>& counts, double alphabet);

}  // namespace rastrum
