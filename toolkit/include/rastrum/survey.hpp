#pragma once
/// What a recording holds, before any analysis: units, trials, labels.
#include <rastrum/recording.hpp>
#include <rastrum/recording_source.hpp>

#include <nlohmann/json.hpp>
#include <string>

namespace rastrum {

struct unit_overview {
    std::string id;
    std::size_t spikes = 0;
    std::size_t spikes_in_trials = 0;
    std::size_t spikes_outside_trials = 0;
    double rate_in_trials_hz = 0;  // spikes in trials / summed trial durations
};

struct recording_overview {
    std::vector<unit_overview> units;
    std::size_t trials = 0;
    seconds shortest_trial = 0, longest_trial = 0, total_trial_time = 0;
    std::vector<std::pair<std::string, std::size_t>> labels;  // with trial counts
    std::vector<std::string> warnings;                         // the loader's
    recording_origin origin;                                   // what was read from where
    std::string source;
};

recording_overview survey(const recording& rec);

nlohmann::ordered_json survey_json(const recording_overview& o);
/// A readable report for a terminal.
std::string survey_text(const recording_overview& o, const std::string& path);

/// What the file offers (its tables and columns, or its variables), for choosing input options.
nlohmann::ordered_json contents_json(const source_contents& c);
std::string contents_text(const source_contents& c);

}  // namespace rastrum
