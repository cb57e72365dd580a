// End-to-end: `rastrum stiminfo --surrogates N` (notes/methods-calibration.md, "Stimulus information"):
// the calibration's keys in the JSON and columns in the CSV, the table's words, and that the numbers
// the record reports follow from each other as documented.
#include "cli_runner.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <cmath>

using namespace rastrum::testing;
using nlohmann::json;

TEST(cli, stiminfo_calibration_reports_its_estimator_interval_and_trials_needed) {
    const std::string folder = fresh_folder("cli-stiminfo-calibration");
    const std::string rec = folder + "/c.h5";
    ASSERT_EQ(run_rastrum("synth conditions --out " + rec + " --duration-s 0.5 --means 2,4,6,9 --means 1,1,2,2").exit_code, 0);
    EXPECT_NE(run_rastrum("stiminfo --help").out.find("--surrogates"), std::string::npos);
    const auto r = run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code count --surrogates 10 --null-shuffles 20 "
                               "--bootstrap 20 --population u1,u2 --json " + folder + "/s.json --csv " + folder + "/s.csv");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    for (const char* words: {"calibrated", "95% interval", "estimator", "trials needed"}) {
        EXPECT_NE(r.out.find(words), std::string::npos) << words;
    }
    const json d = json::parse(read_file(folder + "/s.json"));
    EXPECT_EQ(d["parameters"]["surrogates"], 10);
    ASSERT_EQ(d["records"].size(), 3u);  // u1, u2 and the pair, whose joint responses are calibrated
    for (const json& rec0: d["records"]) {
        const json& cal = rec0["calibration"];
        ASSERT_TRUE(cal.is_object());
        EXPECT_EQ(cal["surrogates"], 10);
        const std::string chosen = cal["recommended_estimator"];
        EXPECT_EQ(rec0["info_calibrated_estimator"], chosen);
        const json& by = cal["by_estimator"][chosen];
        // The calibrated value is the recommended estimator's estimate less its bias, +- t errors,
        // t = 2.262 at 9 degrees of freedom (Fisher & Yates, Statistical Tables, table III).
        const double value = rec0["info_calibrated_bits"];
        EXPECT_NEAR(value, by["estimate_bits"].get<double>() - by["bias_bits"].get<double>(), 1e-12);
        EXPECT_NEAR(by["estimate_bits"].get<double>(), rec0["info_bits"][chosen].get<double>(), 1e-12);
        EXPECT_NEAR(cal["t_quantile"].get<double>(), 2.2622, 1e-4);
        const double e = cal["error_bits"];
        EXPECT_NEAR(rec0["info_calibrated_ci95_bits"][0].get<double>(), value - 2.2622 * e, 1e-3 * e + 1e-12);
        EXPECT_NEAR(rec0["info_calibrated_ci95_bits"][1].get<double>(), value + 2.2622 * e, 1e-3 * e + 1e-12);
        // The recommended estimator has the lowest RMSE at the model.
        for (const auto& [name, v]: cal["by_estimator"].items()) {
            EXPECT_GE(v["rmse_bits"].get<double>(), by["rmse_bits"].get<double>()) << name;
        }
        ASSERT_EQ(cal["by_trials"].size(), 3u);
        EXPECT_EQ(cal["by_trials"][2]["scale"], 4.0);
        EXPECT_EQ(cal["uncertain"].get<bool>(), e > cal["tolerance_bits"].get<double>());
        // The envelope interval stays beside it.
        EXPECT_EQ(rec0["info_ci95_bits"].size(), 2u);
    }
    const std::string csv = read_file(folder + "/s.csv");
    for (const char* column: {"calibrated_info_bits", "calibrated_ci95_low_bits", "recommended_estimator",
                              "estimator_bias_bits", "trials_per_condition_needed"}) {
        EXPECT_NE(csv.find(column), std::string::npos) << column;
    }
    // Off: no calibration, the keys present and null.
    const auto off = run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code count --surrogates 0 --null-shuffles 0 "
                                 "--bootstrap 0 --quiet --json -");
    ASSERT_EQ(off.exit_code, 0) << off.err;
    const json plain = json::parse(off.out);
    EXPECT_TRUE(plain["records"][0]["calibration"].is_null());
    EXPECT_TRUE(plain["records"][0]["info_calibrated_bits"].is_null());
}

// Calibration is on by default. Where many records are uncertain, the table says so in one line that
// names them, and each record keeps its own caution (its error, tolerance and trials) in the JSON.
TEST(cli, stiminfo_is_calibrated_by_default_and_many_uncertain_records_share_one_line) {
    const std::string folder = fresh_folder("cli-stiminfo-uncertain");
    const std::string rec = folder + "/c.h5";
    // 10 trials per condition: every record's calibrated error is far above 10% of its value.
    ASSERT_EQ(run_rastrum("synth conditions --out " + rec + " --duration-s 0.5 --trials-per-condition 10 "
                          "--means 2,4,6,9 --means 1,1,2,2 --means 3,3,3,3 --means 5,2,5,2").exit_code, 0);
    const auto r = run_rastrum("stiminfo " + rec + " --window-ms 0:500 --code count --null-shuffles 20 --bootstrap 0 "
                               "--json " + folder + "/s.json");
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const json d = json::parse(read_file(folder + "/s.json"));
    EXPECT_EQ(d["parameters"]["surrogates"], 10);
    std::size_t uncertain = 0;
    for (const json& record: d["records"]) {
        ASSERT_TRUE(record["calibration"].is_object());
        if (!record["calibration"]["uncertain"].get<bool>()) continue;
        ++uncertain;
        bool said = false;
        for (const json& w: record["warnings"]) said = said || w.get<std::string>().rfind("uncertain: at 10 trials", 0) == 0;
        EXPECT_TRUE(said) << record["warnings"].dump();
    }
    ASSERT_GT(uncertain, 3u) << "the design must give more uncertain records than are listed one by one";
    const std::string line = "uncertain, " + std::to_string(uncertain) + " of 4 records (u1 at 0-500 ms";
    EXPECT_NE(r.out.find(line), std::string::npos) << r.out;
    EXPECT_EQ(r.out.find("uncertain: at"), std::string::npos) << "one line, not one per record:\n" << r.out;
}

// Where the model fitted to the responses seen cannot stand in for the record, the calibration
// declines and says why: no calibrated value or interval (null in the JSON, "-" in the table), the
// envelope interval instead, and what would help. Two such records: one whose responses are all
// distinct, and one of binary words of 50 letters with about one spike per trial, where a model over
// the responses seen gave calibrated values of 0.46-0.81 bits for true ones of 0.09-0.37 (the
// recording's answers file holds the exact count information, which the words carry too: spikes are
// placed uniformly in the window).
TEST(cli, stiminfo_calibration_declines_where_its_model_cannot_stand_in_for_the_record) {
    const std::string folder = fresh_folder("cli-stiminfo-declined");
    const std::string distinct = folder + "/distinct.h5", sparse = folder + "/sparse.h5";
    ASSERT_EQ(run_rastrum("synth conditions --out " + distinct + " --seed 4 --duration-s 0.5 --trials-per-condition 20 "
                          "--means 20,25,30,35").exit_code, 0);
    ASSERT_EQ(run_rastrum("synth conditions --out " + sparse + " --seed 11 --duration-s 0.5 --trials-per-condition 40 "
                          "--labels a,b,c,d,e,f,g,h --means 1.7071,1,0.2929,0,0.2929,1,1.7071,2").exit_code, 0);
    const std::string words = " --window-ms 0:500 --code word --bin-ms 10 --binary --null-shuffles 20 --bootstrap 20 ";
    for (const auto& [file, why]: {std::pair<std::string, std::string>{distinct, "not calibrated: 80 of the 80 trials' responses are distinct"},
                                   {sparse, "of the responses' probability lies on responses never seen"}}) {
        const auto r = run_rastrum("stiminfo " + file + words + "--json " + folder + "/s.json");
        ASSERT_EQ(r.exit_code, 0) << r.err;
        EXPECT_NE(r.out.find(why), std::string::npos) << r.out;
        EXPECT_NE(r.out.find("a coarser code"), std::string::npos) << r.out;
        const json record = json::parse(read_file(folder + "/s.json"))["records"][0];
        EXPECT_TRUE(record["calibration"]["not_calibrated"].get<bool>());
        EXPECT_TRUE(record["info_calibrated_bits"].is_null());
        EXPECT_TRUE(record["info_calibrated_ci95_bits"][0].is_null());
        EXPECT_TRUE(record["info_calibrated_estimator"].is_null());
        EXPECT_TRUE(record["calibration"]["uncertain"].get<bool>());
        // The envelope interval stands, and it holds the truth (the answers file's count information).
        if (file == sparse) {
            const json answers = json::parse(read_file(folder + "/sparse.answers.json"));
            const double truth = answers["units"][0]["count_info_bits"];
            EXPECT_LE(record["info_ci95_bits"][0].get<double>(), truth);
            EXPECT_GE(record["info_ci95_bits"][1].get<double>(), truth);
        }
    }
    // The same codes on counts: calibrated as usual.
    const auto counts = run_rastrum("stiminfo " + sparse + " --window-ms 0:500 --code count --null-shuffles 0 --bootstrap 0 "
                                    "--quiet --json -");
    ASSERT_EQ(counts.exit_code, 0) << counts.err;
    EXPECT_FALSE(json::parse(counts.out)["records"][0]["calibration"]["not_calibrated"].get<bool>());
}
