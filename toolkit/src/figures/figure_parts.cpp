#include "figure_parts.hpp"

#include <rastrum/format.hpp>

#include <algorithm>
#include <cmath>

namespace rastrum {

bool unit_choice::wants(const std::string& unit) const {
    return ids.empty() || std::find(ids.begin(), ids.end(), unit) != ids.end();
}

}  // namespace rastrum

namespace rastrum::figure_parts {

figure drawn_figure(svg::chart chart, const std::string& kind, const std::string& unit, const std::string& qualifier,
                    const std::string& caption) {
    chart.description = caption;
    figure f;
    f.kind = kind;
    f.unit = unit;
    f.qualifier = qualifier;
    f.title = chart.title;
    f.caption = caption;
    f.svg = svg::render(chart);
    return f;
}

std::string axis_title(const std::string& quantity, const std::string& unit) {
    return unit.empty() ? quantity : quantity + " (" + unit + ")";
}

std::string axis_title(const curve_axis& axis) { return axis_title(axis.quantity, axis.unit); }

svg::series points_of(const curve_series& c, const svg::style& look, const std::string& label) {
    svg::series s;
    s.label = label;
    s.look = look;
    s.x = c.x.values;
    s.y = c.y.values;
    s.low = c.y_low;
    s.high = c.y_high;
    for (bool in: c.in_fit) s.hollow.push_back(!in);
    return s;
}

double fit_value(const curve_fit& fit, double x) {
    double y = 0;
    for (std::size_t i = fit.coefficients.size(); i-- > 0;) y = y * x + fit.coefficients[i];
    return y;
}

svg::series fit_series(const curve_fit& fit, const svg::style& look, const std::string& label) {
    svg::series s;
    s.label = label;
    s.look = look;
    s.look.line_width = 1.3;
    s.markers = false;
    const double end = std::max(fit.x_range.first, fit.x_range.second);
    // A straight line needs its two ends; a curved fit 48 pieces, smooth at any size shown.
    const int pieces = fit.coefficients.size() <= 2 ? 1 : 48;
    for (int i = 0; i <= pieces; ++i) {
        const double x = end * i / pieces;
        s.x.push_back(x);
        s.y.push_back(fit_value(fit, x));
    }
    return s;
}

svg::series value_at_zero(double value, const svg::style& look) {
    svg::series s;
    s.look = look;
    s.look.shape = svg::marker::cross;
    s.line = false;
    s.marker_size = 5.5;
    s.x = {0};
    s.y = {value};
    return s;
}

std::vector<svg::legend_key> fit_keys(const std::string& filled_means, const std::string& open_means) {
    svg::legend_key filled, open, zero;
    filled.label = filled_means;
    open.label = open_means;
    open.hollow = true;
    zero.label = "extrapolated to 0";
    zero.look.shape = svg::marker::cross;
    return {filled, open, zero};
}

std::vector<const curve_series*> curves_where(const std::vector<curve_series>& curves, const std::string& kind,
                                              const std::function<bool(const curve_series&)>& keep) {
    std::vector<const curve_series*> out;
    for (const auto& c: curves) {
        if (c.curve == kind && keep(c)) out.push_back(&c);
    }
    return out;
}

const curve_series* series_named(const std::vector<const curve_series*>& curves, const std::string& series) {
    for (const auto* c: curves) {
        if (c->series == series) return c;
    }
    return nullptr;
}

std::vector<std::string> units_in_order(const nlohmann::ordered_json& records) {
    std::vector<std::string> units;
    for (const auto& r: records) {
        const std::string u = r["unit"].get<std::string>();
        if (std::find(units.begin(), units.end(), u) == units.end()) units.push_back(u);
    }
    return units;
}

std::string shown(double x, int decimals) { return std::isfinite(x) ? format_fixed(x, decimals) : "n/a"; }

std::string ms_text(double ms) { return format_number(ms) + " ms"; }

std::string ms_qualifier(double ms) { return format_number(ms) + "ms"; }

bool has_finite(const std::vector<double>& values) {
    return std::any_of(values.begin(), values.end(), [](double v) { return std::isfinite(v); });
}

}  // namespace rastrum::figure_parts
