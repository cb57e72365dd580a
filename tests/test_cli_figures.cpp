// End-to-end: `rastrum figures` on results that the real binary made from its own synthetic
// recordings.
#include "cli_runner.hpp"

#include <rastrum/output_folder.hpp>
#include <rastrum/result_file.hpp>

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <filesystem>
#include <fstream>
#include <regex>
#include <set>

using namespace rastrum::testing;
using json = nlohmann::ordered_json;
namespace fs = std::filesystem;

namespace {

struct inputs {
    std::string recording, direct, stiminfo_slides, stiminfo_single;
};

// Small on purpose (40 trials, 2 s): enough for every figure, few seconds to compute, and few
// enough trials that the results carry cautions.
const inputs& shared_inputs() {
    static const inputs in = [] {
        const std::string folder = fresh_folder("figures-shared");
        inputs i{folder + "/frozen.h5", folder + "/direct.json", folder + "/slides.json", folder + "/single.json"};
        const auto run = [](const std::string& args) {
            const auto r = run_rastrum(args);
            EXPECT_EQ(r.exit_code, 0) << args << "\n" << r.err;
        };
        run("synth frozen-bins --out " + i.recording + " --trials 40 --duration-s 2 --rate-hz 20,30 --modulation 1.5 --seed 4");
        run("direct " + i.recording + " --bin-ms 2,4 --letters 1-4 --quiet --json " + i.direct);
        run("synth conditions --out " + folder + "/conditions.h5 --duration-s 0.5 --means 2,4,6,9 --means 3,3,5,5");
        const std::string stiminfo = "stiminfo " + folder + "/conditions.h5 --code count --null-shuffles 40 --bootstrap 40 --quiet ";
        run(stiminfo + "--window-ms 0:400 --slide-ms 200:100 --json " + i.stiminfo_slides);
        run(stiminfo + "--window-ms 0:400 --population u1,u2 --json " + i.stiminfo_single);
        return i;
    }();
    return in;
}

std::set<std::string> files_in(const std::string& folder) {
    std::set<std::string> names;
    for (const auto& e: fs::directory_iterator(folder)) names.insert(e.path().filename().string());
    return names;
}

/// Every file a page refers to (src= and href=, not its own #anchors), relative to the page.
std::set<std::string> references_of(const std::string& page) {
    std::set<std::string> refs;
    const std::regex reference("(?:src|href)=\"([^\"#][^\"]*)\"");
    for (auto it = std::sregex_iterator(page.begin(), page.end(), reference); it != std::sregex_iterator(); ++it) refs.insert((*it)[1]);
    return refs;
}

/// Parses each SVG with Debian's python3 xml.etree (an XML parser independent of our writer).
void expect_well_formed(const std::string& folder) {
    const std::string command = std::string("'") + RASTRUM_PYTHON +
                                "' -c 'import sys, glob, xml.etree.ElementTree as E\n"
                                "files = sorted(glob.glob(sys.argv[1] + \"/*.svg\"))\n"
                                "assert files, \"no SVG\"\n"
                                "for f in files:\n"
                                "    root = E.parse(f).getroot()\n"
                                "    assert root.tag == \"{http://www.w3.org/2000/svg}svg\", f\n"
                                "' '" + folder + "'";
    EXPECT_EQ(std::system(command.c_str()), 0) << "an SVG in " << folder << " is not well-formed XML";
}

std::string figures(const std::string& args) { return "figures " + args; }

void write_json(const std::string& path, const json& j) { std::ofstream(path) << j.dump(1); }

}  // namespace

TEST(cli_figures, writes_the_page_and_well_formed_figures_of_both_analyses) {
    const auto& in = shared_inputs();
    const std::string out = fresh_folder("figures-all") + "/report";
    const auto r = run_rastrum(figures(in.direct + " " + in.stiminfo_slides + " " + in.stiminfo_single + " --recording " +
                                       in.recording + " --out " + out));
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.err.find("wrote " + out + "/index.html"), std::string::npos) << r.err;
    const auto names = files_in(out);
    // One of each kind (design: notes/figures.md lists them).
    for (const char* expected: {"index.html", ".rastrum-files", "direct-summary.svg", "direct-rates-vs-bin-width-u1.svg",
                                "direct-word-length-u1-2ms.svg", "direct-trial-count-u1-4ms.svg", "raster-u1.svg",
                                "raster-u2.svg", "slides-time-course-u1.svg", "slides-trial-fraction-u2.svg",
                                "single-summary.svg", "single-trial-fraction-u1_u2.svg"}) {
        EXPECT_TRUE(names.count(expected)) << expected;
    }
    EXPECT_FALSE(names.count("raster-u1_u2.svg")) << "a population has no spikes of its own";
    expect_well_formed(out);
    const std::string page = read_file(out + "/index.html");
    std::set<std::string> svgs;
    for (const auto& n: names) {
        if (n.size() > 4 && n.substr(n.size() - 4) == ".svg") svgs.insert(n);
    }
    EXPECT_EQ(references_of(page), svgs) << "the page refers to exactly the figures beside it";
    // Every #anchor it links to exists.
    const std::regex anchor("href=\"#([^\"]+)\"");
    for (auto it = std::sregex_iterator(page.begin(), page.end(), anchor); it != std::sregex_iterator(); ++it) {
        EXPECT_NE(page.find("id=\"" + (*it)[1].str() + "\""), std::string::npos) << (*it)[1];
    }
    for (const char* part: {"<style>", "Statistical cautions", "info b/s", "null-subtracted", "Populations", "synergy"}) {
        EXPECT_NE(page.find(part), std::string::npos) << part;
    }
    // Self-contained: nothing from a network, no scripts.
    EXPECT_EQ(page.find("http://"), std::string::npos);
    EXPECT_EQ(page.find("https://"), std::string::npos);
    EXPECT_EQ(page.find("<script"), std::string::npos);
    EXPECT_EQ(page.find("<link"), std::string::npos);
    // The recording is the direct result's: its units get rasters, and since one result was computed
    // from it no mismatch is reported (design: a report may gather results of several recordings).
    EXPECT_EQ(page.find("is not the file"), std::string::npos);
    EXPECT_NE(page.find("Spikes in the recording"), std::string::npos);
    // A recording that no result was computed from is drawn with a notice.
    const std::string other = fresh_folder("figures-other") + "/report";
    const auto mismatch = run_rastrum(figures(in.stiminfo_single + " --recording " + in.recording + " --out " + other));
    ASSERT_EQ(mismatch.exit_code, 0) << mismatch.err;
    EXPECT_NE(read_file(other + "/index.html").find("is not the file"), std::string::npos);
}

TEST(cli_figures, same_inputs_give_byte_identical_files) {
    const auto& in = shared_inputs();
    const std::string folder = fresh_folder("figures-twice");
    const std::string args = in.direct + " " + in.stiminfo_slides + " --recording " + in.recording + " --quiet --out ";
    ASSERT_EQ(run_rastrum(figures(args + folder + "/one")).exit_code, 0);
    ASSERT_EQ(run_rastrum(figures(args + folder + "/two")).exit_code, 0);
    const auto names = files_in(folder + "/one");
    ASSERT_EQ(names, files_in(folder + "/two"));
    for (const auto& n: names) EXPECT_EQ(read_file(folder + "/one/" + n), read_file(folder + "/two/" + n)) << n;
}

TEST(cli_figures, unit_choice_limits_the_figures) {
    const auto& in = shared_inputs();
    const std::string folder = fresh_folder("figures-units");
    ASSERT_EQ(run_rastrum(figures(in.direct + " --unit u2 --quiet --out " + folder + "/u2")).exit_code, 0);
    for (const auto& n: files_in(folder + "/u2")) EXPECT_EQ(n.find("-u1"), std::string::npos) << n;
    const auto bad = run_rastrum(figures(in.direct + " --unit u9 --out " + folder + "/u9"));
    EXPECT_EQ(bad.exit_code, 2);
    EXPECT_NE(bad.err.find("u9"), std::string::npos) << bad.err;
    EXPECT_NE(bad.err.find("u1, u2"), std::string::npos) << "the message lists the units there are: " << bad.err;
    EXPECT_FALSE(file_exists(folder + "/u9"));
}

TEST(cli_figures, ids_with_markup_characters_are_escaped_and_named_safely) {
    const auto& in = shared_inputs();
    const std::string folder = fresh_folder("figures-escaping");
    json d = json::parse(read_file(in.direct));
    const std::string odd = "u&1 <\"a\"> 'b'/c";
    for (auto& r: d["records"]) {
        if (r["unit"] == "u1") r["unit"] = odd;
    }
    for (auto& c: d["curves"]) {
        if (c["unit"] == "u1") c["unit"] = odd;
    }
    write_json(folder + "/odd.json", d);
    const auto r = run_rastrum(figures(folder + "/odd.json --quiet --out " + folder + "/out"));
    ASSERT_EQ(r.exit_code, 0) << r.err;
    expect_well_formed(folder + "/out");
    const std::string page = read_file(folder + "/out/index.html");
    EXPECT_NE(page.find("u&amp;1 &lt;&quot;a&quot;&gt; &#39;b&#39;/c"), std::string::npos);
    EXPECT_EQ(page.find(odd), std::string::npos);
    for (const auto& ref: references_of(page)) EXPECT_TRUE(file_exists(folder + "/out/" + ref)) << ref;
    EXPECT_TRUE(file_exists(folder + "/out/odd-rates-vs-bin-width-u_1___a____b__c.svg"));
}

TEST(cli_figures, a_result_without_curves_still_gets_its_table_and_figures_from_records) {
    const auto& in = shared_inputs();
    const std::string folder = fresh_folder("figures-no-curves");
    json d = json::parse(read_file(in.direct));
    d.erase("curves");
    write_json(folder + "/old.json", d);
    const auto r = run_rastrum(figures(folder + "/old.json --quiet --out " + folder + "/out"));
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto names = files_in(folder + "/out");
    EXPECT_TRUE(names.count("old-summary.svg"));
    EXPECT_TRUE(names.count("old-rates-vs-bin-width-u1.svg"));
    EXPECT_TRUE(names.count("old-word-length-u2-4ms.svg"));
    EXPECT_FALSE(names.count("old-trial-count-u1-2ms.svg")) << "entropies against 1/N are only in curves";
    EXPECT_NE(read_file(folder + "/out/index.html").find("holds no curves"), std::string::npos);
}

// The records alone rebuild the curves that the direct method wrote, up to rounding: the same
// points, the same fitted lengths and the same least-squares line in 1/L (notes/methods.md, 4.2).
TEST(cli_figures, curves_rebuilt_from_records_match_the_written_curves) {
    const auto& in = shared_inputs();
    const json d = json::parse(read_file(in.direct));
    const auto written = rastrum::read_curves(d, in.direct);
    const auto rebuilt = rastrum::curves_from_records(d, "direct");
    std::size_t compared = 0;
    for (const auto& b: rebuilt) {
        for (const auto& w: written) {
            if (w.curve != b.curve || w.unit != b.unit || w.series != b.series || w.bin_ms != b.bin_ms) continue;
            ++compared;
            ASSERT_EQ(w.x.values.size(), b.x.values.size()) << b.curve;
            for (std::size_t i = 0; i < b.x.values.size(); ++i) {
                EXPECT_NEAR(w.x.values[i], b.x.values[i], 1e-9);
                EXPECT_NEAR(w.y.values[i], b.y.values[i], 1e-9 * std::max(1.0, std::fabs(w.y.values[i]))) << b.curve << " " << b.series;
            }
            EXPECT_EQ(w.in_fit, b.in_fit) << b.curve << " " << b.series;
            ASSERT_EQ(w.fit.has_value(), b.fit.has_value()) << b.curve << " " << b.series;
            if (w.fit) {
                for (std::size_t k = 0; k < b.fit->coefficients.size(); ++k) {
                    EXPECT_NEAR(w.fit->coefficients[k], b.fit->coefficients[k], 1e-8) << b.curve << " " << b.series;
                }
            }
        }
    }
    EXPECT_EQ(compared, rebuilt.size()) << "every rebuilt curve has a written twin";
}

// Exit codes as README and `rastrum --help` document them: 3 for unreadable or invalid input.
TEST(cli_figures, unreadable_results_exit_3_and_write_nothing) {
    const auto& in = shared_inputs();
    const std::string folder = fresh_folder("figures-bad-input");
    std::ofstream(folder + "/not.json") << "this is { not JSON\n";
    json survey = json::parse(run_rastrum("survey " + in.recording + " --json -").out);
    write_json(folder + "/survey.json", survey);
    write_json(folder + "/other.json", json{{"tool", "something else"}, {"records", json::array()}});
    json bad_curve = json::parse(read_file(in.direct));
    bad_curve["curves"][3]["y"]["values"].erase(0);
    write_json(folder + "/bad-curve.json", bad_curve);
    const std::vector<std::pair<std::string, std::string>> cases = {
        {folder + "/absent.json", "no such file"},
        {folder + "/not.json", "not JSON"},
        {folder + "/survey.json", "/analysis"},
        {folder + "/other.json", "/tool"},
        {folder + "/bad-curve.json", "/curves/3/y/values"},
        // A good result first: the failure of the second must still leave nothing behind.
        {in.direct + " " + folder + "/not.json", "not JSON"},
    };
    for (const auto& [args, says]: cases) {
        const auto r = run_rastrum(figures(args + " --out " + folder + "/out"));
        EXPECT_EQ(r.exit_code, 3) << args << "\n" << r.err;
        EXPECT_NE(r.err.find(says), std::string::npos) << args << ": " << r.err;
        EXPECT_NE(r.err.find("expected"), std::string::npos) << r.err;
        EXPECT_FALSE(file_exists(folder + "/out")) << args;
    }
    for (const auto& n: files_in(folder)) EXPECT_EQ(n.find(".tmp-"), std::string::npos) << n;
    const auto bad_recording = run_rastrum(figures(in.direct + " --recording " + folder + "/not.json --out " + folder + "/out"));
    EXPECT_EQ(bad_recording.exit_code, 3) << bad_recording.err;
    EXPECT_FALSE(file_exists(folder + "/out"));
}

// Exit code 2 (usage) for an --out that is not a folder, 6 for one whose parent is missing, as for
// the other commands' --json.
TEST(cli_figures, output_folders_that_cannot_be_made_are_refused_before_any_work) {
    const auto& in = shared_inputs();
    const std::string folder = fresh_folder("figures-bad-output");
    std::ofstream(folder + "/file") << "mine\n";
    const auto onto_file = run_rastrum(figures(in.direct + " --out " + folder + "/file"));
    EXPECT_EQ(onto_file.exit_code, 2);
    EXPECT_NE(onto_file.err.find("existing file"), std::string::npos) << onto_file.err;
    EXPECT_EQ(read_file(folder + "/file"), "mine\n");
    const auto under_file = run_rastrum(figures(in.direct + " --out " + folder + "/file/report"));
    EXPECT_EQ(under_file.exit_code, 6);
    EXPECT_NE(under_file.err.find("does not exist"), std::string::npos) << under_file.err;
    const auto no_parent = run_rastrum(figures(in.direct + " --out " + folder + "/a/b"));
    EXPECT_EQ(no_parent.exit_code, 6);
    EXPECT_FALSE(file_exists(folder + "/a"));
    const auto onto_input = run_rastrum(figures(in.direct + " --out " + in.direct));
    EXPECT_EQ(onto_input.exit_code, 2);
    EXPECT_EQ(run_rastrum(figures("--out " + folder + "/x")).exit_code, 2) << "no result given";
    EXPECT_EQ(run_rastrum(figures(in.direct)).exit_code, 2) << "no --out";
    EXPECT_EQ(run_rastrum(figures(in.direct + " --psth-ms 0 --out " + folder + "/x")).exit_code, 2);
}

TEST(cli_figures, an_existing_folder_keeps_the_users_files) {
    const auto& in = shared_inputs();
    const std::string out = fresh_folder("figures-existing");
    std::ofstream(out + "/notes.txt") << "my notes\n";
    std::ofstream(out + "/index.html") << "my own page\n";
    // A file of ours would replace one rastrum did not write: refused before anything is written.
    const auto refused = run_rastrum(figures(in.direct + " --out " + out));
    EXPECT_EQ(refused.exit_code, 2);
    EXPECT_NE(refused.err.find("not written by rastrum"), std::string::npos) << refused.err;
    EXPECT_EQ(read_file(out + "/index.html"), "my own page\n");
    EXPECT_EQ(files_in(out), (std::set<std::string>{"notes.txt", "index.html"}));
    fs::remove(out + "/index.html");
    ASSERT_EQ(run_rastrum(figures(in.direct + " --quiet --out " + out)).exit_code, 0);
    EXPECT_TRUE(file_exists(out + "/direct-rates-vs-bin-width-u2.svg"));
    // A second run replaces its own files and removes the ones it no longer makes; the user's stay.
    ASSERT_EQ(run_rastrum(figures(in.direct + " --unit u1 --quiet --out " + out)).exit_code, 0);
    EXPECT_FALSE(file_exists(out + "/direct-rates-vs-bin-width-u2.svg"));
    EXPECT_TRUE(file_exists(out + "/direct-rates-vs-bin-width-u1.svg"));
    EXPECT_EQ(read_file(out + "/notes.txt"), "my notes\n");
    for (const auto& n: files_in(out)) EXPECT_EQ(n.find(".tmp-"), std::string::npos) << n;
}

TEST(cli_figures, help_lists_the_options_and_the_command_is_in_the_overview) {
    const auto help = run_rastrum("figures --help");
    EXPECT_EQ(help.exit_code, 0);
    for (const char* option: {"--out", "--recording", "--unit", "--psth-ms", "RESULT.json"}) {
        EXPECT_NE(help.out.find(option), std::string::npos) << option;
    }
    EXPECT_NE(run_rastrum("--help").out.find("figures"), std::string::npos);
}

// The figure the README shows is what the commands in notes/figures.md make from the demo.
TEST(cli_figures, the_readme_figure_is_what_the_documented_commands_make) {
    const std::string folder = fresh_folder("figures-readme");
    const std::string demo = std::string(RASTRUM_SOURCE_DIR) + "/demo-recordings/flicker-tectum.h5";
    ASSERT_EQ(run_rastrum("direct " + demo + " --bin-ms 2,4 --letters 1-8 --quiet --json " + folder + "/demo.json").exit_code, 0);
    ASSERT_EQ(run_rastrum(figures(folder + "/demo.json --quiet --out " + folder + "/report")).exit_code, 0);
    EXPECT_EQ(read_file(folder + "/report/demo-summary.svg"),
              read_file(std::string(RASTRUM_SOURCE_DIR) + "/notes/figures/demo-summary.svg"))
        << "remake notes/figures/demo-summary.svg with the commands in notes/figures.md";
    // The sweep the README shows, by the commands it gives.
    ASSERT_EQ(run_rastrum("direct " + demo + " --unit u3 --bin-ms 1,2,4,8 --letters 1-10 --every-length --quiet --json " + folder +
                          "/sweep.json").exit_code, 0);
    ASSERT_EQ(run_rastrum(figures(folder + "/sweep.json --quiet --out " + folder + "/sweep")).exit_code, 0);
    for (const char* name: {"sweep-rates-vs-bin-width-u3.svg", "sweep-word-length-u3-2ms.svg"}) {
        EXPECT_EQ(read_file(folder + "/sweep/" + name), read_file(std::string(RASTRUM_SOURCE_DIR) + "/notes/figures/" + name))
            << "remake notes/figures/" << name << " with the commands in README (A sweep)";
    }
}
