#pragma once
/// The report page: one self-contained HTML file (inline CSS, no scripts, no fonts or anything else
/// from the network) with a table per result, its statistical cautions beside the numbers they
/// concern and gathered at the top, and the figures as SVG files beside the page.
#include <rastrum/figures.hpp>
#include <rastrum/result_file.hpp>

#include <string>
#include <vector>

namespace rastrum {

/// A figure and the file name it is written under (relative to the page).
struct placed_figure {
    figure drawing;
    std::string file;
};

struct report_result {
    const result_document* result = nullptr;
    std::vector<placed_figure> figures;
};

struct report_contents {
    std::vector<report_result> results;
    std::string recording_path;                 // empty without --recording
    std::vector<placed_figure> recording_figures;
    std::vector<std::string> notices;           // about the inputs, e.g. a recording that differs from the results'
};

std::string report_html(const report_contents& contents);

}  // namespace rastrum
