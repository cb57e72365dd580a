// Curves: what the direct method and stimulus information report against bin width, word length,
// trial count, time and trial fraction, in the model, in CSV and in the HDF5 results file.
#include <rastrum/curves.hpp>
#include <rastrum/curves_output.hpp>
#include <rastrum/synthetic.hpp>

#include <H5Cpp.h>
#include <gtest/gtest.h>

#include <cmath>
#include <sstream>

using namespace rastrum;

namespace {

const curve_series& find(const std::vector<curve_series>& curves, const std::string& curve, const std::string& unit,
                         const std::string& series, std::optional<double> bin_ms = std::nullopt,
                         std::optional<int> letters = std::nullopt) {
    for (const auto& c: curves) {
        if (c.curve == curve && c.unit == unit && c.series == series && (!bin_ms || c.bin_ms == bin_ms) &&
            (!letters || c.letters == letters)) {
            return c;
        }
    }
    throw std::runtime_error("no curve " + curve + " " + unit + " " + series);
}

double polynomial(const std::vector<double>& c, double x) {
    double y = 0;
    for (auto it = c.rbegin(); it != c.rend(); ++it) y = y * x + *it;
    return y;
}

std::vector<direct_record> independent_bins_records() {
    frozen_bins_spec spec;
    spec.session.trials = 120;
    spec.session.duration = 4.0;
    spec.bin_ms = 2.0;
    spec.rates_hz = {20};
    spec.modulations = {1.0};
    spec.seed = 7;
    direct_request q;
    q.bin_ms = {2, 4};
    q.settings.letters_max = 6;
    return run_direct(make_frozen_bins(spec).rec, q);
}

}  // namespace

// The curves carry exactly the numbers of the records they come from (design), and their fits
// reproduce the extrapolated values: the 1/L lines' intercepts are the entropy rates, the 1/N
// quadratics' values at 0 the per-word entropies extrapolated to infinite data.
TEST(curves, direct_curves_agree_with_the_records) {
    const auto records = independent_bins_records();
    const auto curves = direct_curves(records);
    const auto& info = find(curves, "info_rate_vs_bin_width", "u1", "information");
    ASSERT_EQ(info.x.values, (std::vector<double>{2, 4}));
    for (std::size_t i = 0; i < 2; ++i) {
        EXPECT_EQ(info.y.values[i], records[i].estimate.info_rate);
        EXPECT_EQ(info.y_low[i], records[i].estimate.info_rate_ci95.first);
        EXPECT_EQ(info.y_high[i], records[i].estimate.info_rate_ci95.second);
    }
    for (const auto& r: records) {
        const auto& total = find(curves, "entropy_rate_vs_inverse_letters", "u1", "total", r.bin_ms);
        ASSERT_TRUE(total.fit);
        EXPECT_NEAR(total.fit->coefficients[0], r.estimate.total_rate, 1e-9 * r.estimate.total_rate);
        const auto& noise = find(curves, "entropy_rate_vs_inverse_letters", "u1", "noise", r.bin_ms);
        EXPECT_NEAR(noise.fit->coefficients[0], r.estimate.noise_rate, 1e-9 * r.estimate.noise_rate);
        ASSERT_EQ(total.x.values.size(), r.estimate.by_letters.size());
        std::size_t fitted = 0;
        for (bool f: total.in_fit) fitted += f;
        EXPECT_EQ(static_cast<int>(fitted), r.estimate.fit_letters.second - r.estimate.fit_letters.first + 1);
        for (const auto& le: r.estimate.by_letters) {
            const auto& size = find(curves, "entropy_vs_inverse_trials", "u1", "total", r.bin_ms, le.letters);
            ASSERT_TRUE(size.fit);
            EXPECT_NEAR(size.fit->coefficients[0], le.total_bits, 1e-12);
            EXPECT_NEAR(size.x.values[0], 1.0 / static_cast<double>(r.trials), 1e-15);  // all trials first
            EXPECT_EQ(size.in_fit, (std::vector<bool>{true, true, true, false}));
        }
    }
}

// Independent letters: H(L) = L h for the pooled and for the conditional words, so the entropy
// rate does not depend on L (analytic), and the fitted slope in 1/L is near 0 next to the rate.
// At 4 ms the letters are sums of two independent 2 ms bins, still independent across letters.
TEST(curves, independent_letters_give_flat_entropy_rates_against_inverse_length) {
    const auto records = independent_bins_records();
    const auto curves = direct_curves(records);
    for (const auto& r: records) {
        for (const char* part: {"total", "noise"}) {
            const auto& c = find(curves, "entropy_rate_vs_inverse_letters", "u1", part, r.bin_ms);
            const double rate = c.fit->coefficients[0], slope = c.fit->coefficients[1];
            EXPECT_LT(std::abs(slope), 0.02 * rate) << part << " at " << r.bin_ms << " ms";
        }
    }
}

// The plug-in information is biased upward by about (R - 1)(S - 1) / (2 N ln 2) bits (Miller 1955;
// Treves & Panzeri 1995, Neural Comput. 7:399), so on a quarter of the trials it is higher than on
// all of them; the label-shuffle band holds its own mean (definition of a 95% quantile band).
TEST(curves, stiminfo_trial_fraction_and_time_course) {
    conditions_spec spec;
    spec.means = {{1, 3, 6, 9}};
    spec.trials_per_condition = 40;
    spec.session.duration = 0.5;
    spec.seed = 3;
    stiminfo_request q;
    q.response.code = response_code::spike_count;
    q.response.window_stop = 0.5;
    q.slide = std::make_pair(0.25, 0.125);
    q.null_shuffles = 50;
    q.bootstrap = 20;
    const auto records = run_stiminfo(make_conditions(spec).rec, q);
    ASSERT_EQ(records.size(), 3u);
    const auto curves = stiminfo_curves(records, q);
    const auto& plugin = find(curves, "info_vs_time", "u1", "plug-in");
    EXPECT_EQ(plugin.x.values, (std::vector<double>{125, 250, 375}));
    const auto& null = find(curves, "info_vs_time", "u1", "null");
    for (std::size_t i = 0; i < 3; ++i) {
        EXPECT_LE(null.y_low[i], null.y.values[i]);
        EXPECT_GE(null.y_high[i], null.y.values[i]);
        EXPECT_EQ(plugin.y.values[i], records[i].info_bits.at(info_estimator::plugin));
    }
    // Calibrated (the default), the calibrated value's series carries the band; without the
    // calibration, the interval estimator's series carries the envelope interval.
    const auto& calibrated = find(curves, "info_vs_time", "u1", "calibrated");
    ASSERT_EQ(calibrated.y_low.size(), 3u);
    for (std::size_t i = 0; i < 3; ++i) {
        EXPECT_EQ(calibrated.y.values[i], records[i].calibration->value);
        EXPECT_LT(calibrated.y_low[i], calibrated.y.values[i]);
        EXPECT_GT(calibrated.y_high[i], calibrated.y.values[i]);
    }
    EXPECT_TRUE(find(curves, "info_vs_time", "u1", "jackknife").y_low.empty());
    stiminfo_request plain = q;
    plain.surrogates = 0;
    const auto plain_records = run_stiminfo(make_conditions(spec).rec, plain);
    const auto plain_curves = stiminfo_curves(plain_records, plain);
    const auto& jackknife = find(plain_curves, "info_vs_time", "u1", "jackknife");
    EXPECT_EQ(jackknife.y_low.size(), 3u) << "the interval estimator's series carries the interval";
    int higher = 0;
    for (const auto& c: curves) {
        if (c.curve != "info_vs_trial_fraction" || c.series != "plug-in") continue;
        ASSERT_EQ(c.x.values, (std::vector<double>{0.25, 0.5, 0.75, 1.0}));
        higher += c.y.values.front() > c.y.values.back();
    }
    EXPECT_EQ(higher, 3);
}

// CSV: one row per point, and the fit column is the fitted polynomial at that x (design).
TEST(curves, csv_rows_are_points_with_fitted_values) {
    const auto records = independent_bins_records();
    const auto curves = direct_curves(records);
    const std::string csv = curves_csv(curves, "direct");
    std::size_t points = 0;
    for (const auto& c: curves) points += c.x.values.size();
    EXPECT_EQ(static_cast<std::size_t>(std::count(csv.begin(), csv.end(), '\n')), 1 + points);
    const auto& total = find(curves, "entropy_rate_vs_inverse_letters", "u1", "total", 2.0);
    std::ostringstream expected;
    expected.precision(10);
    expected << polynomial(total.fit->coefficients, total.x.values[0]);
    EXPECT_NE(csv.find("direct,entropy_rate_vs_inverse_letters,u1,,2,,,,total,inverse word length,1/letters,1,"),
              std::string::npos);
    EXPECT_NE(csv.find("," + expected.str() + "\n"), std::string::npos) << expected.str();
}

// The HDF5 results file, read back through the HDF5 C++ API: one group per analysis and unit,
// datasets with quantity, units and description attributes, and the whole result as JSON.
TEST(curves, hdf5_results_file_holds_every_curve_with_units) {
    const auto records = independent_bins_records();
    const auto curves = direct_curves(records);
    const std::string path = std::string(RASTRUM_TEST_TMP) + "/curves-results.h5";
    const nlohmann::ordered_json result{{"tool", "rastrum"}, {"version", "test"}, {"analysis", "direct"}};
    write_results_hdf5(path, result, curves);
    H5::H5File file(path, H5F_ACC_RDONLY);
    const H5::DataSet y = file.openDataSet("/direct/u1/info_rate_vs_bin_width/information/y");
    std::vector<double> values(2);
    y.read(values.data(), H5::PredType::NATIVE_DOUBLE);
    EXPECT_EQ(values[0], records[0].estimate.info_rate);
    EXPECT_EQ(values[1], records[1].estimate.info_rate);
    auto text = [](const H5::H5Object& o, const char* name) {
        const H5::Attribute a = o.openAttribute(name);
        std::string s;
        a.read(a.getStrType(), s);
        return std::string(s.c_str());
    };
    EXPECT_EQ(text(y, "units"), "bits/s");
    EXPECT_EQ(text(y, "quantity"), "information rate");
    EXPECT_FALSE(text(y, "description").empty());
    const H5::DataSet coefficients = file.openDataSet("/direct/u1/entropy_vs_inverse_trials/bin_4ms/letters_1/noise/fit_coefficients");
    EXPECT_EQ(coefficients.getSpace().getSimpleExtentNpoints(), 3);
    const H5::DataSet json_text = file.openDataSet("/result_json");
    std::string whole;
    json_text.read(whole, json_text.getStrType());
    EXPECT_EQ(nlohmann::json::parse(whole.c_str())["analysis"], "direct");
    EXPECT_EQ(text(file, "layout"), "rastrum-results");
}
