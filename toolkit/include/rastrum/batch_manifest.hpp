#pragma once
/// The record of a batch run, OUTPUT/manifest.json: what each task was given, what it wrote and
/// how it ended. A re-run reads it to skip tasks whose results are still current. Keys are a
/// contract, like those of result files: add keys freely, never rename or remove one.
#include <nlohmann/json.hpp>

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace rastrum {

struct output_record {
    std::string path;  // relative to the output folder
    std::string sha256;
};

enum class task_status { pending, done, skipped, failed, interrupted };
const char* task_status_name(task_status status);

/// One (input, analysis) task. A skipped task keeps the record of the run that made its outputs.
struct task_record {
    std::string input_path;  // relative to the plan's folder unless absolute
    std::string input_sha256;
    std::string analysis;    // the plan's section, e.g. "stiminfo.latency"
    std::string kind;        // "stiminfo"
    std::vector<std::string> options;  // the normalised options the key covers
    std::vector<std::string> command;  // every argument the task's process got, its name first
    std::string task_key;
    std::vector<output_record> outputs;  // listed once the task is done
    task_status status = task_status::pending;
    std::string reason;                  // why it ran, or why it was skipped
    std::optional<int> exit_code;        // of the task's process
    std::optional<int> signal;           // that ended it, if one did
    std::string error;                   // the process's error message when it failed
    std::string stderr_text;             // all it wrote to stderr (the end, if long)
    std::string started_utc, finished_utc;
    double seconds = 0;
};

struct batch_manifest {
    std::string version;  // of rastrum that wrote the manifest
    std::string plan_path;
    std::string plan_sha256;
    std::string output_folder;  // as the plan gives it
    std::string command_line;
    unsigned threads = 0;       // what each task was given with --threads
    std::string state = "running";  // running, finished or interrupted
    std::string started_utc, finished_utc;
    std::vector<task_record> tasks;
};

nlohmann::ordered_json manifest_json(const batch_manifest& manifest);

/// The manifest in `path`; nullopt when there is none. Throws error when it cannot be understood.
std::optional<batch_manifest> read_manifest(const std::filesystem::path& path);

/// The identity of a task's results: SHA-256 over the tool version, the input's SHA-256, the
/// analysis kind and its normalised options. Equal keys mean equal results.
std::string task_key(const std::string& version, const std::string& input_sha256, const std::string& kind,
                     const std::vector<std::string>& options);

/// Why `wanted` must run, given what the previous run (by rastrum `previous_version`) recorded for
/// the same input and analysis (nullptr: nothing), or an empty string when the previous outputs are
/// current: done with the same key, the same output paths (`wanted.outputs`, without SHA-256), and
/// every output still in `output_folder` with its recorded SHA-256.
std::string reason_to_run(const task_record& wanted, const task_record* previous, const std::string& previous_version,
                          const std::filesystem::path& output_folder);

}  // namespace rastrum
