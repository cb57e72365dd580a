#pragma once
/// Stimulus information over a recording: for each unit and window, how much its response tells
/// about which of several labelled conditions was shown, by every chosen estimator, with a
/// label-shuffle null, a bootstrap interval and bits per spike.
#include <rastrum/recording.hpp>
#include <rastrum/responses.hpp>
#include <rastrum/stimulus_information.hpp>

#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

struct stiminfo_request {
    std::vector<std::string> units;      // empty: every unit
    std::vector<std::string> stimuli;    // empty: every label
    response_spec response;              // window, code, bin width, binary
    std::optional<std::pair<seconds, seconds>> slide;  // (width, step): windows across response.window
    std::vector<info_estimator> estimators{all_info_estimators.begin(), all_info_estimators.end()};
    unsigned null_shuffles = 200;
    unsigned bootstrap = 200;
    info_estimator interval_estimator = info_estimator::jackknife;
    info_settings settings;
    unsigned threads = 1;
};

struct stiminfo_record {
    std::string unit;
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
    std::pair<double, double> interval{0, 0};                // 95%, of request.interval_estimator
    double mean_spikes = 0;                                  // per trial in the window
    std::vector<std::string> warnings;
};

/// Throws usage_error for unknown units or labels and bad settings, insufficient_data when a window
/// is longer than the shortest trial or fewer than two conditions keep two trials.
std::vector<stiminfo_record> run_stiminfo(const recording& rec, const stiminfo_request& request);

void check_stiminfo_request(const stiminfo_request& request);

}  // namespace rastrum
