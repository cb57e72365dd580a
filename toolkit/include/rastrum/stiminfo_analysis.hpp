#pragma once
/// Stimulus information over a recording: for each unit and window, how much its response tells
/// about which of several labelled conditions was shown, by every chosen estimator, with a
/// label-shuffle null, a bootstrap interval and bits per spike.
#include <rastrum/parallel.hpp>
#include <rastrum/population.hpp>
#include <rastrum/recording.hpp>
#include <rastrum/responses.hpp>
#include <rastrum/stiminfo_calibration.hpp>
#include <rastrum/stimulus_information.hpp>

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

struct stiminfo_request {
    std::vector<std::string> units;      // empty: every unit (unless populations are given)
    std::vector<std::vector<std::string>> populations;  // joint responses of these units
    info_estimator population_estimator = info_estimator::quadratic_extrapolation;
    unsigned within_condition_shuffles = 5;             // for H_sh(R|S)
    std::vector<std::string> stimuli;    // empty: every label
    trial_selection trials;              // only these trials
    response_spec response;              // window, code, bin width, binary
    std::optional<std::pair<seconds, seconds>> slide;  // (width, step): windows across response.window
    std::vector<info_estimator> estimators{all_info_estimators.begin(), all_info_estimators.end()};
    unsigned null_shuffles = 200;
    unsigned bootstrap = 200;
    info_estimator interval_estimator = info_estimator::jackknife;
    /// Calibration at the record's own sample size (stiminfo_calibration.hpp): N surrogate data sets
    /// (0: off; else at least 2), and as many at 2x and 4x the trials for the trials needed. On by
    /// default, with as many as the direct method's: coverage and cost at 10 in notes/validation-
    /// coverage.md and notes/methods-calibration.md.
    unsigned surrogates = 10;
    unsigned trial_fraction_repeats = 4;  // draws per fraction of the trials; 0: no trial-fraction curve
    info_settings settings;
    unsigned threads = 1;
    std::uint64_t max_memory = 0;        // [bytes] the bound of memory_bound.hpp; 0: its default
    progress_callback progress;  // told after each unit (or population) and window
};

/// Population values by the population estimator (`independent` is always the extrapolated plug-in
/// product of marginals) and their 95% intervals: the envelope of the values by every bias-corrected
/// estimator asked for, widened by 1.96 bootstrap standard deviations of the population estimator.
struct population_record {
    population_values values;
    population_values low;
    population_values high;
};

struct stiminfo_record {
    std::string unit;                                        // "u1", or "u1+u2" for a population
    std::vector<std::string> units;
    std::pair<seconds, seconds> window;                      // [s]
    std::size_t trials = 0;
    std::vector<std::pair<std::string, std::size_t>> trials_per_stimulus;
    double stimulus_entropy_bits = 0;
    double response_alphabet = 0;
    std::size_t distinct_responses = 0;
    std::map<info_estimator, double> info_bits;
    unsigned null_shuffles = 0;
    double null_mean_bits = 0;                               // plug-in under shuffled labels
    double null_p_value = 1;                                 // of the plug-in value
    double null_subtracted_bits = 0;                         // plug-in minus the null mean
    std::pair<double, double> null_band{0, 0};               // 2.5% and 97.5% quantiles of the null plug-in
    /// 95%: the envelope of the bias-corrected estimates and the null-subtracted plug-in value, widened
    /// on each side by 1.96 bootstrap standard deviations of request.interval_estimator.
    std::pair<double, double> interval{0, 0};
    bool few_trials = false;                                 // fewer trials in some condition than distinct responses
    double mean_spikes = 0;                                  // per trial in the window (all units)
    /// Each estimator on trial_fractions of the trials (stratified by condition, mean over
    /// trial_fraction_repeats draws; the last fraction is 1, all trials): how far from converged it is.
    std::vector<double> trial_fractions;
    std::map<info_estimator, std::vector<double>> info_by_fraction;
    std::optional<population_record> population;
    /// Present when request.surrogates > 0: the calibrated value and interval (the record's headline
    /// then; `interval` keeps the envelope).
    std::optional<stiminfo_calibration> calibration;
    std::vector<std::string> warnings;
};

/// Throws usage_error for unknown units or labels and bad settings, insufficient_data when a window
/// is longer than the shortest trial or fewer than two conditions keep two trials and, before
/// anything large is allocated, when the code cannot hold the request (a word longer than 64
/// letters, more than 2^53 latency bins) or the analysis would need more memory than `max_memory` allows.
std::vector<stiminfo_record> run_stiminfo(const recording& rec, const stiminfo_request& request);

void check_stiminfo_request(const stiminfo_request& request);

}  // namespace rastrum
