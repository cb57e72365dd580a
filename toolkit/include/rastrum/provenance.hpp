#pragma once
/// Where a result came from, so any number can be traced to the command that made it.
#include <rastrum/recording.hpp>

#include <nlohmann/json.hpp>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

struct provenance {
    std::string command_line;
    std::string input_path;
    std::string input_sha256;
    nlohmann::ordered_json input_read;                                // origin_json of the recording
    std::vector<std::pair<std::string, std::string>> other_inputs;    // further files read (path, sha256)
    std::string started_utc;   // ISO 8601
    std::string finished_utc;
    unsigned threads = 1;
};

/// What a recording was read from: {"format", "format_detail", "units", "trials", "labels"}, each
/// place as "object" or, in another file than the recording's, "file: object"; labels null when none.
nlohmann::ordered_json origin_json(const recording& rec);

/// Current UTC time as ISO 8601 with seconds.
std::string utc_now();

/// {"path", "sha256", "read": origin_json, "other_files": [{"path", "sha256"}]}: the input of a result.
nlohmann::ordered_json input_json(const provenance& origin);

/// The head every result file starts with: tool, version, analysis, input, run.
nlohmann::ordered_json result_head(const std::string& analysis, const provenance& origin);

/// Adds "trials" (the indices of --trials, or null for all) and "excluded_trials" to `parameters`.
void add_trial_selection(nlohmann::ordered_json& parameters, const trial_selection& selection);

}  // namespace rastrum
