// Figures of a direct-method result.
#include "figure_parts.hpp"

#include <rastrum/figures.hpp>

#include <algorithm>
#include <cmath>
#include <set>

namespace rastrum {

using namespace figure_parts;
using json = nlohmann::ordered_json;

namespace {

bool same_stimulus(const curve_series& c, const std::optional<std::string>& stimulus) { return c.stimulus == stimulus; }

std::string with_stimulus(const std::optional<std::string>& stimulus) {
    return stimulus ? " (trials labelled " + *stimulus + ")" : "";
}

/// Word lengths of the points a 1/L curve used for its fit, from x = 1/L.
std::vector<long long> fitted_lengths(const curve_series* c) {
    std::vector<long long> lengths;
    if (!c) return lengths;
    for (std::size_t i = 0; i < c->in_fit.size(); ++i) {
        if (c->in_fit[i] && c->x.values[i] > 0) lengths.push_back(std::llround(1 / c->x.values[i]));
    }
    std::sort(lengths.begin(), lengths.end());
    return lengths;
}

std::string lengths_text(const std::vector<long long>& lengths) {
    if (lengths.empty()) return "none";
    if (lengths.size() == 1) return "L = " + std::to_string(lengths.front());
    return "L = " + std::to_string(lengths.front()) + "-" + std::to_string(lengths.back());
}

std::optional<figure> rates_vs_bin_width(const result_document& doc, const std::string& unit,
                                         const std::optional<std::string>& stimulus) {
    const auto curves = curves_where(doc.curves, "info_rate_vs_bin_width", [&](const curve_series& c) {
        return c.unit == unit && same_stimulus(c, stimulus);
    });
    const auto* info = series_named(curves, "information");
    const auto* total = series_named(curves, "total");
    const auto* noise = series_named(curves, "noise");
    if (!info && !total && !noise) return std::nullopt;
    svg::chart chart;
    chart.title = unit + ": information and entropy rates against bin width" + with_stimulus(stimulus);
    svg::panel top;
    top.title = "Information rate";
    if (info) {
        top.lines.push_back(points_of(*info, svg::information_style(), info->y_low.empty() ? "information" : "information, 95% interval"));
        top.x_label = axis_title(info->x);
        top.y_label = axis_title(info->y);
    }
    top.x_from_zero = top.y_from_zero = true;
    svg::panel bottom;
    bottom.title = "Total and noise entropy rates";
    for (const auto& [c, look]: {std::make_pair(total, svg::total_entropy_style()), std::make_pair(noise, svg::noise_entropy_style())}) {
        if (!c) continue;
        bottom.lines.push_back(points_of(*c, look, c->series == "total" ? "total entropy" : "noise entropy"));
        bottom.x_label = axis_title(c->x);
        bottom.y_label = axis_title("entropy rate", c->y.unit);  // total and noise share the axis
    }
    bottom.x_from_zero = bottom.y_from_zero = true;
    if (!top.lines.empty()) chart.panels.push_back(top);
    if (!bottom.lines.empty()) chart.panels.push_back(bottom);
    const std::string caption =
        "The information rate of " + unit +
            " at each bin width, extrapolated to unlimited data and word length, with its 95% interval as a band; "
            "below, the total and noise entropy rates whose difference it is.";
    return drawn_figure(chart, "rates-vs-bin-width", unit, stimulus.value_or(""), caption);
}

std::optional<figure> rates_vs_inverse_letters(const result_document& doc, const std::string& unit, double bin_ms,
                                               const std::optional<std::string>& stimulus) {
    const auto curves = curves_where(doc.curves, "entropy_rate_vs_inverse_letters", [&](const curve_series& c) {
        return c.unit == unit && c.bin_ms == bin_ms && same_stimulus(c, stimulus);
    });
    if (curves.empty()) return std::nullopt;
    svg::panel entropies;
    entropies.title = "Total and noise entropy rates";
    entropies.x_from_zero = true;
    double total_at_zero = NAN, noise_at_zero = NAN;
    for (const char* name: {"total", "noise"}) {
        const auto* c = series_named(curves, name);
        if (!c) continue;
        const bool total = c->series == "total";
        const svg::style look = total ? svg::total_entropy_style() : svg::noise_entropy_style();
        svg::series points = points_of(*c, look, total ? "total entropy" : "noise entropy");
        points.line = false;
        entropies.lines.push_back(points);
        if (c->fit) {
            (total ? total_at_zero : noise_at_zero) = c->fit->coefficients[0];
            entropies.lines.push_back(fit_series(*c->fit, look,
                                                 std::string(total ? "total" : "noise") + ": line fit, " +
                                                     shown(c->fit->coefficients[0], 2) + " " + c->y.unit + " at 1/L = 0"));
            entropies.lines.push_back(value_at_zero(c->fit->coefficients[0], look));
        }
        entropies.x_label = axis_title(c->x);
        entropies.y_label = axis_title("entropy rate", c->y.unit);  // total and noise share the axis
    }
    entropies.keys = fit_keys("word length used by the fit", "word length not used by the fit");
    svg::panel information;
    information.title = "Information rate (total - noise)";
    information.x_from_zero = information.y_from_zero = true;
    if (const auto* c = series_named(curves, "information")) {
        information.lines.push_back(points_of(*c, svg::information_style(), "information at each word length"));
        information.x_label = axis_title(c->x);
        information.y_label = axis_title(c->y);
        if (std::isfinite(total_at_zero) && std::isfinite(noise_at_zero)) {
            svg::series zero = value_at_zero(total_at_zero - noise_at_zero, svg::information_style());
            zero.label = "total - noise at 1/L = 0: " + shown(total_at_zero - noise_at_zero, 2) + " " + c->y.unit;
            information.lines.push_back(zero);
        }
    }
    const auto lengths = fitted_lengths(series_named(curves, "total"));
    svg::chart chart;
    chart.title = unit + " at " + ms_text(bin_ms) + ": entropy rates against inverse word length" + with_stimulus(stimulus);
    if (!entropies.lines.empty()) chart.panels.push_back(entropies);
    if (!information.lines.empty()) chart.panels.push_back(information);
    const std::string caption =
        "Total and noise entropy rates of " + unit + " with " + ms_text(bin_ms) +
            " bins at each word length L, against 1/L. Filled markers are the lengths the straight-line fit used (" +
            lengths_text(lengths) +
            "); the fit is extended to 1/L = 0, unlimited word length (x). Below, their difference at each length "
            "and the extrapolated information rate.";
    return drawn_figure(chart, "word-length", unit, ms_qualifier(bin_ms) + (stimulus ? "-" + *stimulus : ""), caption);
}

std::optional<figure> entropies_vs_inverse_trials(const result_document& doc, const std::string& unit, double bin_ms,
                                                  const std::optional<std::string>& stimulus) {
    const auto curves = curves_where(doc.curves, "entropy_vs_inverse_trials", [&](const curve_series& c) {
        return c.unit == unit && c.bin_ms == bin_ms && same_stimulus(c, stimulus) && c.letters;
    });
    if (curves.empty()) return std::nullopt;
    // The lengths behind the reported rate are the ones worth checking; all when that is unknown.
    const auto inverse_letters = curves_where(doc.curves, "entropy_rate_vs_inverse_letters", [&](const curve_series& c) {
        return c.unit == unit && c.bin_ms == bin_ms && same_stimulus(c, stimulus);
    });
    std::vector<long long> lengths = fitted_lengths(series_named(inverse_letters, "total"));
    std::set<long long> available;
    for (const auto* c: curves) available.insert(*c->letters);
    lengths.erase(std::remove_if(lengths.begin(), lengths.end(), [&](long long l) { return !available.count(l); }), lengths.end());
    const bool all_lengths = lengths.empty();
    if (all_lengths) lengths.assign(available.begin(), available.end());
    constexpr std::size_t most_lengths = 6;
    if (lengths.size() > most_lengths) lengths.resize(most_lengths);
    svg::chart chart;
    chart.title = unit + " at " + ms_text(bin_ms) + ": entropies against inverse trial count" + with_stimulus(stimulus);
    chart.columns = 2;
    chart.shared_legend = true;
    for (long long letters: lengths) {
        for (const char* name: {"total", "noise"}) {
            const curve_series* c = nullptr;
            for (const auto* k: curves) {
                if (*k->letters == letters && k->series == name) c = k;
            }
            if (!c) continue;
            const bool total = c->series == "total";
            const svg::style look = total ? svg::total_entropy_style() : svg::noise_entropy_style();
            svg::panel p;
            p.height = 170;
            p.title = std::string(total ? "Total" : "Noise") + " entropy, L = " + std::to_string(letters);
            p.x_from_zero = true;
            p.x_label = axis_title(c->x);
            p.y_label = axis_title(c->y);
            svg::series points = points_of(*c, look, total ? "total entropy" : "noise entropy");
            points.line = false;
            p.lines.push_back(points);
            if (c->fit) {
                p.title += ": " + shown(c->fit->coefficients[0], 4) + " at 1/N = 0";
                p.lines.push_back(fit_series(*c->fit, look, std::string(total ? "total" : "noise") + ": quadratic fit"));
                p.lines.push_back(value_at_zero(c->fit->coefficients[0], look));
            }
            chart.panels.push_back(p);
        }
    }
    if (chart.panels.empty()) return std::nullopt;
    chart.panels.front().keys = fit_keys("trial subsets used by the fit", "not used by the fit");
    const std::string caption =
        "Total and noise entropies of " + unit + " with " + ms_text(bin_ms) +
            " bins, estimated on all trials and on subsets of them, against 1/N (N trials); the quadratic fit is "
            "extended to 1/N = 0, unlimited data (x). Word lengths shown: " +
            (all_lengths ? std::string("all analysed") : "those the 1/L fit used") + " (" + lengths_text(lengths) +
            (available.size() > lengths.size() && !all_lengths ? "; the result holds " + std::to_string(available.size()) + " lengths" : "") +
            ").";
    return drawn_figure(chart, "trial-count", unit, ms_qualifier(bin_ms) + (stimulus ? "-" + *stimulus : ""), caption);
}

std::optional<figure> bits_per_spike_summary(const json& records, const unit_choice& units) {
    std::vector<const json*> kept;
    std::set<double> bins;
    for (const auto& r: records) {
        if (!units.wants(r["unit"].get<std::string>())) continue;
        kept.push_back(&r);
        const double b = number_or_nan(r, "bin_ms");
        if (std::isfinite(b)) bins.insert(b);
    }
    if (kept.empty() || bins.empty()) return std::nullopt;
    const std::vector<double> bin_list(bins.begin(), bins.end());
    std::vector<std::string> categories;
    for (double b: bin_list) categories.push_back(ms_text(b));
    std::vector<std::string> ids;
    for (const json* r: kept) {
        const std::string u = (*r)["unit"].get<std::string>();
        if (std::find(ids.begin(), ids.end(), u) == ids.end()) ids.push_back(u);
    }
    svg::panel per_spike, per_second;
    per_spike.title = "Bits per spike";
    per_spike.y_label = "information per spike (bits/spike)";
    per_second.title = "Information rate";
    per_second.y_label = "information rate (bits/s)";
    for (auto* p: {&per_spike, &per_second}) {
        p->x_label = "bin width";
        p->x_categories = categories;
        p->y_from_zero = true;
    }
    // Units side by side within each bin width, so their intervals do not hide each other.
    const double spread = std::min(0.7, 0.14 * static_cast<double>(ids.size()));
    for (std::size_t i = 0; i < ids.size(); ++i) {
        const double offset = ids.size() < 2 ? 0 : spread * (static_cast<double>(i) / static_cast<double>(ids.size() - 1) - 0.5);
        svg::series spike, second;
        spike.label = second.label = ids[i];
        spike.look = second.look = svg::palette_style(i);
        for (const json* r: kept) {
            if ((*r)["unit"] != ids[i]) continue;
            const double bin = number_or_nan(*r, "bin_ms");
            const auto at = std::find(bin_list.begin(), bin_list.end(), bin);
            if (at == bin_list.end()) continue;
            const double x = static_cast<double>(at - bin_list.begin()) + offset;
            const double rate = number_or_nan(*r, "mean_rate_hz"), info = number_or_nan(*r, "info_rate_bits_per_s");
            const json& ci = r->value("info_rate_ci95_bits_per_s", json());
            const bool has_ci = ci.is_array() && ci.size() == 2 && ci[0].is_number() && ci[1].is_number();
            const double low = has_ci ? ci[0].get<double>() : NAN, high = has_ci ? ci[1].get<double>() : NAN;
            const bool cautioned = r->contains("warnings") && (*r)["warnings"].is_array() && !(*r)["warnings"].empty();
            for (auto* s: {&spike, &second}) {
                const double divide = s == &spike ? rate : 1;
                s->x.push_back(x);
                s->y.push_back(s == &spike ? number_or_nan(*r, "bits_per_spike") : info);
                s->low.push_back(divide > 0 ? low / divide : NAN);
                s->high.push_back(divide > 0 ? high / divide : NAN);
                s->hollow.push_back(cautioned);
            }
        }
        for (auto* s: {&spike, &second}) {
            s->line = false;
            s->interval_as_bars = true;
        }
        per_spike.lines.push_back(spike);
        per_second.lines.push_back(second);
    }
    svg::legend_key open;
    open.label = "open marker: the number carries a caution (see the table)";
    open.hollow = true;
    per_second.keys.push_back(open);
    per_spike.keys.push_back(open);
    svg::chart chart;
    chart.title = "Information of every unit by bin width";
    chart.panels = {per_spike, per_second};
    const std::string caption =
        "One marker per unit and bin width with its 95% interval: bits per spike (the information rate over the "
            "unit's mean firing rate; its interval is the rate's interval over the same firing rate) and the "
            "information rate. Open markers are numbers that carry statistical cautions, listed in the table.";
    return drawn_figure(chart, "summary", "", "", caption);
}

/// Bin widths of one unit and stimulus in the order the curves list them.
std::vector<double> bins_of(const result_document& doc, const std::string& unit, const std::optional<std::string>& stimulus) {
    std::vector<double> bins;
    for (const auto& c: doc.curves) {
        if (c.unit != unit || !c.bin_ms || !same_stimulus(c, stimulus)) continue;
        if (std::find(bins.begin(), bins.end(), *c.bin_ms) == bins.end()) bins.push_back(*c.bin_ms);
    }
    return bins;
}

}  // namespace

std::vector<figure> direct_figures(const result_document& doc, const unit_choice& units) {
    std::vector<figure> out;
    const json& records = doc.content["records"];
    if (auto f = bits_per_spike_summary(records, units)) out.push_back(*f);
    for (const auto& unit: units_in_order(records)) {
        if (!units.wants(unit)) continue;
        std::vector<std::optional<std::string>> stimuli;
        for (const auto& c: doc.curves) {
            if (c.unit == unit && std::find(stimuli.begin(), stimuli.end(), c.stimulus) == stimuli.end()) stimuli.push_back(c.stimulus);
        }
        for (const auto& stimulus: stimuli) {
            if (auto f = rates_vs_bin_width(doc, unit, stimulus)) out.push_back(*f);
            for (double bin: bins_of(doc, unit, stimulus)) {
                if (auto f = rates_vs_inverse_letters(doc, unit, bin, stimulus)) out.push_back(*f);
                if (auto f = entropies_vs_inverse_trials(doc, unit, bin, stimulus)) out.push_back(*f);
            }
        }
    }
    return out;
}

}  // namespace rastrum
