// End-to-end: the real rastrum command in a child process, on real files.
#include "bad_recordings.hpp"
#include "cli_runner.hpp"

#include <rastrum/recording_hdf5.hpp>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <cstdlib>
#include <filesystem>
#include <fstream>

using namespace rastrum::testing;
using nlohmann::json;

namespace {

// One small synthetic recording shared by the tests below.
std::string small_recording() {
    static const std::string path = [] {
        const std::string folder = fresh_folder("cli-shared");
        const std::string p = folder + "/small.h5";
        const auto r = run_rastrum("synth frozen-bins --out '" + p +
                                   "' --trials 40 --duration-s 2 --rate-hz 20,30 --modulation 1.5 --seed 4");
        EXPECT_EQ(r.exit_code, 0) << r.err;
        return p;
    }();
    return path;
}

}  // namespace

TEST(cli, help_documents_commands_options_and_exit_codes) {
    const auto top = run_rastrum("--help");
    EXPECT_EQ(top.exit_code, 0);
    for (const char* word: {"survey", "direct", "synth", "Exit codes"}) EXPECT_NE(top.out.find(word), std::string::npos) << word;
    const auto direct = run_rastrum("direct --help");
    EXPECT_EQ(direct.exit_code, 0);
    for (const char* option: {"--unit", "--stimulus", "--bin-ms", "--letters", "--binary", "--fit-letters", "--seed",
                              "--threads", "--json", "--csv", "--bias-tolerance", "--subset-estimator", "--splits",
                              "--surrogates", "--surrogate-splits", "--error-tolerance", "--error-floor"}) {
        EXPECT_NE(direct.out.find(option), std::string::npos) << option;
    }
    EXPECT_NE(direct.out.find("4 the data cannot support"), std::string::npos);
    EXPECT_EQ(run_rastrum("").exit_code, 2);
    EXPECT_EQ(run_rastrum("frobnicate").exit_code, 2);
}

TEST(cli, synth_writes_the_recording_and_its_answers) {
    const std::string folder = fresh_folder("cli-synth");
    const auto r = run_rastrum("synth conditions --out " + folder + "/c.h5 --means 1,2,3,4 --means 5,5,5,5");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const json answers = json::parse(read_file(folder + "/c.answers.json"));
    EXPECT_EQ(answers["kind"], "conditions");
    ASSERT_EQ(answers["units"].size(), 2u);
    EXPECT_NEAR(answers["units"][1]["count_info_bits"].get<double>(), 0.0, 1e-12);
    const auto s = run_rastrum("survey " + folder + "/c.h5 --json -");
    ASSERT_EQ(s.exit_code, 0) << s.err;
    const json survey = json::parse(s.out);
    EXPECT_EQ(survey["trials"]["count"], 120);
    EXPECT_EQ(survey["stimulus_labels"]["a"], 30);
    EXPECT_EQ(run_rastrum("synth sideways --out " + folder + "/x.h5").exit_code, 2);
    EXPECT_FALSE(file_exists(folder + "/x.h5"));
}

TEST(cli, survey_counts_spikes_outside_trials) {
    const auto r = run_rastrum("survey " + small_recording());
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("outside"), std::string::npos);
    EXPECT_NE(r.out.find("trials: 40"), std::string::npos) << r.out;
}

TEST(cli, direct_writes_stable_json_and_tidy_csv) {
    const std::string folder = fresh_folder("cli-direct");
    const auto r = run_rastrum("direct " + small_recording() + " --bin-ms 2,4 --letters 1-6 --json " + folder +
                               "/d.json --csv " + folder + "/d.csv --threads 2");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("info b/s"), std::string::npos) << "the readable table goes to stdout";
    const json d = json::parse(read_file(folder + "/d.json"));
    for (const char* key: {"tool", "version", "analysis", "input", "parameters", "records"}) EXPECT_TRUE(d.contains(key)) << key;
    EXPECT_EQ(d["analysis"], "direct");
    EXPECT_EQ(d["input"]["sha256"].get<std::string>().size(), 64u);
    EXPECT_EQ(d["parameters"]["seed"], 1);
    ASSERT_EQ(d["records"].size(), 4u);  // 2 units x 2 bin widths
    const json& rec = d["records"][0];
    for (const char* key: {"unit", "stimulus", "bin_ms", "trials", "trial_duration_s", "mean_rate_hz", "by_letters",
                           "fit_letters", "total_entropy_rate_bits_per_s", "noise_entropy_rate_bits_per_s",
                           "info_rate_bits_per_s", "info_rate_ci95_bits_per_s", "bits_per_spike", "coding_efficiency",
                           "calibration", "warnings"}) {
        EXPECT_TRUE(rec.contains(key)) << key;
    }
    // The calibration is on by default; lengths are computed up to the first range beyond its
    // tolerance, and the record says so.
    EXPECT_EQ(d["parameters"]["surrogates"], 10);
    std::size_t rows = 0;
    for (const json& each: d["records"]) {
        const json& by = each["by_letters"];
        ASSERT_FALSE(by.empty());
        EXPECT_EQ(each["fit_letters_from"], "calibration");
        EXPECT_EQ(each["calibration"]["surrogates"], 10);
        EXPECT_EQ(each["letters_computed"], json::array({by.front()["letters"], by.back()["letters"]}));
        const std::string until = each["letters_computed_until"];
        EXPECT_EQ(until, by.size() < 6 ? "calibration" : "--letters");
        rows += by.size();
    }
    for (const char* key: {"letters", "samples", "distinct_words", "total_entropy_bits", "noise_entropy_bits",
                           "info_bits", "total_entropy_plugin_bits", "noise_entropy_plugin_bits"}) {
        EXPECT_TRUE(rec["by_letters"][0].contains(key)) << key;
    }
    // A caution on the numbers only where the calibrated error exceeds the tolerance (40 trials alone
    // are no reason for one), and then one that says so.
    for (const json& each: d["records"]) {
        bool says_uncertain = false;
        for (const json& w: each["warnings"]) says_uncertain |= w.get<std::string>().rfind("uncertain: ", 0) == 0;
        EXPECT_EQ(says_uncertain, each["calibration"]["uncertain"].get<bool>()) << each["warnings"].dump();
        EXPECT_EQ(each["warnings"].empty(), !says_uncertain) << each["warnings"].dump();
    }
    // Tidy CSV: a provenance comment, a header and one row per (unit, bin width, word length).
    const std::string csv = read_file(folder + "/d.csv");
    EXPECT_EQ(std::count(csv.begin(), csv.end(), '\n'), static_cast<std::ptrdiff_t>(2 + rows));
    ASSERT_EQ(csv.rfind("# {", 0), 0u);
    const json origin = json::parse(csv.substr(2, csv.find('\n') - 2));
    EXPECT_EQ(origin["input"]["sha256"], d["input"]["sha256"]);
    EXPECT_EQ(origin["parameters"], d["parameters"]);
    EXPECT_TRUE(origin["run"].contains("started_utc"));
    EXPECT_NE(csv.find("\nunit,stimulus,bin_ms,"), std::string::npos);
}

// --every-length computes all of --letters, and changes no rate (the fit range ends before).
TEST(cli, direct_every_length_adds_rows_and_changes_no_rate) {
    const std::string folder = fresh_folder("cli-every-length");
    const std::string common = "direct " + small_recording() + " --bin-ms 2,4 --letters 1-6 --threads 2 --quiet --json ";
    ASSERT_EQ(run_rastrum(common + folder + "/part.json").exit_code, 0);
    ASSERT_EQ(run_rastrum(common + folder + "/every.json --every-length").exit_code, 0);
    const json part = json::parse(read_file(folder + "/part.json"));
    const json every = json::parse(read_file(folder + "/every.json"));
    EXPECT_EQ(every["parameters"]["every_length"], true);
    EXPECT_EQ(part["parameters"]["every_length"], false);
    ASSERT_EQ(part["records"].size(), every["records"].size());
    std::size_t fewer = 0;
    for (std::size_t i = 0; i < part["records"].size(); ++i) {
        const json& a = part["records"][i];
        const json& b = every["records"][i];
        EXPECT_EQ(b["by_letters"].size(), 6u);
        EXPECT_EQ(b["letters_computed_until"], "--letters");
        fewer += a["by_letters"].size() < b["by_letters"].size();
        for (const char* key: {"fit_letters", "info_rate_bits_per_s", "info_rate_ci95_bits_per_s", "warnings"}) {
            EXPECT_EQ(a[key], b[key]) << key;
        }
    }
    EXPECT_GT(fewer, 0u) << "the small recording's records should stop before 6 letters";
}

TEST(cli, same_results_for_one_and_two_threads) {
    const std::string folder = fresh_folder("cli-threads");
    const std::string base = "direct " + small_recording() + " --bin-ms 2 --letters 1-5 --quiet --json ";
    ASSERT_EQ(run_rastrum(base + folder + "/one.json --threads 1").exit_code, 0);
    ASSERT_EQ(run_rastrum(base + folder + "/two.json --threads 2").exit_code, 0);
    json one = json::parse(read_file(folder + "/one.json")), two = json::parse(read_file(folder + "/two.json"));
    EXPECT_EQ(one["records"], two["records"]);
}

TEST(cli, usage_errors_exit_2_and_write_nothing) {
    const std::string folder = fresh_folder("cli-usage");
    const std::string out = " --json " + folder + "/d.json";
    for (const std::string bad: {" --bin-ms 2", " --letters 1-4", " --bin-ms x --letters 1-4", " --bin-ms 2 --letters 4-1",
                                 " --bin-ms -2 --letters 1-4", " --bin-ms 2 --letters 1-4 --fit-letters 2-9",
                                 " --bin-ms 2 --letters 1-4 --unit nosuch", " --bin-ms 2 --letters 1-4 --stimulus nosuch",
                                 " --bin-ms 2 --letters 1-4 --subset-estimator guess", " --bin-ms 2 --letters 1-4 --bogus"}) {
        const auto r = run_rastrum("direct " + small_recording() + bad + out);
        EXPECT_EQ(r.exit_code, 2) << bad << "\n" << r.err;
        EXPECT_NE(r.err.find("error"), std::string::npos) << bad;
        EXPECT_FALSE(file_exists(folder + "/d.json")) << bad;
    }
    // A missing folder is the file system's answer: exit 6, an output that cannot be written.
    const auto no_folder = run_rastrum("direct " + small_recording() + " --bin-ms 2 --letters 1-4 --json " + folder + "/no/d.json");
    EXPECT_EQ(no_folder.exit_code, 6);
    EXPECT_NE(no_folder.err.find("does not exist"), std::string::npos);
    const auto onto_input = run_rastrum("direct " + small_recording() + " --bin-ms 2 --letters 1-4 --json " + small_recording());
    EXPECT_EQ(onto_input.exit_code, 2);
    EXPECT_NE(onto_input.err.find("overwrite an input"), std::string::npos);
}

TEST(cli, invalid_input_exits_3_and_keeps_existing_outputs) {
    const std::string folder = fresh_folder("cli-invalid");
    {
        std::ofstream(folder + "/not.h5") << "this is not HDF5\n";
        std::ofstream(folder + "/keep.json") << "previous results\n";
    }
    const auto r = run_rastrum("direct " + folder + "/not.h5 --bin-ms 2 --letters 1-4 --json " + folder + "/keep.json");
    EXPECT_EQ(r.exit_code, 3) << r.err;
    EXPECT_NE(r.err.find("not.h5"), std::string::npos) << r.err;
    EXPECT_EQ(read_file(folder + "/keep.json"), "previous results\n") << "a failure must not clobber outputs";
    const auto missing = run_rastrum("survey " + folder + "/absent.h5");
    EXPECT_EQ(missing.exit_code, 3);
    EXPECT_NE(missing.err.find("absent.h5"), std::string::npos);
    // No temporary files are left behind.
    for (const auto& entry: std::filesystem::directory_iterator(folder)) {
        EXPECT_EQ(entry.path().string().find(".tmp-"), std::string::npos) << entry.path();
    }
}

TEST(cli, too_little_data_exits_4_without_output) {
    const std::string folder = fresh_folder("cli-insufficient");
    ASSERT_EQ(run_rastrum("synth frozen-bins --out " + folder + "/few.h5 --trials 4 --duration-s 1").exit_code, 0);
    const auto r = run_rastrum("direct " + folder + "/few.h5 --bin-ms 2 --letters 1-4 --json " + folder + "/d.json");
    EXPECT_EQ(r.exit_code, 4) << r.err;
    EXPECT_NE(r.err.find("at least 8 trials"), std::string::npos) << r.err;
    EXPECT_FALSE(file_exists(folder + "/d.json"));
}

TEST(cli, malformed_recordings_exit_3_naming_the_hdf5_path) {
    const std::string folder = fresh_folder("cli-malformed");
    for (const auto& bad: write_bad_recordings(folder)) {
        for (const std::string command: {"survey ", "direct "}) {
            const std::string extra = command == "direct " ? " --bin-ms 2 --letters 1-2" : "";
            const auto r = run_rastrum(command + bad.path + extra + " --json " + folder + "/out.json");
            EXPECT_EQ(r.exit_code, 3) << command << bad.path << "\n" << r.err;
            EXPECT_NE(r.err.find(bad.path), std::string::npos) << r.err;
            EXPECT_NE(r.err.find(bad.names), std::string::npos) << "message should name " << bad.names << ": " << r.err;
            EXPECT_NE(r.err.find("expected"), std::string::npos) << r.err;
            EXPECT_FALSE(file_exists(folder + "/out.json"));
        }
    }
}

// The bundled demo recordings are what the project's own generator makes with the documented commands.
TEST(cli, demo_recording_is_made_by_the_documented_command) {
    const std::string folder = fresh_folder("cli-demo");
    const std::string script = std::string(RASTRUM_SOURCE_DIR) + "/demo-recordings/make-demo-recordings.sh";
    ASSERT_EQ(std::system(("bash '" + script + "' '" + RASTRUM_BINARY + "' '" + folder + "' 2>/dev/null").c_str()), 0);
    for (const std::string name: {"flicker-tectum.h5", "whisker-barrel.h5"}) {
        const auto fresh = rastrum::read_recording_hdf5(folder + "/" + name);
        const auto bundled = rastrum::read_recording_hdf5(std::string(RASTRUM_SOURCE_DIR) + "/demo-recordings/" + name);
        ASSERT_EQ(fresh.units.size(), bundled.units.size()) << name;
        for (std::size_t u = 0; u < fresh.units.size(); ++u) {
            EXPECT_EQ(fresh.units[u].id, bundled.units[u].id) << name;
            EXPECT_EQ(fresh.units[u].spike_times, bundled.units[u].spike_times) << name << " " << fresh.units[u].id;
        }
        EXPECT_EQ(fresh.trial_start, bundled.trial_start) << name;
        EXPECT_EQ(fresh.trial_stop, bundled.trial_stop) << name;
        EXPECT_EQ(fresh.stimulus, bundled.stimulus) << name;
    }
}

TEST(cli, nothing_the_user_had_is_overwritten_by_synth) {
    const std::string folder = fresh_folder("cli-overwrite");
    const std::string path = folder + "/r.h5";
    ASSERT_EQ(run_rastrum("synth frozen-bins --trials 10 --duration-s 1 --out " + path).exit_code, 0);
    const std::string before = read_file(path);
    const auto again = run_rastrum("synth frozen-bins --trials 10 --duration-s 1 --seed 2 --out " + path);
    EXPECT_EQ(again.exit_code, 2);
    EXPECT_NE(again.err.find("--overwrite"), std::string::npos) << again.err;
    EXPECT_EQ(read_file(path), before);
    EXPECT_EQ(run_rastrum("synth frozen-bins --trials 10 --duration-s 1 --seed 2 --overwrite --out " + path).exit_code, 0);
    EXPECT_NE(read_file(path), before);
    EXPECT_EQ(run_rastrum("synth frozen-bins --out " + folder + "/r.answers.json").exit_code, 2);
}

TEST(cli, numbers_are_checked_and_options_spelled_in_full) {
    const std::string base = "direct " + small_recording() + " --bin-ms 2 --letters 1-3 --quiet";
    const auto negative = run_rastrum(base + " --threads -1");
    EXPECT_EQ(negative.exit_code, 2);
    EXPECT_NE(negative.err.find("--threads"), std::string::npos) << negative.err;
    EXPECT_EQ(run_rastrum(base + " --seed 1.5").exit_code, 2);
    EXPECT_EQ(run_rastrum(base + " --splits 1").exit_code, 2);
    EXPECT_EQ(run_rastrum("direct " + small_recording() + " --bin-m 2 --letters 1-3").exit_code, 2);
    const auto no_file = run_rastrum("direct --bin-ms 2 --letters 1-3");
    EXPECT_EQ(no_file.exit_code, 2);
    EXPECT_NE(no_file.err.find("missing FILE"), std::string::npos) << no_file.err;
    const auto help = run_rastrum("direct --help");
    EXPECT_EQ(help.out.find("--file"), std::string::npos) << "positional arguments are not options";
    EXPECT_NE(help.out.find("(=0.03)"), std::string::npos) << help.out;
    const auto too_fine = run_rastrum("direct " + small_recording() + " --bin-ms 0.00001 --letters 1-3 --quiet");
    EXPECT_EQ(too_fine.exit_code, 4) << too_fine.err;
    EXPECT_NE(too_fine.err.find("wider bin"), std::string::npos) << too_fine.err;
}

TEST(cli, stiminfo_writes_stable_json_and_refuses_bad_labels_and_windows) {
    const std::string folder = fresh_folder("cli-stiminfo");
    const std::string rec = folder + "/c.h5";
    ASSERT_EQ(run_rastrum("synth conditions --out " + rec + " --duration-s 0.5 --means 2,4,6,9").exit_code, 0);
    const auto help = run_rastrum("stiminfo --help");
    EXPECT_EQ(help.exit_code, 0);
    for (const char* option: {"--unit", "--window-ms", "--code", "--bin-ms", "--binary", "--stimuli", "--estimators",
                              "--null-shuffles", "--bootstrap", "--interval-estimator", "--slide-ms", "--seed", "--threads",
                              "--json", "--csv"}) {
        EXPECT_NE(help.out.find(option), std::string::npos) << option;
    }
    const auto r = run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code count --json " + folder + "/s.json --csv " +
                               folder + "/s.csv --null-shuffles 50 --bootstrap 20");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const json d = json::parse(read_file(folder + "/s.json"));
    EXPECT_EQ(d["analysis"], "stiminfo");
    const json& rec0 = d["records"][0];
    for (const char* key: {"unit", "units", "window_ms", "code", "bin_ms", "trials", "stimuli", "trials_per_stimulus",
                           "stimulus_entropy_bits", "response_alphabet", "distinct_responses", "info_bits", "null",
                           "info_null_subtracted_bits", "info_ci95_bits", "bits_per_spike", "population", "warnings"}) {
        EXPECT_TRUE(rec0.contains(key)) << key;
    }
    for (const char* name: {"plug-in", "miller-madow", "jackknife", "panzeri-treves", "quadratic-extrapolation", "nsb"}) {
        EXPECT_TRUE(rec0["info_bits"].contains(name)) << name;
    }
    EXPECT_EQ(rec0["trials"], 120);
    EXPECT_EQ(rec0["null"]["shuffles"], 50);
    const std::string csv = read_file(folder + "/s.csv");
    EXPECT_EQ(std::count(csv.begin(), csv.end(), '\n'), 2 + 6);  // provenance, header, one row per estimator

    const auto bad_label = run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code count --stimuli a,zz --json " + folder + "/x.json");
    EXPECT_EQ(bad_label.exit_code, 2);
    EXPECT_NE(bad_label.err.find("zz"), std::string::npos) << bad_label.err;
    const auto long_window = run_rastrum("stiminfo " + rec + " --window-ms 0:900 --code count --json " + folder + "/x.json");
    EXPECT_EQ(long_window.exit_code, 4);
    EXPECT_NE(long_window.err.find("shortest trial"), std::string::npos) << long_window.err;
    EXPECT_EQ(run_rastrum("stiminfo " + rec + " --window-ms 500:100 --code count --json " + folder + "/x.json").exit_code, 2);
    EXPECT_EQ(run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code rate --json " + folder + "/x.json").exit_code, 2);
    const auto unlabelled = run_rastrum("stiminfo " + small_recording() + " --window-ms 0:500 --code count --json " + folder + "/x.json");
    EXPECT_EQ(unlabelled.exit_code, 3) << "a recording without labels is an input problem";
    EXPECT_NE(unlabelled.err.find("/trials/stimulus"), std::string::npos) << unlabelled.err;
    const auto repeated = run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code count --stimuli a,b,a --json " + folder + "/x.json");
    EXPECT_EQ(repeated.exit_code, 2);
    EXPECT_NE(repeated.err.find("'a' is named twice"), std::string::npos) << repeated.err;
    EXPECT_FALSE(file_exists(folder + "/x.json"));

    // Without resamples, shuffles or calibration the table says so instead of printing [0, 0] and p = 1.
    const auto bare = run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code count --bootstrap 0 --null-shuffles 0 "
                                  "--surrogates 0");
    ASSERT_EQ(bare.exit_code, 0) << bare.err;
    EXPECT_NE(bare.out.find("none"), std::string::npos) << bare.out;
    EXPECT_NE(bare.out.find("n/a"), std::string::npos) << bare.out;
    EXPECT_EQ(bare.out.find("[0.000, 0.000]"), std::string::npos) << bare.out;
    for (const char* name: {"miller-madow", "panzeri-treves", "quadratic-extrapolation"}) {
        EXPECT_NE(bare.out.find(name), std::string::npos) << "column headers are not cut short: " << name;
    }

    // A population alone brings its members alone too, and its intervals reach the table.
    const std::string pair = folder + "/pair.h5";
    ASSERT_EQ(run_rastrum("synth conditions --out " + pair + " --duration-s 0.5 --means 2,4,6,9 --means 3,3,5,5").exit_code, 0);
    const auto population = run_rastrum("stiminfo " + pair + " --window-ms 0:500 --code count --population u1,u2 --null-shuffles 20 "
                                        "--bootstrap 20 --json " + folder + "/p.json");
    ASSERT_EQ(population.exit_code, 0) << population.err;
    const json p = json::parse(read_file(folder + "/p.json"));
    ASSERT_EQ(p["records"].size(), 3u);
    EXPECT_EQ(p["records"][0]["unit"], "u1");
    EXPECT_EQ(p["records"][1]["unit"], "u2");
    EXPECT_EQ(p["records"][2]["unit"], "u1+u2");
    EXPECT_EQ(p["records"][2]["population"]["ci95_bits"]["synergy"].size(), 2u);
    EXPECT_EQ(run_rastrum("stiminfo " + pair + " --window-ms 0:500 --code count --population u1,u1").exit_code, 2);
}

// Trial selection for scripting repeated-trial subsets (design): --trials and --exclude-trials pick
// trials by index from 0, in both analyses; an index past the last trial is a usage error before
// any output is written.
TEST(cli, trials_are_selected_by_index_and_label) {
    const std::string folder = fresh_folder("cli-trials");
    const auto first_half = run_rastrum("direct " + small_recording() + " --bin-ms 2 --letters 1-4 --trials 0-19 "
                                        "--exclude-trials 3,7 --json " + folder + "/d.json");
    ASSERT_EQ(first_half.exit_code, 0) << first_half.err;
    const json d = json::parse(read_file(folder + "/d.json"));
    EXPECT_EQ(d["records"][0]["trials"], 18);
    EXPECT_EQ(d["parameters"]["trials"].size(), 20u);
    EXPECT_EQ(d["parameters"]["excluded_trials"], json::array({3, 7}));
    const auto past_end = run_rastrum("direct " + small_recording() + " --bin-ms 2 --letters 1-4 --trials 0-40 --json " +
                                      folder + "/x.json");
    EXPECT_EQ(past_end.exit_code, 2);
    EXPECT_NE(past_end.err.find("trial 40 does not exist"), std::string::npos) << past_end.err;
    EXPECT_EQ(run_rastrum("direct " + small_recording() + " --bin-ms 2 --letters 1-4 --trials 5-2").exit_code, 2);
    EXPECT_EQ(run_rastrum("direct " + small_recording() + " --bin-ms 2 --letters 1-4 --trials -1").exit_code, 2);
    EXPECT_FALSE(file_exists(folder + "/x.json"));

    const std::string labelled = folder + "/c.h5";
    ASSERT_EQ(run_rastrum("synth conditions --out " + labelled + " --duration-s 0.5 --means 2,4,6,9").exit_code, 0);
    // Trials alternate labels a, b, c, d: the first 60 trials hold 15 of each.
    const auto s = run_rastrum("stiminfo " + labelled + " --window-ms 0:500 --code count --trials 0-59 --stimulus a "
                               "--stimulus c --null-shuffles 10 --bootstrap 0 --json " + folder + "/s.json");
    ASSERT_EQ(s.exit_code, 0) << s.err;
    const json j = json::parse(read_file(folder + "/s.json"));
    EXPECT_EQ(j["records"][0]["stimuli"], 2);
    EXPECT_EQ(j["records"][0]["trials"], 30);
}

// Curves as tidy CSV and the HDF5 results file come out with the other outputs, all or none (design).
TEST(cli, curves_csv_and_hdf5_results_are_written_together) {
    const std::string folder = fresh_folder("cli-curves");
    const auto r = run_rastrum("direct " + small_recording() + " --bin-ms 2,4 --letters 1-4 --json " + folder +
                               "/d.json --curves-csv " + folder + "/curves.csv --h5 " + folder + "/d.h5");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const json d = json::parse(read_file(folder + "/d.json"));
    ASSERT_TRUE(d["curves"].is_array());
    std::size_t points = 0;
    for (const auto& c: d["curves"]) points += c["x"]["values"].size();
    const std::string csv = read_file(folder + "/curves.csv");
    EXPECT_EQ(static_cast<std::size_t>(std::count(csv.begin(), csv.end(), '\n')), 2 + points);
    EXPECT_TRUE(file_exists(folder + "/d.h5"));
    // A bad input leaves every earlier output as it was, the HDF5 file included.
    const std::string before = read_file(folder + "/d.h5");
    {
        std::ofstream(folder + "/bad.h5") << "not HDF5\n";
    }
    EXPECT_EQ(run_rastrum("direct " + folder + "/bad.h5 --bin-ms 2 --letters 1-4 --h5 " + folder + "/d.h5").exit_code, 3);
    EXPECT_EQ(read_file(folder + "/d.h5"), before);
    EXPECT_EQ(run_rastrum("direct " + small_recording() + " --bin-ms 2 --letters 1-4 --h5 " + folder + "/no/d.h5").exit_code, 6);
    for (const auto& entry: std::filesystem::directory_iterator(folder)) {
        EXPECT_EQ(entry.path().string().find(".tmp-"), std::string::npos) << entry.path();
    }
}

// Progress (design): in a pipe nothing by default; --progress plain gives plain lines (the last one
// at the end); --quiet silences it; results go to stdout untouched either way.
TEST(cli, progress_lines_only_when_asked_for_off_a_terminal) {
    const std::string args = "direct " + small_recording() + " --bin-ms 2,4 --letters 1-4";
    const auto automatic = run_rastrum(args);
    ASSERT_EQ(automatic.exit_code, 0);
    EXPECT_EQ(automatic.err.find("done"), std::string::npos) << automatic.err;
    EXPECT_EQ(automatic.err.find('\r'), std::string::npos);
    const auto plain = run_rastrum(args + " --progress plain");
    ASSERT_EQ(plain.exit_code, 0);
    EXPECT_NE(plain.err.find("direct: 4/4 done"), std::string::npos) << plain.err;
    auto table = [](const std::string& out) { return out.substr(0, out.find("\nMade by rastrum")); };
    EXPECT_EQ(table(plain.out), table(automatic.out));
    const auto quiet = run_rastrum(args + " --progress plain --quiet --json " + fresh_folder("cli-progress") + "/d.json");
    EXPECT_EQ(quiet.err, "");
    EXPECT_EQ(run_rastrum(args + " --progress loud").exit_code, 2);
}

// On a terminal (a real pseudo-terminal from util-linux `script`), the default shows a bar with
// counts and time left on stderr, and --quiet silences it (design).
TEST(cli, progress_bar_on_a_terminal) {
    if (std::system("command -v script >/dev/null 2>&1") != 0) GTEST_SKIP() << "util-linux script is not installed";
    const std::string folder = fresh_folder("cli-terminal");
    auto on_terminal = [&](const std::string& extra) {
        const std::string log = folder + "/terminal.log";
        const std::string inner = std::string("'") + RASTRUM_BINARY + "' direct '" + small_recording() +
                                  "' --bin-ms 2,4 --letters 1-4 --json '" + folder + "/d.json' " + extra;
        const std::string command = "script -qec \"" + inner + "\" /dev/null >'" + log + "' 2>&1";
        EXPECT_EQ(std::system(command.c_str()), 0) << command;
        return read_file(log);
    };
    const std::string shown = on_terminal("");
    EXPECT_NE(shown.find("direct ["), std::string::npos) << shown;
    EXPECT_NE(shown.find("4/4"), std::string::npos) << shown;
    const std::string quiet = on_terminal("--quiet");
    EXPECT_EQ(quiet.find("direct ["), std::string::npos) << quiet;
}

// The calibration from the command line: the record says where its fit came from, keeps the plain
// estimate and every range examined, and the parameters name the calibration's settings
// (notes/methods-calibration.md). A unit whose information lies only in spike patterns (synth
// patterns: 1-letter words carry exactly none) is found, with an interval that excludes 0.
TEST(cli, direct_calibration_reports_its_ranges_and_the_plain_estimate) {
    const std::string folder = fresh_folder("cli-calibration");
    ASSERT_EQ(run_rastrum("synth patterns --trials 200 --duration-s 4 --out " + folder + "/p.h5").exit_code, 0);
    const json answers = json::parse(read_file(folder + "/p.answers.json"));
    const double exact = answers["units"][0]["info_rate_bits_per_s"].get<double>();
    const auto r = run_rastrum("direct " + folder + "/p.h5 --bin-ms 2 --letters 1-12 --surrogates 10 --quiet --json -");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const json out = json::parse(r.out);
    EXPECT_EQ(out["parameters"]["surrogates"], 10);
    const json& rec = out["records"][0];
    EXPECT_EQ(rec["fit_letters_from"], "calibration");
    EXPECT_GT(rec["fit_letters"][1].get<int>(), 1);
    EXPECT_GT(rec["info_rate_ci95_bits_per_s"][0].get<double>(), 0.0);
    EXPECT_NEAR(rec["info_rate_bits_per_s"].get<double>(), exact, 0.1 * exact);
    const json& cal = rec["calibration"];
    EXPECT_EQ(cal["surrogates"], 10);
    EXPECT_FALSE(cal["uncertain"].get<bool>());
    // The plain estimate over the same range, before the bias correction.
    EXPECT_NEAR(cal["plain"]["info_rate_bits_per_s"].get<double>() - cal["bias_bits_per_s"].get<double>(),
                rec["info_rate_bits_per_s"].get<double>(), 1e-9);
    ASSERT_GE(cal["by_fit"].size(), 2u);
    for (const auto& f: cal["by_fit"]) {
        for (const char* key: {"fit_letters", "info_rate_plain_bits_per_s", "model_info_rate_bits_per_s", "bias_bits_per_s",
                               "spread_bits_per_s", "error_bits_per_s", "within_tolerance"}) {
            EXPECT_TRUE(f.contains(key)) << key;
        }
    }
    // With --surrogates 0 the record has no calibration, and the sampling rule alone misses the
    // information (notes/validation.md, before calibration).
    const auto plain = run_rastrum("direct " + folder + "/p.h5 --bin-ms 2 --letters 1-12 --surrogates 0 --quiet --json -");
    const json plain_out = json::parse(plain.out);
    const json& plain_rec = plain_out["records"][0];
    EXPECT_TRUE(plain_rec["calibration"].is_null());
    EXPECT_LT(std::abs(plain_rec["info_rate_bits_per_s"].get<double>()), 0.2 * exact);
}
