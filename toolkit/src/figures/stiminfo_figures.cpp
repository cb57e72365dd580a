// Figures of a stimulus-information result.
#include "figure_parts.hpp"

#include <rastrum/figures.hpp>
#include <rastrum/format.hpp>

#include <algorithm>
#include <cmath>

namespace rastrum {

using namespace figure_parts;
using json = nlohmann::ordered_json;

namespace {

constexpr const char* null_label = "plug-in with shuffled labels: mean and 2.5-97.5% band";

std::string window_text(const std::pair<double, double>& w) {
    return format_number(w.first) + "-" + format_number(w.second) + " ms";
}

svg::series estimator_series(const curve_series& c) {
    if (c.series == "null") {
        svg::series s = points_of(c, svg::null_style(), c.y_low.empty() ? "plug-in with shuffled labels: mean" : null_label);
        s.markers = false;
        return s;
    }
    return points_of(c, svg::estimator_style(c.series), c.y_low.empty() ? c.series : c.series + ", 95% interval");
}

std::optional<figure> time_course(const result_document& doc, const std::string& unit) {
    const auto curves = curves_where(doc.curves, "info_vs_time", [&](const curve_series& c) { return c.unit == unit; });
    svg::panel p;
    p.y_from_zero = true;
    std::string interval_estimator;
    for (const auto* c: curves) {
        if (!has_finite(c->y.values)) continue;
        p.lines.push_back(estimator_series(*c));
        // The axis is titled by the estimates; the null's own title says what it is.
        if (p.y_label.empty() || c->series != "null") {
            p.x_label = axis_title(c->x);
            p.y_label = c->series == "null" ? "information (" + c->y.unit + ")" : axis_title(c->y);
        }
        if (c->series != "null" && !c->y_low.empty()) interval_estimator = c->series;
    }
    if (p.lines.empty()) return std::nullopt;
    // The null band underneath, so the estimates are drawn over it.
    std::stable_partition(p.lines.begin(), p.lines.end(), [](const svg::series& s) { return s.label.rfind("plug-in with shuffled", 0) == 0; });
    p.height = 280;
    svg::chart chart;
    chart.title = unit + ": information about the condition over time";
    chart.panels = {p};
    const std::string band =
        interval_estimator.empty() ? ""
        : interval_estimator == "calibrated"
            ? "; calibrated is the estimator of lowest error at each window's own sample size less its measured bias, "
              "with its 95% interval as the coloured band"
            : "; the coloured band is the 95% interval reported with " + interval_estimator;
    const std::string caption =
        "Information about which condition was shown in each sliding window (x: the window's centre), by each estimator" +
        band +
        ". The grey band is plug-in information with the condition labels shuffled: values inside it are what chance and "
        "bias alone give.";
    return drawn_figure(chart, "time-course", unit, "", caption);
}

std::optional<figure> trial_fractions(const result_document& doc, const std::string& unit) {
    const auto curves = curves_where(doc.curves, "info_vs_trial_fraction", [&](const curve_series& c) { return c.unit == unit; });
    std::vector<std::optional<std::pair<double, double>>> windows;
    for (const auto* c: curves) {
        if (std::find(windows.begin(), windows.end(), c->window_ms) == windows.end()) windows.push_back(c->window_ms);
    }
    svg::chart chart;
    chart.title = unit + ": information against the fraction of trials used";
    chart.columns = windows.size() >= 3 ? 3 : static_cast<int>(std::max<std::size_t>(1, windows.size()));
    chart.width = chart.columns >= 3 ? 960 : 720;
    chart.shared_legend = windows.size() > 1;
    for (const auto& w: windows) {
        svg::panel p;
        p.title = w ? "window " + window_text(*w) : "";
        p.x_from_zero = p.y_from_zero = true;
        p.height = windows.size() > 1 ? 170 : 260;
        for (const auto* c: curves) {
            if (c->window_ms != w || !has_finite(c->y.values)) continue;
            p.lines.push_back(estimator_series(*c));
            p.x_label = axis_title(c->x.quantity, c->x.unit);
            p.y_label = axis_title(c->y);
        }
        if (!p.lines.empty()) chart.panels.push_back(p);
    }
    if (chart.panels.empty()) return std::nullopt;
    const std::string caption =
        "Each estimator on random subsets of the trials, against the fraction of trials used. An estimator that "
            "is flat towards 1 has converged; one still changing at 1 would change with more trials, and its value "
            "should be read with that in mind.";
    return drawn_figure(chart, "trial-fraction", unit, "", caption);
}

/// Information per unit when each unit has one window (sliding windows have the time course).
std::optional<figure> per_unit_summary(const json& records, const unit_choice& units) {
    std::vector<const json*> kept;
    std::vector<std::string> ids;
    for (const auto& r: records) {
        const std::string u = r["unit"].get<std::string>();
        if (!units.wants(u)) continue;
        if (std::find(ids.begin(), ids.end(), u) != ids.end()) return std::nullopt;  // several windows
        ids.push_back(u);
        kept.push_back(&r);
    }
    if (kept.empty()) return std::nullopt;
    const std::vector<std::string> estimators = estimator_names(*kept.front());
    svg::panel p;
    p.x_categories = ids;
    p.x_label = "unit";
    p.y_label = "information (bits)";
    p.y_from_zero = true;
    p.height = 260;
    const std::size_t lanes = estimators.size() + 2;  // the estimators, the interval, the null
    const double spread = std::min(0.75, 0.09 * static_cast<double>(lanes));
    const auto lane_x = [&](std::size_t unit_index, std::size_t lane) {
        return static_cast<double>(unit_index) + spread * (static_cast<double>(lane) / static_cast<double>(lanes - 1) - 0.5);
    };
    svg::series interval, null_mean;
    interval.label = "95% interval";
    interval.look.colour = "#000000";
    interval.line = interval.markers = false;
    interval.interval_as_bars = true;
    null_mean.label = "plug-in with shuffled labels: mean";
    null_mean.look = svg::null_style();
    null_mean.look.shape = svg::marker::plus;
    null_mean.line = false;
    std::vector<svg::series> by_estimator(estimators.size());
    for (std::size_t e = 0; e < estimators.size(); ++e) {
        by_estimator[e].label = estimators[e];
        by_estimator[e].look = svg::estimator_style(estimators[e]);
        by_estimator[e].line = false;
    }
    for (std::size_t i = 0; i < kept.size(); ++i) {
        const json& r = *kept[i];
        for (std::size_t e = 0; e < estimators.size(); ++e) {
            by_estimator[e].x.push_back(lane_x(i, e));
            by_estimator[e].y.push_back(number_or_nan(r.value("info_bits", json::object()), estimators[e].c_str()));
        }
        const json& ci = r.value("info_ci95_bits", json());
        const bool has_ci = ci.is_array() && ci.size() == 2 && ci[0].is_number() && ci[1].is_number();
        interval.x.push_back(lane_x(i, estimators.size()));
        interval.y.push_back(NAN);
        interval.low.push_back(has_ci ? ci[0].get<double>() : NAN);
        interval.high.push_back(has_ci ? ci[1].get<double>() : NAN);
        null_mean.x.push_back(lane_x(i, estimators.size() + 1));
        null_mean.y.push_back(number_or_nan(r.value("null", json::object()), "mean_bits"));
    }
    p.lines = by_estimator;
    if (has_finite(interval.low)) p.lines.push_back(interval);
    if (has_finite(null_mean.y)) p.lines.push_back(null_mean);
    svg::chart chart;
    chart.title = "Information about the condition, per unit";
    chart.panels = {p};
    const std::string caption =
        "For each unit (and population), the information about which condition was shown by each estimator, the "
            "95% interval of the record, and the mean plug-in information with shuffled labels (the bias that chance "
            "alone gives).";
    return drawn_figure(chart, "summary", "", "", caption);
}

}  // namespace

std::vector<figure> stiminfo_figures(const result_document& doc, const unit_choice& units) {
    std::vector<figure> out;
    const json& records = doc.content["records"];
    if (auto f = per_unit_summary(records, units)) out.push_back(*f);
    for (const auto& unit: units_in_order(records)) {
        if (!units.wants(unit)) continue;
        if (auto f = time_course(doc, unit)) out.push_back(*f);
        if (auto f = trial_fractions(doc, unit)) out.push_back(*f);
    }
    return out;
}

}  // namespace rastrum
