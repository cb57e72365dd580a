#pragma once
/// A small plotting module that writes SVG: panels of lines, markers, translucent interval bands,
/// error bars, step histograms and raster ticks, with 1-2-5 ticks, axis labels, and legends set
/// below the data so they never cover it. Text stays real SVG text (selectable, editable, searchable)
/// and the output is a pure function of the chart: the same chart gives the same bytes.
#include <rastrum/plot_palette.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum::svg {

/// One data series. Points whose x or y is not finite are left out and break the line there.
struct series {
    std::string label;                 // legend text; empty: not in the legend
    style look;
    std::vector<double> x, y;
    std::vector<double> low, high;     // a 95% interval per point, or empty
    bool interval_as_bars = false;     // error bars instead of a translucent band
    bool line = true;
    bool markers = true;
    std::vector<bool> hollow;          // per point (or empty): an open marker, e.g. not used by a fit
    double marker_size = 4.5;          // px, half the marker's width
    /// A step histogram: y[i] holds from x[i] to x[i + 1], so x has one value more than y.
    bool steps = false;
};

/// Spike rasters: one short vertical tick per event at (x, row).
struct raster {
    std::string label;
    std::string colour = "#000000";
    std::vector<double> x, row;
};

/// A legend entry that belongs to no series (e.g. what an open marker means).
struct legend_key {
    std::string label;
    style look;
    bool line = false;
    bool marker = true;
    bool hollow = false;
    bool band = false;
};

struct panel {
    std::string title;                  // small heading above the panel; may be empty
    std::string x_label, y_label;       // quantity with its unit, e.g. "bin width (ms)"
    std::vector<series> lines;
    std::vector<raster> rasters;
    std::vector<legend_key> keys;       // shown after the series' own entries
    std::vector<std::string> x_categories;  // a categorical x axis: series x values are indices into it
    bool x_from_zero = false, y_from_zero = false;  // the axis range includes 0
    std::optional<std::pair<double, double>> x_domain, y_domain;  // a fixed range instead of one from the data
    bool y_whole_numbers = false;       // ticks at whole numbers only (trial numbers)
    bool y_downward = false;            // the first row at the top (rasters)
    double height = 240;                // px of the data area
};

struct chart {
    std::string title;
    std::string description;            // for the SVG <desc>: what the figure shows
    std::vector<panel> panels;
    int columns = 1;                    // panels fill a grid row by row
    bool shared_legend = false;         // one legend under the grid: every panel's entries, each label once
    double width = 720;                 // px of the whole figure
};

/// The chart as a standalone SVG 1.1 document (UTF-8, with XML declaration, white background).
std::string render(const chart& c);

}  // namespace rastrum::svg
