#pragma once
// Drawing the data of one panel: bands, lines, markers, error bars, steps, raster ticks.
#include <rastrum/plot_scale.hpp>
#include <rastrum/svg_plot.hpp>

#include <sstream>

namespace rastrum::svg {

/// Where a panel's data go on the page, and its data ranges (marks outside them are not drawn).
struct plot_area {
    linear_map x, y;
    double x_low, x_high, y_low, y_high;
    bool contains(double px, double py) const;
};

void draw_band(std::ostringstream& out, const series& s, const plot_area& area);
void draw_series(std::ostringstream& out, const series& s, const plot_area& area);
void draw_raster(std::ostringstream& out, const raster& r, const plot_area& area);
/// One marker centred at page point (x, y), `size` px from centre to edge.
void draw_marker(std::ostringstream& out, marker shape, double x, double y, double size, bool hollow);
/// The stroke attributes of a style: colour, width, dash.
std::string stroke_of(const style& look);

}  // namespace rastrum::svg
