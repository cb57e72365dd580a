#pragma once
/// `rastrum figures` as a function: result files (and optionally their recording) in, the report
/// page and its SVG figures out, as named texts ready to be written into one folder.
#include <rastrum/figures.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

struct figure_report_request {
    std::vector<std::string> results;      // paths of result JSON files
    std::optional<std::string> recording;  // for rasters and PSTHs
    unit_choice units;
    raster_options raster;
};

struct figure_report {
    std::vector<std::pair<std::string, std::string>> files;  // (file name, contents); index.html first
    std::vector<std::string> notices;                         // for people: what was left out and why
    std::size_t figures = 0;
};

/// Reads every input (input_error for unreadable ones), checks that each --unit names a unit of
/// some result (usage_error listing the units otherwise), and draws. Deterministic: the same inputs
/// give the same bytes.
figure_report make_figure_report(const figure_report_request& request);

}  // namespace rastrum
