// The figures library in process: reading curves, figure builders, the page, the output folder.
#include <rastrum/errors.hpp>
#include <rastrum/figures.hpp>
#include <rastrum/output_folder.hpp>
#include <rastrum/report_page.hpp>
#include <rastrum/result_file.hpp>

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>

using namespace rastrum;
using json = nlohmann::ordered_json;
namespace fs = std::filesystem;

namespace {

// A curve as the schema of the "curves" array writes it (design: the result JSON contract).
json word_length_curve() {
    return json::parse(R"({"curve": "entropy_rate_vs_inverse_letters", "unit": "u1", "stimulus": null, "bin_ms": 2,
        "letters": null, "window_ms": null, "series": "total",
        "x": {"quantity": "inverse word length", "unit": "1/letters", "values": [1, 0.5, 0.25]},
        "y": {"quantity": "total entropy rate", "unit": "bits/s", "values": [60, 58, null]},
        "in_fit": [false, true, true],
        "fit": {"form": "polynomial", "coefficients": [56, 4], "x_range": [0.25, 0.5], "at_zero": 56}})");
}

json direct_result(const json& curves) {
    json r = json::parse(R"({"tool": "rastrum", "analysis": "direct", "records": [
        {"unit": "u1", "bin_ms": 2, "trials": 40, "mean_rate_hz": 20, "info_rate_bits_per_s": 5,
         "info_rate_ci95_bits_per_s": [4, 6], "bits_per_spike": 0.25, "warnings": ["few trials", "only u1"]},
        {"unit": "u2", "bin_ms": 2, "trials": 40, "mean_rate_hz": 10, "info_rate_bits_per_s": 1,
         "info_rate_ci95_bits_per_s": [0, 2], "bits_per_spike": 0.1, "warnings": ["few trials"]}]})");
    r["curves"] = curves;
    return r;
}

std::string error_of(const json& result) {
    try {
        read_curves(result, "r.json");
    } catch (const input_error& e) {
        return e.what();
    }
    return "";
}

std::string temporary_folder(const std::string& name) {
    const fs::path p = fs::path(RASTRUM_TEST_TMP) / name;
    fs::remove_all(p);
    fs::create_directories(p);
    return p.string();
}

}  // namespace

TEST(figures_curves, reads_a_curve_with_gaps_flags_and_fit) {
    const auto curves = read_curves(direct_result(json::array({word_length_curve()})), "r.json");
    ASSERT_EQ(curves.size(), 1u);
    const curve_series& c = curves[0];
    EXPECT_EQ(c.unit, "u1");
    EXPECT_EQ(c.bin_ms, 2.0);
    EXPECT_FALSE(c.stimulus);
    EXPECT_TRUE(std::isnan(c.y.values[2])) << "null is a gap";
    EXPECT_EQ(c.in_fit, (std::vector<bool>{false, true, true}));
    ASSERT_TRUE(c.fit);
    EXPECT_EQ(c.fit->coefficients, (std::vector<double>{56, 4}));
    EXPECT_EQ(c.fit->x_range, std::make_pair(0.25, 0.5));
}

TEST(figures_curves, malformed_curves_name_their_json_path) {
    json short_y = word_length_curve();
    short_y["y"]["values"].erase(0);
    EXPECT_NE(error_of(direct_result(json::array({short_y}))).find("/curves/0/y/values: expected 3 values"), std::string::npos);
    json one_sided = word_length_curve();
    one_sided["y"]["ci95_low"] = {1, 2, 3};
    EXPECT_NE(error_of(direct_result(json::array({one_sided}))).find("both ci95_low and ci95_high"), std::string::npos);
    json bad_flag = word_length_curve();
    bad_flag["in_fit"][1] = "yes";
    EXPECT_NE(error_of(direct_result(json::array({word_length_curve(), bad_flag}))).find("/curves/1/in_fit/1"), std::string::npos);
    json no_unit = word_length_curve();
    no_unit.erase("unit");
    EXPECT_NE(error_of(direct_result(json::array({no_unit}))).find("/curves/0/unit: expected text"), std::string::npos);
    EXPECT_NE(error_of(direct_result(json::object())).find("/curves: expected an array"), std::string::npos);
}

TEST(figures_curves, curves_of_kinds_not_known_yet_are_skipped) {
    json future = word_length_curve();
    future["curve"] = "something_new";
    EXPECT_TRUE(read_curves(direct_result(json::array({future})), "r.json").empty());
}

TEST(figures_builders, direct_figures_draw_the_fit_and_the_summary) {
    const std::string path = temporary_folder("figures-unit") + "/r.json";
    std::ofstream(path) << direct_result(json::array({word_length_curve()})).dump();
    const result_document doc = read_result_file(path);
    const auto drawn = direct_figures(doc, {});
    ASSERT_EQ(drawn.size(), 2u);
    EXPECT_EQ(drawn[0].kind, "summary");
    EXPECT_EQ(drawn[1].kind, "word-length");
    EXPECT_EQ(drawn[1].qualifier, "2ms");
    // The fit's value at 1/L = 0 is named in the legend (coefficients[0], design).
    EXPECT_NE(drawn[1].svg.find("total: line fit, 56.00 bits/s at 1/L = 0"), std::string::npos);
    EXPECT_NE(drawn[1].caption.find("L = 2-4"), std::string::npos) << drawn[1].caption;
    EXPECT_TRUE(direct_figures(doc, unit_choice{{"u2"}}).size() == 1) << "u2 has only its place in the summary";
}

TEST(figures_page, cautions_are_shared_or_placed_under_their_row) {
    const std::string path = temporary_folder("figures-page") + "/r.json";
    json r = direct_result(json::array());
    r["records"][1]["unit"] = "<u2>";
    std::ofstream(path) << r.dump();
    const result_document doc = read_result_file(path);
    report_contents contents;
    contents.results.push_back({&doc, {}});
    const std::string page = report_html(contents);
    // "few trials" is in every record: said once above the table; "only u1" under u1's row.
    EXPECT_NE(page.find("<strong>Every record below:</strong><ul><li>few trials</li>"), std::string::npos);
    EXPECT_NE(page.find("<tr class=\"caution\"><td colspan=\"11\">"), std::string::npos);
    EXPECT_NE(page.find("<li>only u1</li>"), std::string::npos);
    EXPECT_NE(page.find("2 of 2 records carry cautions"), std::string::npos);
    EXPECT_NE(page.find("&lt;u2&gt;"), std::string::npos);
    EXPECT_EQ(page.find("<u2>"), std::string::npos);
}

TEST(figures_output, file_name_parts_are_plain) {
    EXPECT_EQ(file_name_part("u1"), "u1");
    EXPECT_EQ(file_name_part("u1+u2"), "u1_u2");
    EXPECT_EQ(file_name_part("../x"), "_.._x");
    EXPECT_EQ(file_name_part(".hidden"), "_.hidden");
    EXPECT_EQ(file_name_part(""), "_");
    EXPECT_EQ(file_name_part(std::string(100, 'a')).size(), 60u);
}

TEST(figures_output, a_new_folder_appears_whole_with_its_manifest) {
    const std::string base = temporary_folder("figures-output");
    const std::string folder = base + "/new";
    write_output_folder(folder, {{"index.html", "page"}, {"a.svg", "<svg/>"}});
    EXPECT_TRUE(fs::is_regular_file(folder + "/a.svg"));
    std::ifstream manifest(folder + "/" + output_manifest_name);
    std::string text((std::istreambuf_iterator<char>(manifest)), std::istreambuf_iterator<char>());
    EXPECT_NE(text.find("\nindex.html\na.svg\n"), std::string::npos) << text;
    for (const auto& e: fs::directory_iterator(base)) EXPECT_EQ(e.path().filename(), "new");
    // A manifest line that points outside the folder is not followed.
    std::ofstream(base + "/outside.txt") << "keep\n";
    std::ofstream(folder + "/" + output_manifest_name, std::ios::app) << "../outside.txt\n";
    write_output_folder(folder, {{"index.html", "page 2"}});
    EXPECT_TRUE(fs::exists(base + "/outside.txt"));
    EXPECT_FALSE(fs::exists(folder + "/a.svg")) << "rastrum's own stale file is removed";
    EXPECT_THROW(write_output_folder(base + "/outside.txt", {{"index.html", "x"}}), usage_error);
}
