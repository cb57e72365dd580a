#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/figure_report.hpp>
#include <rastrum/output_folder.hpp>

#include <filesystem>
#include <iostream>

namespace rastrum::app {

int run_figures(int argc, char** argv) {
    figure_report_request request;
    std::string out, recording_path, psth_text;
    bool quiet = false;
    po::options_description options("Options");
    options.add_options()
        ("out", po::value(&out)->required(),
         "folder for index.html and the SVG figures; created if absent (its parent must exist); in an existing folder "
         "only files rastrum wrote there are replaced")
        ("recording", po::value(&recording_path), "the recording the results came from: adds a raster and PSTH per unit of the results computed from it (matched by SHA-256)")
        ("unit", po::value(&request.units.ids)->composing(), "draw this unit (repeat for several); every unit when absent")
        ("psth-ms", po::value(&psth_text), "PSTH bin width in ms; by default a 1-2-5 value near 1/60 of the shortest trial")
        ("quiet,q", po::bool_switch(&quiet), "no status lines");
    po::variables_map vm;
    if (!parse_command(argc, argv, "figures", "RESULT.json [RESULT.json ...] --out DIR [--recording FILE] [--unit ID]... [--psth-ms W]",
                       options,
                       {{"results", "RESULT.json", "results of rastrum direct or stiminfo (--json); one or more", nullptr,
                         &request.results}},
                       vm)) {
        return 0;
    }
    if (vm.count("psth-ms")) {
        const auto w = parse_number_list(psth_text, "--psth-ms");
        if (w.size() != 1 || !(w[0] > 0)) throw usage_error("--psth-ms: one positive width in ms, got '" + psth_text + "'");
        request.raster.psth_bin_ms = w[0];
    }
    if (vm.count("recording")) request.recording = recording_path;
    // An input given as --out is an existing file, which this refuses too. Made ready before any
    // work: a folder that cannot be written is known at once.
    output_folder folder(out, "--out");
    const figure_report report = make_figure_report(request);
    folder.write(report.files);
    for (const auto& n: report.notices) note(quiet, "note: " + n);
    note(quiet, "wrote " + (std::filesystem::path(out) / "index.html").string() + " and " + std::to_string(report.figures) +
                    " figures");
    return 0;
}

}  // namespace rastrum::app
