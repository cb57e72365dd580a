// End to end, with the real rastrum command: one invented recording in the native layout, NWB 2.x,
// a MATLAB 7.3 MAT-file and CSV text must give identical results (design: the loaders all produce
// the same recording model, so nothing after them can tell the formats apart). The foreign files
// come from the tests' own writers (recording_writers.cpp); tests/reference/write_nwb_mat.py does
// the same with files written by h5py.
#include "cli_runner.hpp"
#include "loader_checks.hpp"
#include "recording_writers.hpp"

#include <rastrum/recording_hdf5.hpp>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <filesystem>

using namespace rastrum::testing;
using nlohmann::json;

namespace {

struct formats {
    std::string native, nwb, mat, spikes_csv, trials_csv;
    bool labelled = false;
    // The input part of a command line for each format, in the order native, NWB, MAT, text.
    std::vector<std::pair<std::string, std::string>> inputs() const {
        return {{"native", "'" + native + "'"},
                {"nwb", "'" + nwb + "'"},
                {"mat", "'" + mat + "' --mat-spikes spikes --mat-trial-start trial_start --mat-trial-stop trial_stop" +
                            std::string(labelled ? " --mat-stimulus stimulus" : "")},
                {"text", "'" + spikes_csv + "' --trials-csv '" + trials_csv + "'"}};
    }
};

// Makes the recording with `synth_args` and writes it in every format.
formats in_every_format(const std::string& folder, const std::string& synth_args) {
    formats f;
    f.native = folder + "/r.h5";
    const auto made = run_rastrum("synth " + synth_args + " --out '" + f.native + "'");
    EXPECT_EQ(made.exit_code, 0) << made.err;
    const rastrum::recording rec = rastrum::read_recording_hdf5(f.native);
    f.labelled = rec.has_stimulus();
    f.nwb = folder + "/r.nwb";
    f.mat = folder + "/r.mat";
    f.spikes_csv = folder + "/spikes.csv";
    f.trials_csv = folder + "/trials.csv";
    write_nwb(rec, f.nwb);
    write_mat(rec, f.mat);
    write_text(rec, f.spikes_csv, f.trials_csv);
    return f;
}

// Everything an analysis computed; the input (path, sha256, what was read) and the run (times,
// command line) differ between the formats by design.
json results_of(const std::string& command, const std::string& input, const std::string& options) {
    const auto r = run_rastrum(command + " " + input + " " + options + " --quiet --json -");
    EXPECT_EQ(r.exit_code, 0) << command << " " << input << "\n" << r.err;
    json j = json::parse(r.out.empty() ? "{}" : r.out);
    return {{"parameters", j["parameters"]}, {"records", j["records"]}, {"curves", j["curves"]}};
}

void expect_identical_results(const formats& f, const std::string& command, const std::string& options) {
    const auto inputs = f.inputs();
    const json reference = results_of(command, inputs[0].second, options);
    ASSERT_FALSE(reference["records"].empty());
    for (std::size_t i = 1; i < inputs.size(); ++i) {
        const json other = results_of(command, inputs[i].second, options);
        // The first few differences only: the whole result is thousands of numbers.
        const json differences = json::diff(reference, other);
        EXPECT_TRUE(differences.empty()) << command << ": " << inputs[i].first << " differs from native in "
                                         << differences.size() << " places, first "
                                         << differences[0].dump().substr(0, 300);
    }
}

}  // namespace

TEST(cli_formats, direct_gives_identical_results_from_every_format) {
    const formats f = in_every_format(fresh_folder("formats-direct"),
                                      "frozen-bins --trials 60 --duration-s 2 --rate-hz 20,35 --modulation 1.2 --seed 7");
    expect_identical_results(f, "direct", "--bin-ms 2,4 --letters 1-5 --null-rotations 3 --threads 2");
}

TEST(cli_formats, stiminfo_gives_identical_results_from_every_format) {
    const formats f = in_every_format(fresh_folder("formats-stiminfo"),
                                      "conditions --duration-s 0.5 --means 2,4,6,9 --means 3,1,3,1 --seed 3");
    expect_identical_results(f, "stiminfo", "--window-ms 0:500 --code count --null-shuffles 20 --bootstrap 20 "
                                            "--population u1,u2 --threads 2");
}

TEST(cli_formats, survey_names_the_format_and_what_was_read) {
    const formats f = in_every_format(fresh_folder("formats-survey"), "conditions --duration-s 0.5 --means 2,4,6,9");
    const std::vector<std::pair<std::string, std::string>> expected = {
        {"native", "/trials/stimulus"}, {"nwb", "/intervals/trials/stimulus"}, {"mat", "stimulus"},
        {"text", "column stimulus"}};
    const auto inputs = f.inputs();
    for (std::size_t i = 0; i < inputs.size(); ++i) {
        const auto r = run_rastrum("survey " + inputs[i].second + " --json -");
        ASSERT_EQ(r.exit_code, 0) << r.err;
        const json j = json::parse(r.out);
        EXPECT_EQ(j["input"]["read"]["format"], inputs[i].first);
        EXPECT_TRUE(contains(j["input"]["read"]["labels"].get<std::string>(), expected[i].second)) << j["input"];
        EXPECT_EQ(j["contents"]["format"], inputs[i].first);
        EXPECT_EQ(j["trials"]["count"], 120);
    }
    const auto text = run_rastrum("survey '" + f.nwb + "'");
    EXPECT_TRUE(contains(text.out, "an NWB 2.7.0 file")) << text.out;
    EXPECT_TRUE(contains(text.out, "/intervals/trials (TimeIntervals)")) << text.out;
    const auto csv = run_rastrum("survey " + inputs[3].second + " --json -");
    EXPECT_EQ(json::parse(csv.out)["input"]["other_files"][0]["path"], f.trials_csv) << "the trials CSV is an input too";
}

TEST(cli_formats, convert_writes_the_native_layout_losslessly_and_never_overwrites) {
    const std::string folder = fresh_folder("formats-convert");
    const formats f = in_every_format(folder, "conditions --duration-s 0.5 --means 2,4,6,9 --means 0,0,0,0");
    const rastrum::recording original = rastrum::read_recording_hdf5(f.native);
    const auto inputs = f.inputs();
    for (const auto& [name, input]: inputs) {
        const std::string out = folder + "/from-" + name + ".h5";
        const auto r = run_rastrum("convert " + input + " --out '" + out + "'");
        ASSERT_EQ(r.exit_code, 0) << name << ": " << r.err;
        EXPECT_TRUE(contains(r.err, "read back identical")) << r.err;
        expect_same_recording(rastrum::read_recording_hdf5(out), original);
        const std::string before = read_file(out);
        const auto again = run_rastrum("convert " + input + " --out '" + out + "'");
        EXPECT_EQ(again.exit_code, 2) << "refuses to overwrite";
        EXPECT_TRUE(contains(again.err, "--overwrite")) << again.err;
        EXPECT_EQ(read_file(out), before);
        EXPECT_EQ(run_rastrum("convert " + input + " --out '" + out + "' --overwrite --quiet").exit_code, 0);
    }
    EXPECT_EQ(run_rastrum("convert '" + f.native + "' --out '" + f.native + "' --overwrite").exit_code, 2)
        << "the input is never the output";
    EXPECT_EQ(run_rastrum("convert '" + f.nwb + "' --out '" + folder + "/x.nwb'").exit_code, 2) << "OUT is NAME.h5";
    const auto bad = run_rastrum("convert '" + folder + "/absent.nwb' --out '" + folder + "/y.h5'");
    EXPECT_EQ(bad.exit_code, 3);
    EXPECT_FALSE(file_exists(folder + "/y.h5"));
    for (const auto& entry: std::filesystem::directory_iterator(folder)) {
        EXPECT_FALSE(contains(entry.path().string(), ".tmp-")) << entry.path();
    }
}

TEST(cli_formats, input_options_are_checked_against_the_format) {
    const formats f = in_every_format(fresh_folder("formats-options"), "conditions --duration-s 0.5 --means 2,4,6,9");
    for (const std::string command: {"survey", "direct", "stiminfo", "convert"}) {
        const auto help = run_rastrum(command + " --help");
        for (const char* option: {"--format", "--stimulus-column", "--intervals", "--unit-column", "--mat-spikes",
                                  "--mat-trial-start", "--mat-trial-stop", "--mat-stimulus", "--mat-unit-ids", "--trials-csv"}) {
            EXPECT_TRUE(contains(help.out, option)) << command << " " << option;
        }
    }
    EXPECT_TRUE(contains(run_rastrum("--help").out, "convert"));
    const auto wrong_format = run_rastrum("survey '" + f.nwb + "' --mat-spikes spikes");
    EXPECT_EQ(wrong_format.exit_code, 2);
    EXPECT_TRUE(contains(wrong_format.err, "--mat-spikes applies to MAT-files")) << wrong_format.err;
    const auto unnamed = run_rastrum("survey '" + f.mat + "'");
    EXPECT_EQ(unnamed.exit_code, 2);
    EXPECT_TRUE(contains(unnamed.err, "spikes (cell 1x1)")) << "lists the variables: " << unnamed.err;
    const auto no_trials = run_rastrum("direct '" + f.spikes_csv + "' --bin-ms 2 --letters 1-2");
    EXPECT_EQ(no_trials.exit_code, 2);
    EXPECT_TRUE(contains(no_trials.err, "--trials-csv")) << no_trials.err;
    EXPECT_EQ(run_rastrum("survey '" + f.nwb + "' --format excel").exit_code, 2);
    const auto forced = run_rastrum("survey '" + f.nwb + "' --format native");
    EXPECT_EQ(forced.exit_code, 3) << "an NWB /units table is not the native layout";
    EXPECT_TRUE(contains(forced.err, "/units/")) << forced.err;
    const auto no_column = run_rastrum("stiminfo '" + f.nwb + "' --stimulus-column orientation --window-ms 0:500 --code count");
    EXPECT_EQ(no_column.exit_code, 2);
    EXPECT_TRUE(contains(no_column.err, "start_time, stimulus, stop_time")) << no_column.err;
}

// Every loader's errors reach the user as exit 3 with the file and the object (design; README's
// exit codes).
TEST(cli_formats, malformed_inputs_exit_3_naming_file_and_object) {
    const std::string folder = fresh_folder("formats-malformed");
    rastrum::recording rec = invented_recording();
    rec.trial_stop[2] = 1.5;  // before its start
    write_nwb(rec, folder + "/bad.nwb");
    write_mat(rec, folder + "/bad.mat");
    write_text(rec, folder + "/bad-spikes.csv", folder + "/bad-trials.csv");
    const std::vector<std::pair<std::string, std::string>> cases = {
        {"'" + folder + "/bad.nwb'", "/intervals/trials/stop_time[2]"},
        {"'" + folder + "/bad.mat' --mat-spikes spikes --mat-trial-start trial_start --mat-trial-stop trial_stop",
         "trial_stop(3)"},
        {"'" + folder + "/bad-spikes.csv' --trials-csv '" + folder + "/bad-trials.csv'", "bad-trials.csv: line 4, stop_s"}};
    for (const auto& [input, object]: cases) {
        for (const std::string command: {"survey ", "direct "}) {
            const std::string extra = command == "direct " ? " --bin-ms 2 --letters 1-2" : "";
            const auto r = run_rastrum(command + input + extra + " --json '" + folder + "/out.json'");
            EXPECT_EQ(r.exit_code, 3) << input << "\n" << r.err;
            EXPECT_TRUE(contains(r.err, object)) << r.err;
            EXPECT_FALSE(file_exists(folder + "/out.json"));
        }
    }
}
