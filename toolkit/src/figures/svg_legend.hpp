#pragma once
// Legends: entries flow left to right below the data and wrap into rows (long labels wrap at
// spaces), so they never cover a mark.
#include <rastrum/svg_plot.hpp>

#include <sstream>
#include <string>
#include <vector>

namespace rastrum::svg {

struct legend_entry {
    std::vector<std::string> lines;  // the label, wrapped
    style look;
    bool line = false, marker = false, hollow = false, band = false, bars = false, raster_tick = false;
    double x = 0, y = 0;             // offset of the entry within the legend
};

struct legend_layout {
    std::vector<legend_entry> entries;
    double height = 0;
};

/// Entries for a panel's labelled series and rasters, then its extra keys.
std::vector<legend_entry> legend_entries(const panel& p);
/// One legend for several panels: every series entry first, then every key, each label once.
std::vector<legend_entry> shared_legend_entries(const std::vector<panel>& panels);
/// Places the entries in rows within `width` px.
legend_layout layout_legend(std::vector<legend_entry> entries, double width);
void draw_legend(std::ostringstream& out, const legend_layout& legend, double x, double y);

}  // namespace rastrum::svg
