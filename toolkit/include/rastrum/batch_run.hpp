#pragma once
/// Running a batch plan: every (input, analysis) task as a child process of `program` (rastrum
/// itself), one after another, with the manifest rewritten atomically after each task. Tasks whose
/// results are current are skipped; SIGINT, SIGTERM and SIGHUP stop the running task and leave a
/// manifest that says what finished.
#include <rastrum/batch_manifest.hpp>
#include <rastrum/batch_plan.hpp>
#include <rastrum/child_process.hpp>

#include <functional>
#include <string>

namespace rastrum {

struct batch_settings {
    std::string program;       // the rastrum executable that runs each task
    std::string command_line;  // of the batch, for the manifest
    unsigned threads = 0;      // --threads of every task (0: one per core)
    bool force = false;        // run every task, current or not
};

/// What a batch tells its user while it works.
struct batch_reporter {
    std::function<void(const std::string&)> warning;
    /// After each task, skipped ones included: the record, its number (from 1) and the task count.
    std::function<void(const task_record&, std::size_t, std::size_t)> task_ended;
};

/// Asks each analysis command for its options (`program KIND --describe-options`).
option_catalogue describe_analysis_options(const std::string& program);

/// Lets each analysis command check its options before any work (`program KIND FILE OPTIONS
/// --check-options`). Throws usage_error "PLAN:LINE: [section] key: ..." with the command's message.
void check_analysis_options(const batch_plan& plan, const std::string& program);

/// What a run would do, without writing anything: every task pending (with why) or skipped.
batch_manifest preview_batch(const batch_plan& plan, const batch_settings& settings, const batch_reporter& report);

/// Runs the plan. The returned manifest's state is "finished", or "interrupted" when `stop` fired.
/// Throws usage_error before any work when the output folder is not a batch's own or another
/// batch is writing to it.
batch_manifest run_batch(const batch_plan& plan, const batch_settings& settings, const interruption& stop,
                         const batch_reporter& report);

/// The folder results and the manifest go to, as this process can open it.
std::filesystem::path output_folder_of(const batch_plan& plan);

}  // namespace rastrum
