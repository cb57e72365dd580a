#include <rastrum/batch_manifest.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/sha256.hpp>

#include <fstream>
#include <sstream>

namespace rastrum {

namespace fs = std::filesystem;
using nlohmann::ordered_json;

namespace {

constexpr int manifest_format = 1;
const char* const status_names[] = {"pending", "done", "skipped", "failed", "interrupted"};

ordered_json text_or_null(const std::string& text) { return text.empty() ? ordered_json() : ordered_json(text); }

template <class T>
ordered_json optional_json(const std::optional<T>& value) {
    return value ? ordered_json(*value) : ordered_json();
}

ordered_json task_json(const task_record& t) {
    ordered_json outputs = ordered_json::array();
    for (const auto& o: t.outputs) outputs.push_back({{"path", o.path}, {"sha256", o.sha256}});
    ordered_json j;
    j["input"] = {{"path", t.input_path}, {"sha256", text_or_null(t.input_sha256)}};
    j["analysis"] = t.analysis;
    j["kind"] = t.kind;
    j["options"] = t.options;
    j["command"] = t.command;
    j["task_key"] = text_or_null(t.task_key);
    j["outputs"] = outputs;
    j["status"] = task_status_name(t.status);
    j["reason"] = t.reason;
    j["exit_code"] = optional_json(t.exit_code);
    j["signal"] = optional_json(t.signal);
    j["error"] = t.error;
    j["stderr"] = t.stderr_text;
    j["started_utc"] = text_or_null(t.started_utc);
    j["finished_utc"] = text_or_null(t.finished_utc);
    j["seconds"] = t.seconds;
    return j;
}

std::string text_of(const nlohmann::json& j) { return j.is_null() ? std::string() : j.get<std::string>(); }

template <class T>
std::optional<T> optional_of(const nlohmann::json& j) {
    return j.is_null() ? std::nullopt : std::optional<T>(j.get<T>());
}

task_status parse_status(const std::string& name) {
    for (int s = 0; s < 5; ++s) {
        if (name == status_names[s]) return static_cast<task_status>(s);
    }
    throw error("unknown task status '" + name + "'");
}

task_record task_from(const nlohmann::json& j) {
    task_record t;
    t.input_path = j.at("input").at("path").get<std::string>();
    t.input_sha256 = text_of(j.at("input").at("sha256"));
    t.analysis = j.at("analysis").get<std::string>();
    t.kind = j.at("kind").get<std::string>();
    t.options = j.at("options").get<std::vector<std::string>>();
    t.command = j.at("command").get<std::vector<std::string>>();
    t.task_key = text_of(j.at("task_key"));
    for (const auto& o: j.at("outputs")) t.outputs.push_back({o.at("path").get<std::string>(), o.at("sha256").get<std::string>()});
    t.status = parse_status(j.at("status").get<std::string>());
    t.reason = j.at("reason").get<std::string>();
    t.exit_code = optional_of<int>(j.at("exit_code"));
    t.signal = optional_of<int>(j.at("signal"));
    t.error = j.at("error").get<std::string>();
    t.stderr_text = j.at("stderr").get<std::string>();
    t.started_utc = text_of(j.at("started_utc"));
    t.finished_utc = text_of(j.at("finished_utc"));
    t.seconds = j.at("seconds").get<double>();
    return t;
}

}  // namespace

const char* task_status_name(task_status status) { return status_names[static_cast<int>(status)]; }

ordered_json manifest_json(const batch_manifest& m) {
    ordered_json summary;
    summary["tasks"] = m.tasks.size();
    for (const char* name: status_names) summary[name] = 0;
    ordered_json tasks = ordered_json::array();
    for (const auto& t: m.tasks) {
        tasks.push_back(task_json(t));
        summary[task_status_name(t.status)] = summary[task_status_name(t.status)].get<int>() + 1;
    }
    ordered_json j;
    j["tool"] = "rastrum";
    j["version"] = m.version;
    j["analysis"] = "batch";
    j["manifest_format"] = manifest_format;
    j["plan"] = {{"path", m.plan_path}, {"sha256", m.plan_sha256}};
    j["output_folder"] = m.output_folder;
    j["run"] = {{"command_line", m.command_line},
                {"threads", m.threads},
                {"state", m.state},
                {"started_utc", text_or_null(m.started_utc)},
                {"finished_utc", text_or_null(m.finished_utc)}};
    j["summary"] = summary;
    j["tasks"] = tasks;
    return j;
}

std::optional<batch_manifest> read_manifest(const fs::path& path) {
    std::error_code ec;
    if (!fs::exists(path, ec)) return std::nullopt;
    std::ifstream in(path, std::ios::binary);
    if (!in) throw error("cannot read " + path.string());
    try {
        const nlohmann::json j = nlohmann::json::parse(in);
        if (j.at("manifest_format").get<int>() != manifest_format) throw error("unknown manifest_format");
        batch_manifest m;
        m.version = j.at("version").get<std::string>();
        m.plan_path = j.at("plan").at("path").get<std::string>();
        m.plan_sha256 = j.at("plan").at("sha256").get<std::string>();
        m.output_folder = j.at("output_folder").get<std::string>();
        const auto& run = j.at("run");
        m.command_line = run.at("command_line").get<std::string>();
        m.threads = run.at("threads").get<unsigned>();
        m.state = run.at("state").get<std::string>();
        m.started_utc = text_of(run.at("started_utc"));
        m.finished_utc = text_of(run.at("finished_utc"));
        for (const auto& t: j.at("tasks")) m.tasks.push_back(task_from(t));
        return m;
    } catch (const nlohmann::json::exception& e) {
        throw error(path.string() + " is not a manifest this version understands: " + e.what());
    }
}

std::string task_key(const std::string& version, const std::string& input_sha256, const std::string& kind,
                     const std::vector<std::string>& options) {
    // JSON keeps the parts apart: no two different lists of options give the same text.
    const nlohmann::json parts = {"rastrum task", version, input_sha256, kind, options};
    return text_sha256(parts.dump());
}

std::string reason_to_run(const task_record& wanted, const task_record* previous, const std::string& previous_version,
                          const fs::path& output_folder) {
    if (!previous) return "new";
    switch (previous->status) {
    case task_status::pending: return "the previous run stopped before it";
    case task_status::interrupted: return "the previous run was stopped during it";
    case task_status::failed: return "it failed last time";
    case task_status::done:
    case task_status::skipped: break;
    }
    if (previous->task_key != wanted.task_key) {
        if (previous->input_sha256 != wanted.input_sha256) return "the input changed";
        if (previous->options != wanted.options || previous->kind != wanted.kind) return "the options changed";
        return "its results were made by rastrum " + previous_version + ", another version";
    }
    std::vector<std::string> had, wants;
    for (const auto& o: previous->outputs) had.push_back(o.path);
    for (const auto& o: wanted.outputs) wants.push_back(o.path);
    if (had != wants) return "it has other outputs now";
    for (const auto& o: previous->outputs) {
        const fs::path p = output_folder / o.path;
        std::error_code ec;
        if (!fs::is_regular_file(p, ec)) return "output " + o.path + " is missing";
        if (file_sha256(p.string()) != o.sha256) return "output " + o.path + " changed since it was written";
    }
    return {};
}

}  // namespace rastrum
