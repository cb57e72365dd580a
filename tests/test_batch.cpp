// End-to-end: `rastrum batch` in a child process, on plans over real recordings made by `rastrum
// synth`. The checks are behavioural (design): what runs, what is skipped, what the manifest says,
// and that no partial file is ever left.
#include "cli_runner.hpp"

#include <rastrum/sha256.hpp>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <sys/wait.h>
#include <thread>

using namespace rastrum::testing;
using nlohmann::json;
namespace fs = std::filesystem;

namespace {

void write_text(const std::string& path, const std::string& text) { std::ofstream(path, std::ios::binary) << text; }

void synth_labelled(const std::string& path, int seed) {
    const auto r = run_rastrum("synth conditions --overwrite --out '" + path + "' --seed " + std::to_string(seed) +
                               " --trials-per-condition 20 --duration-s 0.3 --means 4,1,2,6 --means 2,2,2,2");
    ASSERT_EQ(r.exit_code, 0) << r.err;
}

json manifest_in(const std::string& output_folder) { return json::parse(read_file(output_folder + "/manifest.json")); }

const json* find_task(const json& manifest, const std::string& input, const std::string& analysis) {
    for (const auto& t: manifest["tasks"]) {
        if (t["input"]["path"] == input && t["analysis"] == analysis) return &t;
    }
    return nullptr;
}

std::map<std::string, int> status_counts(const json& manifest) {
    std::map<std::string, int> counts;
    for (const auto& t: manifest["tasks"]) ++counts[t["status"].get<std::string>()];
    return counts;
}

// Every result file under `folder` (the manifest and its lock left out), by path.
std::vector<std::string> result_files(const std::string& folder) {
    std::vector<std::string> files;
    for (const auto& e: fs::recursive_directory_iterator(folder)) {
        const std::string name = e.path().filename().string();
        if (e.is_regular_file() && name != "manifest.json" && name != "manifest.lock") files.push_back(e.path().string());
    }
    std::sort(files.begin(), files.end());
    return files;
}

struct file_state {
    std::string sha256;
    fs::file_time_type written;
    bool operator==(const file_state& o) const { return sha256 == o.sha256 && written == o.written; }
};

std::map<std::string, file_state> snapshot(const std::string& folder) {
    std::map<std::string, file_state> state;
    for (const auto& f: result_files(folder)) state[f] = {rastrum::file_sha256(f), fs::last_write_time(f)};
    return state;
}

// Fields of one CSV line, quotes respected.
std::size_t csv_fields(const std::string& line) {
    std::size_t fields = 1;
    bool quoted = false;
    for (char c: line) {
        if (c == '"') quoted = !quoted;
        if (c == ',' && !quoted) ++fields;
    }
    return fields;
}

// No partial result: every JSON parses, every CSV ends its last line and has as many fields in
// every row as in its header, and no temporary of an atomic write is left.
void expect_only_whole_results(const std::string& folder) {
    for (const auto& f: result_files(folder)) {
        EXPECT_EQ(f.find(".tmp-"), std::string::npos) << "left behind: " << f;
        const std::string text = read_file(f);
        if (fs::path(f).extension() == ".json") {
            EXPECT_TRUE(json::accept(text)) << f;
        } else if (fs::path(f).extension() == ".csv") {
            ASSERT_FALSE(text.empty()) << f;
            EXPECT_EQ(text.back(), '\n') << f;
            std::istringstream lines(text);
            std::string header, row;
            do {  // past the provenance comment
                std::getline(lines, header);
            } while (header.rfind("#", 0) == 0);
            while (std::getline(lines, row)) EXPECT_EQ(csv_fields(row), csv_fields(header)) << f;
        }
    }
}

// Three small labelled recordings, two of them with the same name in different folders, and a
// plan running the direct method and stimulus information on each. With `broken`, also a
// truncated copy, which no analysis can read.
struct batch_folder {
    std::string folder, plan, out;
};

const char* const small_plan =
    "output = results\n"
    "[inputs]\n"
    "files = sessions/*/units.h5\n"
    "files = extra.h5\n"
    "[direct]\n"
    "bin-ms = 10\n"
    "letters = 1-3\n"
    "[stiminfo.count]\n"
    "window-ms = 0:300\n"
    "code = count\n"
    "null-shuffles = 20\n"
    "bootstrap = 20\n";

batch_folder make_batch_folder(const std::string& name, bool broken) {
    batch_folder b;
    b.folder = fresh_folder(name);
    b.plan = b.folder + "/plan.ini";
    b.out = b.folder + "/results";
    fs::create_directories(b.folder + "/sessions/day1");
    fs::create_directories(b.folder + "/sessions/day2");
    synth_labelled(b.folder + "/sessions/day1/units.h5", 1);
    synth_labelled(b.folder + "/sessions/day2/units.h5", 2);
    synth_labelled(b.folder + "/extra.h5", 3);
    std::string plan = small_plan;
    if (broken) {
        const std::string whole = read_file(b.folder + "/extra.h5");
        write_text(b.folder + "/broken.h5", whole.substr(0, whole.size() / 2));
        plan.insert(plan.find("files = extra.h5"), "files = broken.h5\n");
    }
    write_text(b.plan, plan);
    return b;
}

// Four copies of a recording whose direct method takes about a second each, for tests that stop a
// batch while it works.
batch_folder make_slow_batch_folder(const std::string& name) {
    batch_folder b;
    b.folder = fresh_folder(name);
    b.plan = b.folder + "/plan.ini";
    b.out = b.folder + "/results";
    const std::string first = b.folder + "/rec1.h5";
    // Each task must last long enough (a second or more) to be stopped while the next waits: every
    // word length of 1 ms bins with 49 rotated nulls (words stop growing at the sampling rule
    // otherwise, and a task then takes a tenth of a second).
    const auto r = run_rastrum("synth poisson --out '" + first + "' --trials 200 --duration-s 10 --rate-hz 20,30 --seed 3");
    EXPECT_EQ(r.exit_code, 0) << r.err;
    for (const char* copy: {"/rec2.h5", "/rec3.h5", "/rec4.h5"}) fs::copy_file(first, b.folder + copy);
    write_text(b.plan, "output = results\n[inputs]\nfiles = rec*.h5\n[direct]\nbin-ms = 1\nletters = 1-16\nevery-length = true\n"
                       "null-rotations = 49\n");
    return b;
}

// Polls (without a deadline that could be too short on a slow machine) until the manifest shows a
// finished task; false if the batch ended first.
bool wait_for_a_done_task(const batch_folder& b, const background_rastrum& run) {
    for (;;) {
        if (fs::exists(b.out + "/manifest.json")) {
            const auto counts = status_counts(manifest_in(b.out));
            if (counts.count("done")) return true;
        }
        int status = 0;
        if (::waitpid(run.pid, &status, WNOHANG) == run.pid) return false;
        std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
}

}  // namespace

TEST(batch, help_lists_options_plan_syntax_and_exit_codes) {
    const auto top = run_rastrum("--help");
    EXPECT_NE(top.out.find("batch"), std::string::npos);
    const auto help = run_rastrum("batch --help");
    EXPECT_EQ(help.exit_code, 0);
    for (const char* word: {"PLAN", "--force", "--dry-run", "--threads", "--quiet", "5 the batch ran but at least one task failed",
                            "128 + N", "output = FOLDER", "[inputs.NAME]", "files = PATTERN", "[stiminfo.NAME]", "inputs = NAME",
                            "manifest.json", "skipped"}) {
        EXPECT_NE(help.out.find(word), std::string::npos) << word;
    }
    EXPECT_EQ(help.out.find("check-options"), std::string::npos) << "the batch's interface to its analyses stays out of --help";
}

TEST(batch, plan_errors_exit_2_naming_the_plan_line_and_key_before_any_work) {
    const std::string folder = fresh_folder("batch-plan-errors");
    synth_labelled(folder + "/a.h5", 1);
    const std::string head = "output = results\n[inputs]\nfiles = a.h5\n";
    const std::string direct = "[direct]\nbin-ms = 10\nletters = 1-3\n";
    struct bad_plan {
        std::string text;
        std::vector<std::string> says;
    };
    const std::vector<bad_plan> cases{
        {head + direct + "bin-sm = 2\n", {"plan.ini:7:", "[direct] bin-sm", "unknown key"}},
        {"outptu = results\n[inputs]\nfiles = a.h5\n" + direct, {"plan.ini:1:", "outptu"}},
        {head + "[surveys]\n" + direct, {"plan.ini:4:", "unknown section [surveys]"}},
        {"output = results\n[inputs]\nfiles = missing.h5\n" + direct, {"plan.ini:3:", "missing.h5", "no such file"}},
        {"output = results\n[inputs]\nfiles = a.h5\nfiles = sub/*.h5\n" + direct, {"plan.ini:4:", "sub/*.h5", "matches no file"}},
        {head + "[direct]\nbin-ms = x\nletters = 1-3\n", {"plan.ini:5:", "[direct] bin-ms", "'x' is not a number"}},
        {head + "[direct]\nbin-ms = 10\nletters = 5-2\n", {"plan.ini:6:", "[direct] letters"}},
        {head + "[direct]\nbin-ms = 10\n", {"plan.ini:4:", "[direct]", "--letters"}},
        {head + direct + "binary = perhaps\n", {"plan.ini:7:", "[direct] binary", "true or false"}},
        {head + direct + "bin-ms = 20\n", {"plan.ini:7:", "given twice (first at line 5)"}},
        {head + direct + "json = mine.json\n", {"plan.ini:7:", "[direct] json", "set by the batch"}},
        {head + direct + "threads = 2\n", {"plan.ini:7:", "rastrum batch --threads"}},
        {head + direct + "inputs = nosuch\n", {"plan.ini:7:", "no section [inputs.nosuch]"}},
        {head + direct + "[stiminfo]\nwindow-ms = 0:300\ncode = rate\n", {"plan.ini:9:", "[stiminfo] code"}},
        {head + direct + "[direct]\nseed = 2\n", {"plan.ini:7:", "appears twice"}},
        {head + "just words\n" + direct, {"plan.ini:4:", "just words"}},
        {head, {"no analysis section"}},
    };
    for (const auto& c: cases) {
        write_text(folder + "/plan.ini", c.text);
        const auto r = run_rastrum("batch '" + folder + "/plan.ini'");
        EXPECT_EQ(r.exit_code, 2) << c.text << r.err;
        for (const auto& fragment: c.says) EXPECT_NE(r.err.find(fragment), std::string::npos) << fragment << " in\n" << r.err;
        EXPECT_FALSE(file_exists(folder + "/results")) << "no work before the plan is accepted:\n" << c.text;
    }
    // A folder of the user's is not taken over as an output folder.
    fs::create_directories(folder + "/mine");
    write_text(folder + "/mine/notes.txt", "mine\n");
    write_text(folder + "/plan.ini", "output = mine\n[inputs]\nfiles = a.h5\n" + direct);
    const auto theirs = run_rastrum("batch '" + folder + "/plan.ini'");
    EXPECT_EQ(theirs.exit_code, 2);
    EXPECT_NE(theirs.err.find("not a batch's output folder"), std::string::npos) << theirs.err;
    EXPECT_EQ(result_files(folder + "/mine").size(), 1u);
    const auto no_plan = run_rastrum("batch '" + folder + "/absent.ini'");
    EXPECT_EQ(no_plan.exit_code, 3);
    EXPECT_NE(no_plan.err.find("absent.ini"), std::string::npos);
}

TEST(batch, runs_every_task_and_records_a_bad_file_as_failed_with_exit_3) {
    const batch_folder b = make_batch_folder("batch-run", true);
    const auto r = run_rastrum("batch '" + b.plan + "' --threads 1");
    EXPECT_EQ(r.exit_code, 5) << r.err;
    EXPECT_NE(r.err.find("2 of 8 tasks failed"), std::string::npos) << r.err;

    const json m = manifest_in(b.out);
    EXPECT_EQ(m["tool"], "rastrum");
    EXPECT_EQ(m["plan"]["sha256"], rastrum::file_sha256(b.plan));
    EXPECT_EQ(m["run"]["state"], "finished");
    EXPECT_FALSE(m["run"]["finished_utc"].is_null());
    EXPECT_EQ(m["summary"]["done"], 6);
    EXPECT_EQ(m["summary"]["failed"], 2);
    ASSERT_EQ(m["tasks"].size(), 8u);
    for (const char* analysis: {"direct", "stiminfo.count"}) {
        const json* bad = find_task(m, "broken.h5", analysis);
        ASSERT_NE(bad, nullptr) << analysis;
        EXPECT_EQ((*bad)["status"], "failed");
        EXPECT_EQ((*bad)["exit_code"], 3);
        EXPECT_NE((*bad)["error"].get<std::string>().find("broken.h5"), std::string::npos) << (*bad)["error"];
        EXPECT_NE((*bad)["stderr"].get<std::string>().find("invalid input"), std::string::npos);
        EXPECT_TRUE((*bad)["outputs"].empty());
    }
    EXPECT_FALSE(file_exists(b.out + "/broken/direct.json"));
    for (const auto& t: m["tasks"]) {
        if (t["input"]["path"] == "broken.h5") continue;
        EXPECT_EQ(t["status"], "done") << t.dump(2);
        EXPECT_EQ(t["exit_code"], 0);
        EXPECT_GT(t["seconds"].get<double>(), 0.0);
        EXPECT_EQ(t["task_key"].get<std::string>().size(), 64u);
        EXPECT_EQ(t["input"]["sha256"], rastrum::file_sha256(b.folder + "/" + t["input"]["path"].get<std::string>()));
        EXPECT_EQ(t["command"][0], "rastrum");
        EXPECT_EQ(t["command"][1], t["kind"]);
        ASSERT_EQ(t["outputs"].size(), 4u);  // JSON, CSV, curves CSV, HDF5 results
        for (const auto& o: t["outputs"]) {
            const std::string path = b.out + "/" + o["path"].get<std::string>();
            EXPECT_EQ(o["sha256"], rastrum::file_sha256(path)) << path;
        }
        const json result = json::parse(read_file(b.out + "/" + t["outputs"][0]["path"].get<std::string>()));
        EXPECT_EQ(result["input"]["sha256"], t["input"]["sha256"]) << "each result names the input it came from";
    }
    const json* stim = find_task(m, "extra.h5", "stiminfo.count");
    ASSERT_NE(stim, nullptr);
    EXPECT_EQ((*stim)["options"], json({"--bootstrap", "20", "--code", "count", "--null-shuffles", "20", "--window-ms", "0:300"}));
    // Same name in two folders: two results folders.
    const std::string day1 = read_file(b.out + "/sessions/day1/units/direct.json");
    const std::string day2 = read_file(b.out + "/sessions/day2/units/direct.json");
    EXPECT_FALSE(day1.empty());
    EXPECT_NE(json::parse(day1)["input"]["sha256"], json::parse(day2)["input"]["sha256"]);
    expect_only_whole_results(b.out);
}

TEST(batch, rerun_skips_every_task_and_leaves_outputs_untouched) {
    const batch_folder b = make_batch_folder("batch-rerun", false);
    ASSERT_EQ(run_rastrum("batch '" + b.plan + "' --threads 1").exit_code, 0);
    const auto before = snapshot(b.out);
    ASSERT_EQ(before.size(), 24u);  // 3 inputs x 2 analyses x (JSON, CSV, curves CSV, HDF5 results)
    const auto again = run_rastrum("batch '" + b.plan + "' --threads 1");
    EXPECT_EQ(again.exit_code, 0) << again.err;
    const json m = manifest_in(b.out);
    EXPECT_EQ(status_counts(m), (std::map<std::string, int>{{"skipped", 6}}));
    for (const auto& t: m["tasks"]) EXPECT_NE(t["reason"].get<std::string>().find("unchanged"), std::string::npos);
    EXPECT_EQ(snapshot(b.out), before) << "skipped tasks must not rewrite their outputs";
}

TEST(batch, a_changed_option_or_input_reruns_only_those_tasks) {
    const batch_folder b = make_batch_folder("batch-changes", false);
    ASSERT_EQ(run_rastrum("batch '" + b.plan + "' --threads 1").exit_code, 0);
    std::string plan = small_plan;
    plan.replace(plan.find("bin-ms = 10"), 11, "bin-ms = 20");
    write_text(b.plan, plan);
    ASSERT_EQ(run_rastrum("batch '" + b.plan + "' --threads 1").exit_code, 0);
    json m = manifest_in(b.out);
    for (const auto& t: m["tasks"]) {
        const bool direct = t["analysis"] == "direct";
        EXPECT_EQ(t["status"], direct ? "done" : "skipped") << t["input"] << t["analysis"];
        EXPECT_EQ(t["reason"], direct ? "the options changed" : "unchanged: same input, options and rastrum version, outputs intact");
    }
    EXPECT_EQ(json::parse(read_file(b.out + "/extra/direct.json"))["parameters"]["bin_ms"], json({20.0}));

    synth_labelled(b.folder + "/extra.h5", 9);
    const auto before = snapshot(b.out);
    ASSERT_EQ(run_rastrum("batch '" + b.plan + "' --threads 1").exit_code, 0);
    m = manifest_in(b.out);
    for (const auto& t: m["tasks"]) {
        const bool changed = t["input"]["path"] == "extra.h5";
        EXPECT_EQ(t["status"], changed ? "done" : "skipped") << t["input"] << t["analysis"];
        if (changed) {
            EXPECT_EQ(t["reason"], "the input changed");
        }
    }
    const auto after = snapshot(b.out);
    for (const auto& [path, state]: before) {
        const bool changed = path.find("/results/extra/") != std::string::npos;
        EXPECT_EQ(after.at(path).sha256 != state.sha256, changed) << path;
    }

    // A result changed or removed by hand is remade.
    fs::remove(b.out + "/sessions/day1/units/stiminfo.count.csv");
    write_text(b.out + "/sessions/day2/units/direct.json", "{}\n");
    ASSERT_EQ(run_rastrum("batch '" + b.plan + "' --threads 1").exit_code, 0);
    m = manifest_in(b.out);
    EXPECT_EQ(status_counts(m), (std::map<std::string, int>{{"done", 2}, {"skipped", 4}}));
    EXPECT_NE((*find_task(m, "sessions/day1/units.h5", "stiminfo.count"))["reason"].get<std::string>().find("missing"), std::string::npos);
    EXPECT_NE((*find_task(m, "sessions/day2/units.h5", "direct"))["reason"].get<std::string>().find("changed since"), std::string::npos);
    EXPECT_NE(read_file(b.out + "/sessions/day2/units/direct.json"), "{}\n");
}

TEST(batch, force_redoes_every_task) {
    const batch_folder b = make_batch_folder("batch-force", false);
    ASSERT_EQ(run_rastrum("batch '" + b.plan + "' --threads 1").exit_code, 0);
    const auto r = run_rastrum("batch '" + b.plan + "' --threads 1 --force");
    EXPECT_EQ(r.exit_code, 0) << r.err;
    const json m = manifest_in(b.out);
    EXPECT_EQ(status_counts(m), (std::map<std::string, int>{{"done", 6}}));
    for (const auto& t: m["tasks"]) EXPECT_EQ(t["reason"], "forced (--force)");
}

TEST(batch, dry_run_says_what_would_run_and_writes_nothing) {
    const batch_folder b = make_batch_folder("batch-dry", false);
    const auto fresh = run_rastrum("batch '" + b.plan + "' --dry-run");
    EXPECT_EQ(fresh.exit_code, 0) << fresh.err;
    EXPECT_EQ(std::count(fresh.out.begin(), fresh.out.end(), '\n'), 12) << fresh.out;  // 6 tasks, each with its command
    EXPECT_NE(fresh.out.find("would run  extra.h5 [direct]: new"), std::string::npos) << fresh.out;
    EXPECT_NE(fresh.out.find("rastrum direct extra.h5 --bin-ms 10 --letters 1-3 --json results/extra/direct.json"),
              std::string::npos) << fresh.out;
    EXPECT_FALSE(file_exists(b.out));
    ASSERT_EQ(run_rastrum("batch '" + b.plan + "' --threads 1 --quiet").exit_code, 0);
    const std::string manifest = read_file(b.out + "/manifest.json");
    const auto done = run_rastrum("batch '" + b.plan + "' --dry-run");
    EXPECT_EQ(done.exit_code, 0);
    EXPECT_EQ(done.out.find("would run"), std::string::npos) << done.out;
    EXPECT_NE(done.out.find("would skip extra.h5 [stiminfo.count]: unchanged"), std::string::npos) << done.out;
    EXPECT_EQ(read_file(b.out + "/manifest.json"), manifest);
}

TEST(batch, sigkill_mid_run_leaves_only_whole_files_and_the_rerun_finishes) {
    const batch_folder b = make_slow_batch_folder("batch-sigkill");
    const auto run = start_rastrum("batch '" + b.plan + "' --threads 1", ending::provoked);
    ASSERT_TRUE(wait_for_a_done_task(b, run)) << "the batch ended before it could be killed";
    ::kill(run.pid, SIGKILL);
    EXPECT_EQ(finish_rastrum(run).exit_code, 128 + SIGKILL);

    const json killed = manifest_in(b.out);
    const auto counts = status_counts(killed);
    EXPECT_EQ(killed["run"]["state"], "running") << "killed outright, it could not say more";
    EXPECT_GE(counts.at("done"), 1);
    EXPECT_LT(counts.at("done"), 4) << "the kill came after the batch had finished";
    for (const auto& t: killed["tasks"]) {
        for (const auto& o: t["outputs"]) EXPECT_EQ(o["sha256"], rastrum::file_sha256(b.out + "/" + o["path"].get<std::string>()));
    }
    expect_only_whole_results(b.out);

    // What a task or the manifest would leave when killed between writing and renaming; and a
    // file of the user's, which the batch must not touch.
    fs::create_directories(b.out + "/rec4");
    for (const char* litter: {"/rec4/direct.json.tmp-99999-0", "/rec4/direct.csv.tmp-99999-1", "/manifest.json.tmp-99998-3"}) {
        write_text(b.out + litter, "{\"partial");
    }
    write_text(b.out + "/rec4/my-notes.txt", "mine\n");
    const auto rerun = run_rastrum("batch '" + b.plan + "' --threads 1");
    EXPECT_EQ(rerun.exit_code, 0) << rerun.err;
    EXPECT_EQ(read_file(b.out + "/rec4/my-notes.txt"), "mine\n");
    fs::remove(b.out + "/rec4/my-notes.txt");
    const json m = manifest_in(b.out);
    EXPECT_EQ(m["run"]["state"], "finished");
    for (const auto& t: m["tasks"]) {
        const json* before = find_task(killed, t["input"]["path"], t["analysis"]);
        ASSERT_NE(before, nullptr);
        EXPECT_EQ(t["status"], (*before)["status"] == "done" ? "skipped" : "done") << t["input"];
    }
    expect_only_whole_results(b.out);
    EXPECT_EQ(result_files(b.out).size(), 16u);  // 4 tasks x 4 outputs
}

TEST(batch, sigterm_stops_the_running_task_and_the_manifest_says_what_finished) {
    const batch_folder b = make_slow_batch_folder("batch-sigterm");
    const auto run = start_rastrum("batch '" + b.plan + "' --threads 1", ending::provoked);
    ASSERT_TRUE(wait_for_a_done_task(b, run)) << "the batch ended before it could be stopped";
    // Meanwhile a second batch on the same folder is refused.
    const auto second = run_rastrum("batch '" + b.plan + "'");
    EXPECT_EQ(second.exit_code, 2);
    EXPECT_NE(second.err.find("another rastrum batch"), std::string::npos) << second.err;
    ::kill(run.pid, SIGTERM);
    const auto stopped = finish_rastrum(run);
    EXPECT_EQ(stopped.exit_code, 128 + SIGTERM) << stopped.err;
    EXPECT_NE(stopped.err.find("the next run does the rest"), std::string::npos) << stopped.err;

    const json m = manifest_in(b.out);
    EXPECT_EQ(m["run"]["state"], "interrupted");
    const auto counts = status_counts(m);
    EXPECT_GE(counts.at("done"), 1);
    EXPECT_LT(counts.at("done"), 4);
    for (const auto& t: m["tasks"]) {
        if (t["status"] != "interrupted") continue;
        EXPECT_EQ(t["signal"], SIGTERM) << "the running task was stopped by the batch";
        EXPECT_TRUE(t["outputs"].empty());
        EXPECT_FALSE(file_exists(b.out + "/" + fs::path(t["input"]["path"].get<std::string>()).stem().string() + "/direct.json"));
    }
    expect_only_whole_results(b.out);
    const auto rerun = run_rastrum("batch '" + b.plan + "' --threads 1");
    EXPECT_EQ(rerun.exit_code, 0) << rerun.err;
    EXPECT_EQ(status_counts(manifest_in(b.out)).count("pending"), 0u);
    EXPECT_EQ(result_files(b.out).size(), 16u);  // 4 tasks x 4 outputs
}

TEST(batch, demo_plan_runs_from_a_copy_in_another_folder) {
    const std::string folder = fresh_folder("batch-demo");
    const std::string copy = folder + "/copied demo";
    fs::create_directories(copy);
    fs::create_directories(folder + "/elsewhere");
    for (const auto& e: fs::directory_iterator(std::string(RASTRUM_SOURCE_DIR) + "/demo-recordings")) {
        if (e.is_regular_file()) fs::copy_file(e.path(), copy / e.path().filename());
    }
    const auto r = run_rastrum_in(folder + "/elsewhere", "batch '../copied demo/demo-plan.ini' --threads 2");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const json m = manifest_in(copy + "/demo-results");
    EXPECT_EQ(status_counts(m), (std::map<std::string, int>{{"done", 3}}));
    for (const auto& [input, analysis]: std::vector<std::pair<std::string, std::string>>{
             {"flicker-tectum.h5", "direct"}, {"whisker-barrel.h5", "stiminfo.count"}, {"whisker-barrel.h5", "stiminfo.latency"}}) {
        const json* t = find_task(m, input, analysis);
        ASSERT_NE(t, nullptr) << input << " " << analysis;
        const json result = json::parse(read_file(copy + "/demo-results/" + (*t)["outputs"][0]["path"].get<std::string>()));
        EXPECT_EQ(result["input"]["path"], input) << "results name their input relative to the plan, not the machine";
    }
    EXPECT_TRUE(fs::is_empty(folder + "/elsewhere")) << "nothing lands in the working directory";
}

// The plan README shows is the bundled one, comments aside.
TEST(batch, readme_shows_the_demo_plan) {
    auto settings = [](const std::string& text) {
        std::vector<std::string> lines;
        std::istringstream in(text);
        for (std::string line; std::getline(in, line);) {
            line = line.substr(0, line.find('#'));
            if (line.find_first_not_of(' ') != std::string::npos) lines.push_back(line);
        }
        return lines;
    };
    const std::string readme = read_file(std::string(RASTRUM_SOURCE_DIR) + "/README.md");
    const auto section = readme.find("## Batch runs");
    ASSERT_NE(section, std::string::npos);
    const auto open = readme.find("```\n", section) + 4;
    const std::string shown = readme.substr(open, readme.find("```", open) - open);
    EXPECT_EQ(settings(shown), settings(read_file(std::string(RASTRUM_SOURCE_DIR) + "/demo-recordings/demo-plan.ini")));
}
