#include <rastrum/provenance.hpp>
#include <rastrum/version.hpp>

#include <ctime>

namespace rastrum {

std::string utc_now() {
    const std::time_t now = std::time(nullptr);
    std::tm tm{};
    gmtime_r(&now, &tm);
    char text[32];
    std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &tm);
    return text;
}

nlohmann::ordered_json result_head(const std::string& analysis, const provenance& origin) {
    nlohmann::ordered_json j;
    j["tool"] = "rastrum";
    j["version"] = version();
    j["analysis"] = analysis;
    j["input"] = {{"path", origin.input_path}, {"sha256", origin.input_sha256}};
    j["run"] = {{"command_line", origin.command_line},
                {"started_utc", origin.started_utc},
                {"finished_utc", origin.finished_utc},
                {"threads", origin.threads}};
    return j;
}

void add_trial_selection(nlohmann::ordered_json& parameters, const trial_selection& selection) {
    parameters["trials"] = selection.only ? nlohmann::ordered_json(*selection.only) : nlohmann::ordered_json(nullptr);
    parameters["excluded_trials"] = selection.excluded;
}

}  // namespace rastrum
