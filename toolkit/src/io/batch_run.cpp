#include <rastrum/atomic_file.hpp>
#include <rastrum/batch_run.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/provenance.hpp>
#include <rastrum/sha256.hpp>
#include <rastrum/version.hpp>

#include <cerrno>
#include <cstring>
#include <fcntl.h>
#include <map>
#include <sys/file.h>
#include <unistd.h>

namespace rastrum {

namespace fs = std::filesystem;

namespace {

constexpr const char* manifest_name = "manifest.json";
constexpr const char* lock_name = "manifest.lock";
constexpr const char* child_name = "rastrum";

// The message a command printed before failing: its last "error:" line, without the prefix.
std::string error_message(const std::string& stderr_text) {
    std::string found, line;
    std::size_t start = 0;
    while (start < stderr_text.size()) {
        const auto end = stderr_text.find('\n', start);
        line = stderr_text.substr(start, end == std::string::npos ? std::string::npos : end - start);
        if (const auto at = line.find("error: "); at != std::string::npos) found = line.substr(at + 7);
        if (end == std::string::npos) break;
        start = end + 1;
    }
    return found;
}

// A folder and its parents, or output_error naming it with the system's reason (never the
// library's "filesystem error: cannot create directories: ...").
void create_folders(const fs::path& folder) {
    std::error_code ec;
    fs::create_directories(folder, ec);
    if (ec) throw output_error(folder.string(), "cannot create the folder: " + ec.message());
}

// Held for the whole run: a second batch on the same folder would interleave manifests. flock
// ends with the process, however it ends, so a killed batch never leaves a stale lock.
class folder_lock {
public:
    explicit folder_lock(const fs::path& folder) {
        create_folders(folder);
        const fs::path path = folder / lock_name;
        fd_ = ::open(path.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0644);
        if (fd_ < 0) throw output_error(path.string(), std::strerror(errno));
        if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
            ::close(fd_);
            throw usage_error("another rastrum batch is writing to " + folder.string() + " (it holds " + path.string() + ")");
        }
    }
    ~folder_lock() { ::close(fd_); }
    folder_lock(const folder_lock&) = delete;
    folder_lock& operator=(const folder_lock&) = delete;

private:
    int fd_ = -1;
};

// Refuses to write into a folder the user filled with something else.
void check_output_folder(const batch_plan& plan) {
    const fs::path folder = output_folder_of(plan);
    std::error_code ec;
    if (!fs::exists(folder, ec)) return;
    if (!fs::is_directory(folder, ec)) throw usage_error(plan.path + ": output " + plan.output_folder + " is not a folder");
    if (fs::exists(folder / manifest_name, ec)) return;
    fs::directory_iterator it(folder, ec);
    if (ec) throw output_error(folder.string(), "cannot list the output folder: " + ec.message());
    for (; it != fs::directory_iterator(); it.increment(ec)) {
        if (it->path().filename() != lock_name) {
            throw usage_error(plan.path + ": output folder " + plan.output_folder +
                              " holds files but no manifest.json, so it is not a batch's output folder; name a new folder");
        }
    }
}

// Atomic writes leave NAME.tmp-PID-N behind only when their process was killed; under the lock
// every such file beside one of the batch's own outputs is litter from a stopped task.
void remove_temporaries(const fs::path& folder, const std::string& name, const std::string& pid = "") {
    std::error_code ec;
    if (!fs::is_directory(folder, ec)) return;
    const std::string prefix = name + ".tmp-" + pid;
    for (const auto& entry: fs::directory_iterator(folder, ec)) {
        if (entry.path().filename().string().rfind(prefix, 0) == 0) fs::remove(entry.path(), ec);
    }
}

void remove_output_temporaries(const fs::path& out, const std::vector<std::string>& outputs, const std::string& pid = "") {
    for (const auto& o: outputs) {
        const fs::path p = out / o;
        remove_temporaries(p.parent_path(), p.filename().string(), pid);
    }
}

void write_manifest(const fs::path& out, const batch_manifest& manifest) {
    write_text_atomically((out / manifest_name).string(), manifest_json(manifest).dump(2) + "\n");
}

std::vector<std::string> task_command(const batch_plan& plan, const planned_task& t, unsigned threads) {
    const plan_analysis& a = plan.analyses[t.analysis];
    std::vector<std::string> command{child_name, a.kind, plan.inputs[t.input].path};
    for (const auto& o: command_options(a)) command.push_back(o);
    const auto& outputs = find_analysis_kind(a.kind)->outputs;
    for (std::size_t i = 0; i < outputs.size(); ++i) {
        command.push_back(outputs[i].option);
        command.push_back((fs::path(plan.output_folder) / t.outputs[i]).string());
    }
    command.insert(command.end(), {"--quiet", "--threads", std::to_string(threads)});
    return command;
}

// Hashes the inputs and decides for every task whether it runs (pending, with the reason) or is
// skipped (the previous record, kept). Returns false when `stop` fired meanwhile.
bool prepare(const batch_plan& plan, const batch_settings& settings, const interruption* stop,
             const batch_reporter& report, batch_manifest& manifest) {
    const fs::path out = output_folder_of(plan);
    manifest.version = version();
    manifest.plan_path = plan.path;
    manifest.plan_sha256 = file_sha256(plan.path);
    manifest.output_folder = plan.output_folder;
    manifest.command_line = settings.command_line;
    manifest.threads = settings.threads;
    manifest.started_utc = utc_now();

    std::optional<batch_manifest> previous;
    try {
        previous = read_manifest(out / manifest_name);
    } catch (const error& e) {
        if (report.warning) report.warning(std::string(e.what()) + "; every task runs");
    }
    std::map<std::pair<std::string, std::string>, const task_record*> before;
    if (previous) {
        for (const auto& t: previous->tasks) before[{t.input_path, t.analysis}] = &t;
    }
    std::vector<std::string> input_sha(plan.inputs.size());
    for (std::size_t i = 0; i < plan.inputs.size(); ++i) {
        if (stop && stop->signal()) return false;
        try {
            input_sha[i] = file_sha256(plan_resolve(plan, plan.inputs[i].path).string());
        } catch (const error&) {
            // Left empty: the task runs and its command reports the problem with the input.
        }
    }
    for (const auto& t: plan_tasks(plan)) {
        const plan_analysis& a = plan.analyses[t.analysis];
        task_record r;
        r.input_path = plan.inputs[t.input].path;
        r.input_sha256 = input_sha[t.input];
        r.analysis = a.section;
        r.kind = a.kind;
        r.options = command_options(a);
        r.command = task_command(plan, t, settings.threads);
        if (!r.input_sha256.empty()) r.task_key = task_key(version(), r.input_sha256, r.kind, r.options);
        for (const auto& o: t.outputs) r.outputs.push_back({o, ""});
        const auto it = before.find({r.input_path, r.analysis});
        const task_record* earlier = it == before.end() ? nullptr : it->second;
        if (settings.force) {
            r.reason = "forced (--force)";
        } else if (r.input_sha256.empty()) {
            r.reason = "its input cannot be read";
        } else {
            r.reason = reason_to_run(r, earlier, previous ? previous->version : "", out);
        }
        if (r.reason.empty()) {
            task_record kept = *earlier;
            kept.status = task_status::skipped;
            kept.reason = "unchanged: same input, options and rastrum version, outputs intact";
            r = kept;
        } else {
            r.outputs.clear();
        }
        manifest.tasks.push_back(r);
    }
    return true;
}

void run_task(const batch_plan& plan, const batch_settings& settings, const interruption& stop, task_record& task,
              const std::vector<std::string>& planned_outputs) {
    const fs::path out = output_folder_of(plan);
    task.started_utc = utc_now();
    for (const auto& o: planned_outputs) create_folders((out / o).parent_path());
    remove_output_temporaries(out, planned_outputs);
    // The batch's outputs are its own files: something else put in their place (a FIFO would stop
    // the task until someone read it, a link would send its results elsewhere) fails the task.
    for (const auto& o: planned_outputs) {
        std::error_code ec;
        const auto status = fs::symlink_status(out / o, ec);
        if (fs::exists(status) && !fs::is_regular_file(status)) {
            task.finished_utc = utc_now();
            task.status = task_status::failed;
            task.error = (fs::path(plan.output_folder) / o).string() +
                         " is not a regular file; the batch writes only files of its own there: move it away";
            return;
        }
    }
    const child_result child = run_child(settings.program, task.command, plan.folder.string(), &stop);
    remove_output_temporaries(out, planned_outputs, std::to_string(child.pid) + "-");
    task.finished_utc = utc_now();
    task.seconds = child.seconds;
    task.exit_code = child.exit_code;
    task.signal = child.signal;
    task.stderr_text = child.err;
    if (child.exit_code == 0) {
        for (const auto& o: planned_outputs) {
            const fs::path p = out / o;
            std::error_code ec;
            if (!fs::is_regular_file(p, ec)) {
                task.status = task_status::failed;
                task.error = "the command succeeded but wrote no " + o;
                task.outputs.clear();
                return;
            }
            task.outputs.push_back({o, file_sha256(p.string())});
        }
        task.status = task_status::done;
        return;
    }
    if (child.interrupted) {
        task.status = task_status::interrupted;
        task.error = "stopped by the batch on signal " + std::to_string(stop.signal()) + "; the next run does it again";
        return;
    }
    task.status = task_status::failed;
    task.error = error_message(child.err);
    if (task.error.empty()) task.error = "the command ended with " + describe_ending(child);
}

}  // namespace

fs::path output_folder_of(const batch_plan& plan) { return plan_resolve(plan, plan.output_folder); }

option_catalogue describe_analysis_options(const std::string& program) {
    option_catalogue catalogue;
    for (const auto& kind: analysis_kinds()) {
        const child_result r = run_child(program, {child_name, kind.name, "--describe-options"}, "", nullptr);
        if (r.exit_code != 0) {
            throw internal_error("'rastrum " + kind.name + " --describe-options' ended with " + describe_ending(r) + ": " + r.err);
        }
        try {
            const nlohmann::json described = nlohmann::json::parse(r.out);
            for (const auto& o: described.at("options")) {
                catalogue[kind.name].push_back(
                    {o.at("name").get<std::string>(), o.at("takes_value").get<bool>(), o.at("repeatable").get<bool>()});
            }
        } catch (const nlohmann::json::exception& e) {
            throw internal_error("'rastrum " + kind.name + " --describe-options' printed no option list: " + e.what());
        }
    }
    return catalogue;
}

void check_analysis_options(const batch_plan& plan, const std::string& program) {
    const auto tasks = plan_tasks(plan);
    for (std::size_t a = 0; a < plan.analyses.size(); ++a) {
        const plan_analysis& analysis = plan.analyses[a];
        const auto first = std::find_if(tasks.begin(), tasks.end(), [&](const planned_task& t) { return t.analysis == a; });
        if (first == tasks.end()) {
            throw usage_error(plan.path + ":" + std::to_string(analysis.line) + ": [" + analysis.section +
                              "] has no inputs to run on");
        }
        std::vector<std::string> command{child_name, analysis.kind, plan.inputs[first->input].path};
        for (const auto& o: command_options(analysis)) command.push_back(o);
        command.push_back("--check-options");
        const child_result r = run_child(program, command, plan.folder.string(), nullptr);
        if (r.exit_code == 0) continue;
        const std::string message = error_message(r.err);
        if (r.exit_code != 2 || message.empty()) {
            throw error("checking the options of [" + analysis.section + "] failed with " + describe_ending(r) + ": " + r.err);
        }
        // Point at the key the command's message names, else at the section.
        int line = analysis.line;
        std::string where = "[" + analysis.section + "]";
        for (const auto& s: analysis.settings) {
            if (message.find("--" + s.key) != std::string::npos) {
                line = s.line;
                where += " " + s.key;
                break;
            }
        }
        throw usage_error(plan.path + ":" + std::to_string(line) + ": " + where + ": rastrum " + analysis.kind + " refuses " +
                          (line == analysis.line ? "these options: " : "it: ") + message);
    }
}

batch_manifest preview_batch(const batch_plan& plan, const batch_settings& settings, const batch_reporter& report) {
    check_output_folder(plan);
    batch_manifest manifest;
    prepare(plan, settings, nullptr, report, manifest);
    return manifest;
}

batch_manifest run_batch(const batch_plan& plan, const batch_settings& settings, const interruption& stop,
                         const batch_reporter& report) {
    check_output_folder(plan);
    const fs::path out = output_folder_of(plan);
    const folder_lock lock(out);
    remove_temporaries(out, manifest_name);
    batch_manifest manifest;
    if (!prepare(plan, settings, &stop, report, manifest)) {
        manifest.state = "interrupted";
        return manifest;  // nothing ran, and the previous manifest still says what is there
    }
    write_manifest(out, manifest);
    const auto tasks = plan_tasks(plan);
    for (std::size_t i = 0; i < manifest.tasks.size(); ++i) {
        task_record& task = manifest.tasks[i];
        if (task.status == task_status::pending) {
            if (stop.signal()) break;
            run_task(plan, settings, stop, task, tasks[i].outputs);
            write_manifest(out, manifest);
        }
        if (report.task_ended) report.task_ended(task, i + 1, manifest.tasks.size());
    }
    manifest.state = stop.signal() ? "interrupted" : "finished";
    manifest.finished_utc = utc_now();
    write_manifest(out, manifest);
    return manifest;
}

}  // namespace rastrum
