#pragma once
// Pieces the figure builders share: axis titles from curves, series from curves and fits, the
// order of units in a result.
#include <rastrum/figures.hpp>
#include <rastrum/svg_plot.hpp>

#include <functional>
#include <string>
#include <vector>

namespace rastrum::figure_parts {

/// The figure of `chart`: its title, the caption (also the SVG's description) and the drawing.
figure drawn_figure(svg::chart chart, const std::string& kind, const std::string& unit, const std::string& qualifier,
                    const std::string& caption);

/// "bin width (ms)"; the quantity alone when it has no unit.
std::string axis_title(const curve_axis& axis);
std::string axis_title(const std::string& quantity, const std::string& unit);

/// The points of a curve; its interval as a band; points outside the fit drawn open.
svg::series points_of(const curve_series& c, const svg::style& look, const std::string& label);

/// The fitted polynomial at x.
double fit_value(const curve_fit& fit, double x);

/// A fit drawn from x = 0 to the end of its range, sampled finely enough to look smooth.
svg::series fit_series(const curve_fit& fit, const svg::style& look, const std::string& label);

/// The value extrapolated to x = 0, marked with a cross of the series' colour.
svg::series value_at_zero(double value, const svg::style& look);

/// The legend keys that explain filled and open markers and the cross at 0.
std::vector<svg::legend_key> fit_keys(const std::string& filled_means, const std::string& open_means);

/// Curves of one kind for which `keep` holds, in file order.
std::vector<const curve_series*> curves_where(const std::vector<curve_series>& curves, const std::string& kind,
                                              const std::function<bool(const curve_series&)>& keep);
const curve_series* series_named(const std::vector<const curve_series*>& curves, const std::string& series);

/// Unit ids in order of first appearance among the records.
std::vector<std::string> units_in_order(const nlohmann::ordered_json& records);

/// A number for titles and captions: fixed decimals, "n/a" when not finite.
std::string shown(double x, int decimals);
/// "2 ms" for a bin width; "2ms" as part of a file name.
std::string ms_text(double ms);
std::string ms_qualifier(double ms);

bool has_finite(const std::vector<double>& values);

}  // namespace rastrum::figure_parts
