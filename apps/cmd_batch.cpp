#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/batch_run.hpp>
#include <rastrum/format.hpp>

#include <iostream>

namespace rastrum::app {

namespace {

constexpr int exit_tasks_failed = 5;
// Each task runs this very executable, so a batch never mixes versions of rastrum.
constexpr const char* self = "/proc/self/exe";

const char* const epilogue =
    "batch: 5 the batch ran but at least one task failed (the manifest gives each one's exit code and\n"
    "message; 6 for a task whose outputs cannot be written); 6 the batch cannot write its output folder\n"
    "or manifest; 128 + N when signal N stopped it (130 for SIGINT, 143 for SIGTERM).\n\n"
    "The plan (Boost config-file syntax; '#' starts a comment; paths relative to the plan's folder):\n"
    "  output = FOLDER          where results and manifest.json go\n"
    "  [inputs]                 or [inputs.NAME], a named group of recordings\n"
    "  files = PATTERN          a path or a pattern (*, ?, [...]); one a line; each must match a file\n"
    "  [direct]                 or [direct.NAME], [stiminfo], [stiminfo.NAME]: one analysis each;\n"
    "  bin-ms = 2,4             keys are the command's options without '--', switches as 'binary = true'\n"
    "  inputs = NAME,...        (in an analysis) only these groups; every input when absent\n"
    "Each task runs as 'rastrum KIND INPUT OPTIONS --json .. --csv .. --quiet --threads N' in its own\n"
    "process, in the plan's folder; results go to FOLDER/<input's path without extension>/<section>.json\n"
    "and .csv. FOLDER/manifest.json, rewritten after each task, records every task's input and options,\n"
    "outputs and their SHA-256, status (done, skipped, failed, interrupted, pending), exit code, message\n"
    "and stderr. A task whose input, options and rastrum version are unchanged and whose outputs are\n"
    "intact is skipped. SIGINT or SIGTERM stops the running task; the next run does what is left.\n";

std::string task_line(const task_record& t, std::size_t number, std::size_t count) {
    std::string line = "[" + std::to_string(number) + "/" + std::to_string(count) + "] " + t.input_path + " [" +
                       t.analysis + "]: " + task_status_name(t.status);
    switch (t.status) {
    case task_status::done: line += " in " + format_fixed(t.seconds, 1) + " s"; break;
    case task_status::skipped: line += " (unchanged)"; break;
    case task_status::failed: line += " (" + (t.exit_code ? "exit code " + std::to_string(*t.exit_code) : std::string("no exit code")) + "): " + t.error; break;
    case task_status::interrupted: line += ": " + t.error; break;
    case task_status::pending: break;
    }
    return line;
}

void print_preview(const batch_manifest& m) {
    for (const auto& t: m.tasks) {
        const bool runs = t.status == task_status::pending;
        std::cout << (runs ? "would run  " : "would skip ") << t.input_path << " [" << t.analysis << "]: " << t.reason << "\n";
        if (runs) std::cout << "    " << joined_command_line(t.command) << "\n";
    }
}

}  // namespace

int run_batch(int argc, char** argv) {
    std::string plan_path, threads_text = "0";
    bool force = false, dry_run = false, quiet = false;
    po::options_description options("Options");
    options.add_options()
        ("force", po::bool_switch(&force), "run every task, even those whose results are current")
        ("dry-run", po::bool_switch(&dry_run),
         "check the plan and print what would run or be skipped, and why, without writing anything")
        ("threads", po::value(&threads_text)->default_value(threads_text),
         "worker threads of each task (0: one per core); tasks run one after another; results do not depend on it")
        ("quiet,q", po::bool_switch(&quiet), "no progress lines");
    po::variables_map vm;
    if (!parse_command(argc, argv, "batch", "PLAN [--force] [--dry-run] [--threads N] [--quiet]", options,
                       {{"plan", "PLAN", "the plan: which recordings, which analyses, where results go", &plan_path}}, vm,
                       epilogue)) {
        return 0;
    }
    batch_settings settings;
    settings.program = self;
    settings.command_line = joined_command_line(argc + 1, argv - 1);
    settings.threads = static_cast<unsigned>(parse_whole_number(threads_text, "--threads", 0, 1024));
    settings.force = force;

    const batch_plan plan = read_batch_plan(plan_path, describe_analysis_options(self));
    check_analysis_options(plan, self);
    batch_reporter report;
    report.warning = [](const std::string& text) { std::cerr << "warning: " << text << "\n"; };
    if (dry_run) {
        print_preview(preview_batch(plan, settings, report));
        return 0;
    }
    report.task_ended = [quiet](const task_record& t, std::size_t number, std::size_t count) {
        note(quiet && t.status != task_status::failed, task_line(t, number, count));
    };
    const interruption stop;
    const batch_manifest m = run_batch(plan, settings, stop, report);
    std::size_t failed = 0, done = 0, skipped = 0;
    for (const auto& t: m.tasks) {
        failed += t.status == task_status::failed;
        done += t.status == task_status::done;
        skipped += t.status == task_status::skipped;
    }
    // As the user can open it from here.
    const std::string manifest =
        (std::filesystem::path(plan_path).parent_path() / plan.output_folder / "manifest.json").lexically_normal().string();
    if (stop.signal()) {
        std::cerr << "rastrum batch: stopped by signal " << stop.signal() << " after " << done << " of " << m.tasks.size()
                  << " tasks; " << manifest << " says what finished, and the next run does the rest\n";
        return 128 + stop.signal();
    }
    note(quiet, std::to_string(m.tasks.size()) + " tasks: " + std::to_string(done) + " done, " + std::to_string(skipped) +
                    " skipped, " + std::to_string(failed) + " failed; manifest in " + manifest);
    if (failed > 0) {
        std::cerr << "rastrum batch: " << failed << " of " << m.tasks.size() << " tasks failed; " << manifest
                  << " gives each one's exit code and message\n";
        return exit_tasks_failed;
    }
    return 0;
}

}  // namespace rastrum::app
