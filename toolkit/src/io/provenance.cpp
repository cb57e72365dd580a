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

nlohmann::ordered_json origin_json(const recording& rec) {
    auto text = [&](const place& p) { return p.file.empty() || p.file == rec.source ? p.object : p.file + ": " + p.object; };
    nlohmann::ordered_json j;
    j["format"] = rec.origin.format;
    j["format_detail"] = rec.origin.format_detail;
    j["units"] = text(rec.origin.units);
    j["trials"] = text(rec.origin.trials);
    j["labels"] = rec.has_stimulus() ? nlohmann::ordered_json(text(rec.origin.labels)) : nlohmann::ordered_json(nullptr);
    return j;
}

nlohmann::ordered_json input_json(const provenance& origin) {
    nlohmann::ordered_json j = {{"path", origin.input_path}, {"sha256", origin.input_sha256}};
    if (!origin.input_read.is_null()) j["read"] = origin.input_read;
    for (const auto& [path, sha256]: origin.other_inputs) j["other_files"].push_back({{"path", path}, {"sha256", sha256}});
    return j;
}

nlohmann::ordered_json result_head(const std::string& analysis, const provenance& origin) {
    nlohmann::ordered_json j;
    j["tool"] = "rastrum";
    j["version"] = version();
    j["analysis"] = analysis;
    j["input"] = input_json(origin);
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
