#pragma once
/// Where a result came from, so any number can be traced to the command that made it.
#include <rastrum/recording.hpp>

#include <nlohmann/json.hpp>
#include <string>

namespace rastrum {

struct provenance {
    std::string command_line;
    std::string input_path;
    std::string input_sha256;
    std::string started_utc;   // ISO 8601
    std::string finished_utc;
    unsigned threads = 1;
};

/// Current UTC time as ISO 8601 with seconds.
std::string utc_now();

/// The head every result file starts with: tool, version, analysis, input, run.
nlohmann::ordered_json result_head(const std::string& analysis, const provenance& origin);

/// Adds "trials" (the indices of --trials, or null for all) and "excluded_trials" to `parameters`.
void add_trial_selection(nlohmann::ordered_json& parameters, const trial_selection& selection);

}  // namespace rastrum
