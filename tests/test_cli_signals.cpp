// Signals (notes/robustness.md, "Signals"): direct, stiminfo, survey, synth, convert and figures,
// stopped by SIGINT, SIGTERM or SIGHUP while they work, remove their temporaries and end by that
// signal (128 + N as a shell reports it), leaving what was at their outputs as it was; a later run
// removes the temporaries of a process killed outright. Real processes on real workloads, each
// long enough (a second or more) that the signal arrives during the work. Design checks.
#include "cli_runner.hpp"
#include "loader_checks.hpp"
#include "output_kinds.hpp"
#include "output_slots.hpp"

#include <rastrum/recording_hdf5.hpp>

#include <gtest/gtest.h>

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <csignal>
#include <filesystem>
#include <fstream>
#include <sys/wait.h>
#include <thread>

using namespace rastrum::testing;
namespace fs = std::filesystem;

namespace {

struct workload {
    std::string name;
    std::string args;                  // rastrum's arguments, outputs in `folder`
    std::vector<std::string> outputs;  // in the folder, each holding "old" before the run
};

// Inputs made once: a labelled recording for stiminfo, a long frozen one for direct, a large one
// (80 MB of spike times) whose rasters figures takes seconds to draw, and the same spikes as CSV
// (100 MB of text), which survey and convert take seconds to parse (the HDF5 file they would
// read in a fraction of a second, too short to stop them in for sure).
struct inputs {
    std::string folder, labelled, frozen, large, large_csv, trials_csv, result;
};

void write_as_csv(const rastrum::recording& rec, const std::string& spikes, const std::string& trials) {
    std::ofstream out(spikes, std::ios::binary);
    out << "unit,time_s\n";
    char line[64];
    for (const auto& u: rec.units) {
        for (const double t: u.spike_times) {
            const int n = std::snprintf(line, sizeof line, "%s,%.9f\n", u.id.c_str(), t);
            out.write(line, n);
        }
    }
    std::ofstream t(trials, std::ios::binary);
    t << "start_s,stop_s,stimulus\n";
    for (std::size_t k = 0; k < rec.trial_count(); ++k) t << rec.trial_start[k] << "," << rec.trial_stop[k] << "," << rec.stimulus[k] << "\n";
}

// The inputs (230 MB) do not outlive the test program.
struct removed_at_exit {
    std::string folder;
    ~removed_at_exit() {
        std::error_code ec;
        fs::remove_all(folder, ec);
    }
};

const inputs& shared_inputs() {
    static const inputs in = [] {
        inputs i;
        i.folder = open_folder("signals-inputs");
        static const removed_at_exit removal{i.folder};
        i.labelled = i.folder + "/labelled.h5";
        i.frozen = i.folder + "/frozen.h5";
        i.large = i.folder + "/large.h5";
        i.result = i.folder + "/d.json";
        EXPECT_EQ(run_rastrum("synth conditions --out " + shell_quoted(i.labelled) + " --trials-per-condition 50 --duration-s 1").exit_code, 0);
        EXPECT_EQ(run_rastrum("synth poisson --out " + shell_quoted(i.frozen) + " --trials 200 --duration-s 10 --rate-hz 20,30 --seed 3").exit_code, 0);
        i.large_csv = i.folder + "/large.csv";
        i.trials_csv = i.folder + "/trials.csv";
        const rastrum::recording large = random_units(10, 1000000, 0.9, true, 5);
        rastrum::write_recording_hdf5(large, i.large);
        write_as_csv(large, i.large_csv, i.trials_csv);
        EXPECT_EQ(run_rastrum("direct " + shell_quoted(i.labelled) + " --bin-ms 20 --letters 1-2 --quiet --json " + shell_quoted(i.result)).exit_code, 0);
        return i;
    }();
    return in;
}

std::vector<workload> workloads(const std::string& folder) {
    const inputs& in = shared_inputs();
    const std::string out = shell_quoted(folder + "/");
    return {
        // Without the calibration, whose surrogates of 200 trials x 10 s at 1 ms would not fit the
        // tests' 2 GiB limit with 2 threads: the rotated nulls make the work long enough.
        {"direct", "direct " + shell_quoted(in.frozen) + " --bin-ms 1 --letters 1-16 --every-length --null-rotations 199 --surrogates 0 --threads 2 --json " + out +
                       "d.json --csv " + out + "d.csv --h5 " + out + "d.h5",
         {"d.json", "d.csv", "d.h5"}},
        {"stiminfo", "stiminfo " + shell_quoted(in.labelled) + " --window-ms 0:1000 --code word --bin-ms 100 --null-shuffles 200000 "
                     "--bootstrap 2000 --threads 2 --json " + out + "s.json --curves-csv " + out + "s.csv",
         {"s.json", "s.csv"}},
        {"survey", "survey " + shell_quoted(in.large_csv) + " --trials-csv " + shell_quoted(in.trials_csv) + " --json " + out +
                       "survey.json",
         {"survey.json"}},
        {"synth", "synth poisson --trials 2000 --duration-s 20 --overwrite --out " + out + "p.h5", {"p.h5", "p.answers.json"}},
        {"convert", "convert " + shell_quoted(in.large_csv) + " --trials-csv " + shell_quoted(in.trials_csv) + " --overwrite --out " +
                        out + "c.h5",
         {"c.h5"}},
        {"figures", "figures " + shell_quoted(in.result) + " --recording " + shell_quoted(in.large) + " --out " + out + "report", {}},
    };
}

// Until the run has made a temporary in `folder` (then it is at work); false if it ended first.
bool wait_for_a_temporary(const std::string& folder, const background_rastrum& run) {
    for (;;) {
        if (!temporaries_in(folder).empty()) return true;
        siginfo_t info{};
        if (::waitid(P_PID, static_cast<id_t>(run.pid), &info, WEXITED | WNOHANG | WNOWAIT) == 0 && info.si_pid == run.pid) {
            return false;
        }
        std::this_thread::sleep_for(std::chrono::milliseconds(5));
    }
}

void stop_while_working(const workload& w, const std::string& folder, int signal) {
    for (const auto& o: w.outputs) std::ofstream(folder + "/" + o) << "old\n";
    const auto run = start_rastrum(w.args, ending::provoked);
    ASSERT_TRUE(wait_for_a_temporary(folder, run)) << w.name << " ended before it could be stopped: "
                                                   << finish_rastrum(run).err;
    std::this_thread::sleep_for(std::chrono::milliseconds(100));  // into the work itself
    ::kill(run.pid, signal);
    const auto r = finish_rastrum(run);
    EXPECT_EQ(r.exit_code, 128 + signal) << r.err;
    EXPECT_NE(r.err.find("stopped by signal " + std::to_string(signal)), std::string::npos) << r.err;
    EXPECT_TRUE(temporaries_in(folder).empty()) << temporaries_in(folder).front();
    for (const auto& o: w.outputs) EXPECT_EQ(read_file(folder + "/" + o), "old\n") << o;
    if (w.name == "figures") {
        EXPECT_FALSE(fs::exists(folder + "/report"));
    }
}

}  // namespace

TEST(cli_signals, every_command_removes_its_temporaries_and_ends_by_the_signal) {
    const std::pair<int, const char*> signals[] = {{SIGINT, "int"}, {SIGTERM, "term"}, {SIGHUP, "hup"}};
    for (const auto& [signal, name]: signals) {
        const std::string folder = open_folder(std::string("signals-") + name);
        for (const auto& w: workloads(folder)) {
            SCOPED_TRACE(w.name + " stopped by signal " + std::to_string(signal));
            stop_while_working(w, folder, signal);
        }
    }
}

// Stopped while it waits to write a FIFO that nobody reads, after the other outputs are in their
// temporaries (and synth's recording in its scratch file, in $TMPDIR): all of them are removed.
TEST(cli_signals, a_run_stopped_while_writing_its_outputs_leaves_none) {
    const inputs& in = shared_inputs();
    const std::string folder = open_folder("signals-writing");
    const std::string scratch = open_folder("signals-writing-scratch");
    make_fifo(folder + "/nobody-reads.json");
    make_fifo(folder + "/nobody-reads.h5");
    std::ofstream(folder + "/d.csv") << "old\n";
    for (const std::string& args:
         {"direct " + shell_quoted(in.labelled) + " --bin-ms 20 --letters 1-2 --json " + shell_quoted(folder + "/nobody-reads.json") +
              " --csv " + shell_quoted(folder + "/d.csv"),
          "synth conditions --trials-per-condition 5 --out " + shell_quoted(folder + "/nobody-reads.h5")}) {
        SCOPED_TRACE(args);
        const auto run = start_rastrum_via("env TMPDIR=" + shell_quoted(scratch) + " ", args, ending::provoked);
        ASSERT_TRUE(wait_for_a_temporary(folder, run)) << finish_rastrum(run).err;
        // The work is short; wait until only the blocked open of the FIFO is left.
        std::this_thread::sleep_for(std::chrono::milliseconds(500));
        ::kill(run.pid, SIGTERM);
        const auto r = finish_rastrum(run);
        EXPECT_EQ(r.exit_code, 128 + SIGTERM) << r.err;
        EXPECT_TRUE(temporaries_in(folder).empty());
        EXPECT_TRUE(temporaries_in(scratch).empty()) << "the HDF5 scratch file of a stream";
        EXPECT_EQ(read_file(folder + "/d.csv"), "old\n");
    }
}

// Killed outright (SIGKILL cannot be caught), a run leaves OUT.tmp-PID-N; the next run that writes
// OUT removes those whose process no longer runs, and nothing else.
TEST(cli_signals, a_later_run_removes_stale_temporaries_of_dead_processes_only) {
    const inputs& in = shared_inputs();
    const std::string folder = open_folder("signals-stale");
    const std::string scratch = open_folder("signals-stale-scratch");
    // PIDs run below pid_max, so pid_max itself names a process that cannot be running.
    const std::string dead = read_file("/proc/sys/kernel/pid_max").substr(0, read_file("/proc/sys/kernel/pid_max").find('\n'));
    const std::string alive = std::to_string(::getpid());
    for (const std::string& name: std::vector<std::string>{"d.json.tmp-" + dead + "-0", "d.json.tmp-" + dead + "-7", "report.tmp-" + dead + "-2",
                                   "d.json.tmp-" + alive + "-0", "d.json.tmp-notes", "other.json.tmp-" + dead + "-0"}) {
        std::ofstream(folder + "/" + name) << "x\n";
    }
    fs::remove(folder + "/report.tmp-" + dead + "-2");
    fs::create_directory(folder + "/report.tmp-" + dead + "-2");  // a figures folder under way
    std::ofstream(folder + "/report.tmp-" + dead + "-2/index.html") << "partial\n";
    std::ofstream(scratch + "/rastrum-scratch.tmp-" + dead + "-3") << "x\n";

    EXPECT_EQ(run_rastrum("direct " + shell_quoted(in.labelled) + " --bin-ms 20 --letters 1-2 --quiet --json " + shell_quoted(folder + "/d.json")).exit_code, 0);
    EXPECT_EQ(run_rastrum("figures " + shell_quoted(in.result) + " --quiet --out " + shell_quoted(folder + "/report")).exit_code, 0);
    make_fifo(folder + "/results.h5");  // HDF5 into a FIFO goes through a scratch file in $TMPDIR
    fifo_reader reader(folder + "/results.h5");
    EXPECT_EQ(run_rastrum_via("env TMPDIR=" + shell_quoted(scratch) + " ",
                              "direct " + shell_quoted(in.labelled) + " --bin-ms 20 --letters 1-2 --quiet --h5 " +
                                  shell_quoted(folder + "/results.h5")).exit_code, 0);
    reader.finish();
    std::vector<std::string> left = temporaries_in(folder);
    std::sort(left.begin(), left.end());
    EXPECT_EQ(left, (std::vector<std::string>{"d.json.tmp-" + alive + "-0", "d.json.tmp-notes", "other.json.tmp-" + dead + "-0"}))
        << "a live process's temporary, a file of the user's and another output's temporaries stay";
    EXPECT_TRUE(temporaries_in(scratch).empty());
}

// The temporary of convert is OUT.tmp-PID-N, one of them, not a temporary of a temporary.
TEST(cli_signals, convert_makes_one_temporary_named_after_its_output) {
    const inputs& in = shared_inputs();
    const std::string folder = open_folder("signals-convert-name");
    const auto run = start_rastrum("convert " + shell_quoted(in.large) + " --out " + shell_quoted(folder + "/c.h5"), ending::provoked);
    ASSERT_TRUE(wait_for_a_temporary(folder, run)) << finish_rastrum(run).err;
    const auto seen = temporaries_in(folder);
    ::kill(run.pid, SIGTERM);
    finish_rastrum(run);
    ASSERT_EQ(seen.size(), 1u);
    EXPECT_EQ(seen[0].find("c.h5.tmp-" + std::to_string(run.pid) + "-"), 0u) << seen[0];
    EXPECT_EQ(seen[0].find(".tmp-", seen[0].find(".tmp-") + 1), std::string::npos) << "a doubled temporary: " << seen[0];
}
