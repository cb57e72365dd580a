// What rastrum refuses and how it says so, end to end: synth refuses parameters that would make a
// file its answers do not describe (or no file at all) as usage errors before writing anything, its
// answers describe exactly the file written, and messages name the option or the file and object
// with numbers as people write them. Each case failed before: synth wrote 3 conditions and answers
// for 4, exited 3 with an empty file name, or a message printed 0.69999999999999996 or "7.300 ms".
#include "cli_runner.hpp"

#include <rastrum/recording_hdf5.hpp>
#include <rastrum/synthetic.hpp>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <map>

using namespace rastrum::testing;
using nlohmann::json;

namespace {

bool says(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

std::string quoted(const std::string& path) { return "'" + path + "'"; }

void write_text(const std::string& path, const std::string& text) { std::ofstream(path) << text; }

// A synth run that must be refused as a usage error naming `option`, with nothing written.
void expect_refused(const std::string& folder, const std::string& options, const std::string& option) {
    const std::string out = folder + "/refused.h5";
    const auto r = run_rastrum("synth " + options + " --out " + quoted(out));
    EXPECT_EQ(r.exit_code, 2) << options << ": " << r.err;
    EXPECT_TRUE(says(r.err, option)) << options << ": " << r.err;
    EXPECT_FALSE(file_exists(out)) << options;
    EXPECT_FALSE(file_exists(folder + "/refused.answers.json")) << options;
}

}  // namespace

TEST(synth_refusals, repeated_labels_and_impossible_parameters_are_usage_errors_before_writing) {
    const std::string folder = fresh_folder("refusals-synth");
    // Two conditions named a would be one condition of 60 trials in the file.
    expect_refused(folder, "conditions --labels a,a,b,c", "--labels: 'a' is named twice");
    // A session of 1e310 s: its stop times were infinite, reported as invalid input of no file (exit 3).
    expect_refused(folder, "frozen-bins --duration-s 1e308", "--duration-s 1e+308");
    expect_refused(folder, "frozen-bins --duration-s 1e6 --trials 1000000", "--bin-ms 2 is finer than spike times can resolve");
    expect_refused(folder, "poisson --resolution-ms 1e-300", "--resolution-ms 1e-300");
    // One 2 ms bin in 3 ms: the answers divide by the bins after the first.
    expect_refused(folder, "frozen-bins --duration-s 0.003", "--bin-ms 2: --duration-s 0.003 holds 1 bin");
    expect_refused(folder, "patterns --duration-s 0.003", "--bin-ms 2: --duration-s 0.003 holds 1 bin");
    // 300 Hz in 2 ms bins is p = 0.6: the probability after no spike, p (1 - a) / (1 - p), would pass 1.
    expect_refused(folder, "patterns --rate-hz 300", "--rate-hz 300 with --bin-ms 2");
    expect_refused(folder, "patterns --bursty-fraction 1.5", "--bursty-fraction");
    expect_refused(folder, "patterns --after-spike-bursty -0.1", "--after-spike-bursty");
    expect_refused(folder, "patterns --after-spike-refractory 2", "--after-spike-refractory");
    expect_refused(folder, "conditions --means 1000,2,3,4", "--means");
    expect_refused(folder, "conditions --gap-s -1", "--gap-s");
    expect_refused(folder, "frozen-bins --rate-hz 20,30 --modulation 1,2,3", "--modulation");
    // 10^12 Hz between trials: 6e13 spikes per unit, far beyond any memory.
    expect_refused(folder, "conditions --background-hz 1e12", "spikes per unit");
    expect_refused(folder, "poisson --rate-hz 1e300", "spikes per unit");
}

TEST(synth_refusals, the_answers_describe_exactly_the_file_written) {
    // Each kind written, read back and the answers' structure recomputed from the file: kind, units,
    // conditions with their labels and trial counts, trials and their duration; and the conditions'
    // exact count information recomputed from the means (Poisson counts, equally likely conditions).
    // A request synth cannot describe exactly (a label named twice) must be refused instead.
    const std::string folder = fresh_folder("refusals-answers");
    const std::vector<std::pair<std::string, bool>> kinds{
        {"frozen-bins --trials 12 --duration-s 0.5 --rate-hz 20,30,40", true},
        {"poisson --trials 9 --duration-s 0.4 --rate-hz 15,25", true},
        {"patterns --trials 11 --duration-s 0.3 --rate-hz 25,40", true},
        {"conditions --labels up,down,left --trials-per-condition 7 --duration-s 0.3 --means 1,2,3 --means 4,4,4", true},
        {"conditions --labels a,a,b,c --trials-per-condition 5", false}};
    for (std::size_t i = 0; i < kinds.size(); ++i) {
        const auto& [options, describable] = kinds[i];
        const std::string kind = options.substr(0, options.find(' '));
        const std::string out = folder + "/" + std::to_string(i) + ".h5";
        const auto r = run_rastrum("synth " + options + " --out " + quoted(out));
        if (!describable && r.exit_code == 2) {
            EXPECT_FALSE(file_exists(out)) << options;
            continue;
        }
        ASSERT_EQ(r.exit_code, 0) << options << ": " << r.err;
        const json answers = json::parse(read_file(folder + "/" + std::to_string(i) + ".answers.json"));
        const rastrum::recording rec = rastrum::read_recording_hdf5(out);
        EXPECT_EQ(answers["kind"], kind);
        const json& p = answers["parameters"];
        ASSERT_EQ(answers["units"].size(), rec.units.size()) << options;
        for (std::size_t u = 0; u < rec.units.size(); ++u) EXPECT_EQ(answers["units"][u]["unit"], rec.units[u].id) << options;
        for (std::size_t k = 0; k < rec.trial_count(); ++k) {
            EXPECT_NEAR(rec.trial_stop[k] - rec.trial_start[k], p["duration_s"].get<double>(), 1e-9) << options;
        }
        if (kind != "conditions") {
            EXPECT_EQ(rec.trial_count(), p["trials"].get<std::size_t>()) << options;
            EXPECT_EQ(rec.units.size(), p["rate_hz"].size()) << options;
            continue;
        }
        std::map<std::string, std::size_t> per_label;
        for (const auto& label: rec.stimulus) ++per_label[label];
        ASSERT_EQ(per_label.size(), p["labels"].size()) << "conditions in the file";
        for (const auto& label: p["labels"]) EXPECT_EQ(per_label[label.get<std::string>()], p["trials_per_condition"]) << label;
        ASSERT_EQ(rec.units.size(), p["means"].size());
        for (std::size_t u = 0; u < rec.units.size(); ++u) {
            const json& a = answers["units"][u];
            // Equally likely conditions: H(S) = log2 of their number (common practice).
            EXPECT_DOUBLE_EQ(a["stimulus_entropy_bits"].get<double>(), std::log2(static_cast<double>(per_label.size())));
            EXPECT_DOUBLE_EQ(a["count_info_bits"].get<double>(),
                             rastrum::poisson_count_information(p["means"][u].get<std::vector<double>>()));
        }
    }
}

TEST(messages, numbers_read_from_files_are_written_as_people_wrote_them) {
    // 0.7 is stored as 0.6999999999999999556: a message must still say 0.7, and tell it from 1.
    const std::string folder = fresh_folder("refusals-numbers");
    write_text(folder + "/spikes.csv", "unit,time_s\nu1,0.05\n");
    write_text(folder + "/trials.csv", "start_s,stop_s\n0,1\n0.7,2\n");
    const auto r = run_rastrum("survey " + quoted(folder + "/spikes.csv") + " --trials-csv " + quoted(folder + "/trials.csv"));
    EXPECT_EQ(r.exit_code, 3) << r.err;
    EXPECT_TRUE(says(r.err, "stop time <= 0.7, the start of trial 1, found 1")) << r.err;
}

TEST(messages, option_checks_name_the_option_and_its_value) {
    const std::string folder = fresh_folder("refusals-options");
    const std::string file = quoted(folder + "/c.h5");
    ASSERT_EQ(run_rastrum("synth conditions --out " + file + " --duration-s 0.5").exit_code, 0);
    const std::map<std::string, std::pair<int, std::string>> cases{
        // A bin wider than the window is that; a fine bin is not (see test_cli_bounds).
        {"stiminfo " + file + " --code word --window-ms 0:500 --bin-ms 600", {2, "--bin-ms 600 is wider than --window-ms 0:500"}},
        {"stiminfo " + file + " --code latency --window-ms 0:500 --bin-ms 20 --slide-ms 10:5",
         {2, "--bin-ms 20 is wider than the --slide-ms windows of 10 ms"}},
        {"stiminfo " + file + " --code count --window-ms 0:500 --slide-ms 0:5", {2, "--slide-ms W:S needs a positive width and step, got 0:5"}},
        {"stiminfo " + file + " --code count --window-ms 0:500 --slide-ms 600:5", {2, "--slide-ms: the sliding window of 600 ms is wider than --window-ms 0:500"}},
        {"stiminfo " + file + " --code count --window-ms 0:500 --population u1", {2, "--population u1: a population needs at least two units"}},
        {"stiminfo " + file + " --code word --window-ms 0:500 --bin-ms 0", {2, "--bin-ms: expected one positive width in ms, got '0'"}},
        {"direct " + file + " --bin-ms 2 --letters 1-2 --bias-tolerance 7.3", {2, "--bias-tolerance must lie in (0, 1], got 7.3"}},
        {"direct " + file + " --bin-ms 2 --letters 1-2 --surrogates 1", {2, "--surrogates: 0 (no calibration) or at least 2, got 1"}},
        {"stiminfo " + file + " --code count --window-ms 0:500 --surrogates 1", {2, "--surrogates: 0 (no calibration) or at least 2, got 1"}},
        {"direct " + file + " --bin-ms 2 --letters 1-2 --surrogates 5 --error-tolerance 0", {2, "--error-tolerance must lie in (0, 1], got 0"}},
        {"direct " + file + " --bin-ms 2 --letters 1-2 --surrogates 5 --surrogate-splits 1", {2, "--surrogate-splits: expected"}},
        // 500 ms hold 68 bins of 7.3 ms: the width as typed, not 7.300.
        {"direct " + file + " --bin-ms 7.3 --letters 1-100", {4, "at 7.3 ms bins the trials hold 68 whole bins"}},
    };
    for (const auto& [command, expected]: cases) {
        const auto r = run_rastrum(command + " --quiet");
        EXPECT_EQ(r.exit_code, expected.first) << command << ": " << r.err;
        EXPECT_TRUE(says(r.err, expected.second)) << command << ": " << r.err;
    }
}
