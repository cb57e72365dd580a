// The batch's parts in the library: plans, patterns, task keys, the manifest, child processes.
// The checks are behavioural (design), on files written here; the expected values follow from the
// documented rules in toolkit/include/rastrum/batch_*.hpp.
#include "cli_runner.hpp"

#include <rastrum/batch_manifest.hpp>
#include <rastrum/batch_plan.hpp>
#include <rastrum/child_process.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/file_patterns.hpp>

#include <gtest/gtest.h>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <sys/wait.h>
#include <thread>
#include <unistd.h>

using namespace rastrum;
using rastrum::testing::fresh_folder;
namespace fs = std::filesystem;

namespace {

void write_text(const std::string& path, const std::string& text) {
    fs::create_directories(fs::path(path).parent_path());
    std::ofstream(path, std::ios::binary) << text;
}

// The shape of the real commands' options, enough for the plan reader.
const option_catalogue catalogue{
    {"direct", {{"bin-ms", true, false}, {"letters", true, false}, {"unit", true, true}, {"binary", false, false},
                {"threads", true, false}, {"json", true, false}, {"csv", true, false}, {"quiet", false, false}}},
    {"stiminfo", {{"window-ms", true, false}, {"code", true, false}, {"population", true, true}}},
};

std::string plan_error(const std::string& path) {
    try {
        read_batch_plan(path, catalogue);
    } catch (const usage_error& e) {
        return e.what();
    }
    return "no error";
}

}  // namespace

TEST(batch_plan, keys_become_sorted_command_options_with_switches_and_repeats) {
    const std::string folder = fresh_folder("plan-options");
    write_text(folder + "/a.h5", "");
    write_text(folder + "/plan.ini",
               "output = out  # comment\n[inputs]\nfiles = a.h5\n[direct]\nunit = u2\nletters = 1-3\nbinary = true\n"
               "bin-ms = 2\nunit = u1\n[direct.plain]\nbin-ms = 2\nletters = 1-3\nbinary = false\n");
    const batch_plan plan = read_batch_plan(folder + "/plan.ini", catalogue);
    EXPECT_EQ(plan.output_folder, "out");
    ASSERT_EQ(plan.analyses.size(), 2u);
    EXPECT_EQ(command_options(plan.analyses[0]),
              (std::vector<std::string>{"--bin-ms", "2", "--binary", "--letters", "1-3", "--unit", "u2", "--unit", "u1"}));
    EXPECT_EQ(plan.analyses[1].section, "direct.plain");
    EXPECT_EQ(plan.analyses[1].kind, "direct");
    EXPECT_EQ(command_options(plan.analyses[1]), (std::vector<std::string>{"--bin-ms", "2", "--letters", "1-3"}))
        << "a switch set to false is the same as no switch";
}

TEST(batch_plan, errors_name_the_plan_line_section_and_key) {
    const std::string folder = fresh_folder("plan-errors");
    write_text(folder + "/a.h5", "");
    const std::string path = folder + "/p.ini";
    const std::string head = "output = out\n[inputs]\nfiles = a.h5\n";
    write_text(path, head + "[direct]\nbin-ms = 2\n\n# a comment\nbogus = 1\n");
    EXPECT_EQ(plan_error(path), path + ":8: [direct] bogus: unknown key: 'rastrum direct' has no option --bogus (plan keys "
                                       "are the command's option names without '--'; 'rastrum direct --help' lists them)");
    write_text(path, head + "[stiminfo.x y]\n");
    EXPECT_NE(plan_error(path).find(path + ":4: section [stiminfo.x y]"), std::string::npos) << plan_error(path);
    write_text(path, head + "[inputs.more]\n[direct]\nbin-ms = 2\n");
    EXPECT_NE(plan_error(path).find(path + ":4: [inputs.more] lists no files"), std::string::npos) << plan_error(path);
    write_text(path, head + "[direct]\nquiet = true\n");
    EXPECT_NE(plan_error(path).find(path + ":5: [direct] quiet: set by the batch"), std::string::npos) << plan_error(path);
    write_text(path, head + "[direct]\nbin-ms =\n");
    EXPECT_NE(plan_error(path).find(path + ":5: [direct] bin-ms: needs a value"), std::string::npos) << plan_error(path);
    write_text(path, "output = out\noutput = again\n[inputs]\nfiles = a.h5\n[direct]\nbin-ms = 2\n");
    EXPECT_NE(plan_error(path).find(path + ":2: 'output' is given twice"), std::string::npos) << plan_error(path);
    write_text(path, "output = out\n[direct]\nbin-ms = 2\n");
    EXPECT_NE(plan_error(path).find("no [inputs] section"), std::string::npos) << plan_error(path);
    EXPECT_THROW(read_batch_plan(folder + "/absent.ini", catalogue), input_error);
}

TEST(batch_plan, task_folders_mirror_where_inputs_sit_and_groups_pick_analyses) {
    const std::string root = fresh_folder("plan-folders");
    const std::string folder = root + "/plans";
    for (const char* f: {"/plans/day1/units.h5", "/plans/day2/units.h5", "/data/x.h5", "/plans/c.h5"}) write_text(root + f, "");
    write_text(folder + "/plan.ini",
               "output = out\n[inputs.frozen]\nfiles = day*/units.h5\nfiles = ../data/x.h5\n[inputs.labelled]\n"
               "files = c.h5\nfiles = day1/units.h5\n[direct]\ninputs = frozen\nbin-ms = 2\n[stiminfo]\ninputs = labelled\n"
               "code = count\n[stiminfo.all]\ncode = count\n");
    const batch_plan plan = read_batch_plan(folder + "/plan.ini", catalogue);
    ASSERT_EQ(plan.inputs.size(), 4u) << "day1/units.h5 is in two groups but is one input";
    EXPECT_EQ(plan.inputs[0].path, "day1/units.h5");
    EXPECT_EQ(plan.inputs[0].task_folder, "day1/units");
    EXPECT_EQ(plan.inputs[0].groups, (std::vector<std::string>{"frozen", "labelled"}));
    EXPECT_EQ(plan.inputs[1].task_folder, "day2/units");
    EXPECT_EQ(plan.inputs[2].path, "../data/x.h5");
    EXPECT_EQ(plan.inputs[2].task_folder, "_up_/data/x");
    EXPECT_EQ(plan.inputs[3].path, "c.h5");
    std::vector<std::string> tasks;
    for (const auto& t: plan_tasks(plan)) tasks.push_back(plan.inputs[t.input].path + " " + plan.analyses[t.analysis].section);
    EXPECT_EQ(tasks, (std::vector<std::string>{"day1/units.h5 direct", "day1/units.h5 stiminfo", "day1/units.h5 stiminfo.all",
                                               "day2/units.h5 direct", "day2/units.h5 stiminfo.all", "../data/x.h5 direct",
                                               "../data/x.h5 stiminfo.all", "c.h5 stiminfo", "c.h5 stiminfo.all"}));
    EXPECT_EQ(plan_tasks(plan)[0].outputs, (std::vector<std::string>{"day1/units/direct.json", "day1/units/direct.csv", "day1/units/direct.curves.csv",
                                        "day1/units/direct.results.h5"}));

    write_text(folder + "/y.h5", "");
    write_text(folder + "/y.hdf5", "");
    write_text(folder + "/clash.ini", "output = out\n[inputs]\nfiles = y.*\n[direct]\nbin-ms = 2\n");
    EXPECT_NE(plan_error(folder + "/clash.ini").find("would share the results folder y"), std::string::npos)
        << plan_error(folder + "/clash.ini");
}

TEST(batch_plan, patterns_resolve_against_the_plans_folder_from_any_working_directory) {
    const std::string folder = fresh_folder("plan-patterns") + "/odd [name]*";
    for (const char* f: {"/b.h5", "/a.h5", "/notes.txt", "/sub/c.h5"}) write_text(folder + f, "");
    const fs::path here = fs::current_path();
    fs::current_path(fs::temp_directory_path());
    EXPECT_EQ(match_files(folder, "*.h5"), (std::vector<std::string>{"a.h5", "b.h5"})) << "sorted, folders' names taken literally";
    EXPECT_EQ(match_files(folder, "*"), (std::vector<std::string>{"a.h5", "b.h5", "notes.txt"})) << "folders are not files";
    EXPECT_EQ(match_files(folder + "/sub", "../?.h5"), (std::vector<std::string>{"../a.h5", "../b.h5"}));
    EXPECT_TRUE(match_files(folder, "z*.h5").empty());
    EXPECT_EQ(match_files(folder, "sub/c.h5"), (std::vector<std::string>{"sub/c.h5"}));
    fs::current_path(here);
    EXPECT_TRUE(has_wildcards("day[12]/*.h5"));
    EXPECT_FALSE(has_wildcards("day1/units.h5"));
}

TEST(batch_manifest, task_key_covers_version_input_kind_and_options) {
    const std::vector<std::string> options{"--bin-ms", "2"};
    const std::string key = task_key("0.1.0", "abc", "direct", options);
    EXPECT_EQ(key.size(), 64u);
    EXPECT_EQ(key, task_key("0.1.0", "abc", "direct", options));
    EXPECT_NE(key, task_key("0.1.1", "abc", "direct", options));
    EXPECT_NE(key, task_key("0.1.0", "abd", "direct", options));
    EXPECT_NE(key, task_key("0.1.0", "abc", "stiminfo", options));
    EXPECT_NE(key, task_key("0.1.0", "abc", "direct", {"--bin-ms", "4"}));
    EXPECT_NE(task_key("0.1.0", "abc", "direct", {"--a", "b c"}), task_key("0.1.0", "abc", "direct", {"--a", "b", "c"}))
        << "the parts are kept apart";
}

TEST(batch_manifest, round_trips_and_decides_what_runs) {
    const std::string folder = fresh_folder("manifest-round-trip");
    write_text(folder + "/x/direct.json", "{}\n");
    batch_manifest m;
    m.version = "0.1.0";
    m.plan_path = "p.ini";
    m.started_utc = "2026-01-01T00:00:00Z";
    task_record done;
    done.input_path = "x.h5";
    done.input_sha256 = "abc";
    done.analysis = "direct";
    done.kind = "direct";
    done.options = {"--bin-ms", "2"};
    done.command = {"rastrum", "direct", "x.h5"};
    done.task_key = task_key("0.1.0", "abc", "direct", done.options);
    done.outputs = {{"x/direct.json", "ca3d163bab055381827226140568f3bef7eaac187cebd76878e0b63e9e442356"}};  // sha256 of "{}\n", by sha256sum
    done.status = task_status::done;
    done.exit_code = 0;
    done.seconds = 1.5;
    task_record failed = done;
    failed.status = task_status::failed;
    failed.exit_code = 3;
    failed.signal = std::nullopt;
    failed.error = "invalid input";
    m.tasks = {done, failed};
    write_text(folder + "/manifest.json", manifest_json(m).dump(2));
    const auto back = read_manifest(folder + "/manifest.json");
    ASSERT_TRUE(back);
    EXPECT_EQ(manifest_json(*back), manifest_json(m));
    EXPECT_FALSE(read_manifest(folder + "/none.json"));
    write_text(folder + "/bad.json", "{\"tasks\": 1}");
    EXPECT_THROW(read_manifest(folder + "/bad.json"), error);

    task_record wanted = done;
    wanted.outputs = {{"x/direct.json", ""}};
    EXPECT_EQ(reason_to_run(wanted, &done, "0.1.0", folder), "");
    EXPECT_EQ(reason_to_run(wanted, nullptr, "0.1.0", folder), "new");
    EXPECT_EQ(reason_to_run(wanted, &failed, "0.1.0", folder), "it failed last time");
    task_record other_options = wanted;
    other_options.options = {"--bin-ms", "4"};
    other_options.task_key = task_key("0.1.0", "abc", "direct", other_options.options);
    EXPECT_EQ(reason_to_run(other_options, &done, "0.1.0", folder), "the options changed");
    task_record newer = wanted;
    newer.task_key = task_key("0.2.0", "abc", "direct", newer.options);
    EXPECT_EQ(reason_to_run(newer, &done, "0.1.0", folder), "its results were made by rastrum 0.1.0, another version");
    task_record more_outputs = wanted;
    more_outputs.outputs.push_back({"x/direct.csv", ""});
    EXPECT_EQ(reason_to_run(more_outputs, &done, "0.1.0", folder), "it has other outputs now");
    write_text(folder + "/x/direct.json", "{ }\n");
    EXPECT_EQ(reason_to_run(wanted, &done, "0.1.0", folder), "output x/direct.json changed since it was written");
    fs::remove(folder + "/x/direct.json");
    EXPECT_EQ(reason_to_run(wanted, &done, "0.1.0", folder), "output x/direct.json is missing");
}

TEST(child_process, reports_exit_codes_signals_output_and_folder) {
    const std::string folder = fresh_folder("child-process");
    const auto ok = run_child("/bin/sh", {"sh", "-c", "pwd; echo oops >&2; exit 3"}, folder, nullptr);
    EXPECT_EQ(ok.exit_code, 3);
    EXPECT_FALSE(ok.signal);
    EXPECT_EQ(ok.out, fs::canonical(folder).string() + "\n");
    EXPECT_EQ(ok.err, "oops\n");
    EXPECT_EQ(describe_ending(ok), "exit code 3");
    // A crash in the child is reported, not shared.
    const auto crash = run_child("/bin/sh", {"sh", "-c", "kill -SEGV $$"}, "", nullptr);
    EXPECT_FALSE(crash.exit_code);
    EXPECT_EQ(crash.signal, SIGSEGV);
    EXPECT_NE(describe_ending(crash).find("signal 11"), std::string::npos);
    const auto chatty = run_child("/bin/sh", {"sh", "-c", "head -c 300000 /dev/zero | tr '\\0' x >&2"}, "", nullptr);
    EXPECT_EQ(chatty.err.size(), 64u * 1024) << "only the end of a long stderr is kept";
    EXPECT_THROW(run_child(folder + "/absent", {"absent"}, "", nullptr), error);
}

TEST(child_process, a_signal_to_the_parent_stops_the_child) {
    const interruption stop;
    // The child signals its parent (this test) and then waits far longer than any test runs.
    const auto r = run_child("/bin/sh", {"sh", "-c", "kill -TERM $PPID; exec sleep 600"}, "", &stop);
    EXPECT_EQ(stop.signal(), SIGTERM);
    EXPECT_TRUE(r.interrupted);
    EXPECT_EQ(r.signal, SIGTERM);
}

namespace {
// Gone, or a zombie waiting for its new parent to reap it.
bool process_gone(int pid) {
    std::ifstream stat("/proc/" + std::to_string(pid) + "/stat");
    std::string text;
    if (!std::getline(stat, text)) return true;
    const auto close = text.rfind(')');
    return close != std::string::npos && close + 2 < text.size() && text[close + 2] == 'Z';
}
}  // namespace

TEST(child_process, a_parent_killed_outright_takes_its_child_along) {
    const std::string folder = fresh_folder("child-orphan");
    const std::string pid_file = folder + "/pid";
    // A stand-in for the batch: a process that runs a long child and is then killed with SIGKILL.
    const pid_t parent = ::fork();
    if (parent == 0) {
        run_child("/bin/sh", {"sh", "-c", "echo $$ > '" + pid_file + ".tmp' && mv '" + pid_file + ".tmp' '" + pid_file +
                                          "' && exec sleep 600"},
                  "", nullptr);
        ::_exit(0);
    }
    while (!fs::exists(pid_file)) std::this_thread::sleep_for(std::chrono::milliseconds(10));
    const int child = std::stoi(rastrum::testing::read_file(pid_file));
    EXPECT_FALSE(process_gone(child));
    ::kill(parent, SIGKILL);
    ::waitpid(parent, nullptr, 0);
    // The kernel sends the parent-death signal as the parent exits; a minute is a bound for a
    // stuck machine, not a speed claim (without the signal the child would sleep for ten).
    for (int i = 0; i < 6000 && !process_gone(child); ++i) std::this_thread::sleep_for(std::chrono::milliseconds(10));
    EXPECT_TRUE(process_gone(child)) << "the orphaned child is still running";
    if (!process_gone(child)) ::kill(child, SIGKILL);
}
