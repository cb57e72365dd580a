// Curves rebuilt from the records of results that carry no "curves" (written before they existed).
#include <rastrum/extrapolation.hpp>
#include <rastrum/result_file.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <tuple>

namespace rastrum {

namespace {
using json = nlohmann::ordered_json;

std::optional<std::string> stimulus_of(const json& r) {
    if (r.contains("stimulus") && r["stimulus"].is_string()) return r["stimulus"].get<std::string>();
    return std::nullopt;
}

curve_series blank(const std::string& curve, const json& r, const std::string& series) {
    curve_series c;
    c.curve = curve;
    c.unit = r["unit"].get<std::string>();
    c.stimulus = stimulus_of(r);
    c.series = series;
    return c;
}

void direct_rates_vs_bin_width(const json& records, std::vector<curve_series>& out) {
    // (unit, stimulus) -> records in bin-width order
    std::map<std::pair<std::string, std::string>, std::vector<const json*>> groups;
    std::vector<std::pair<std::string, std::string>> order;
    for (const auto& r: records) {
        const auto key = std::make_pair(r["unit"].get<std::string>(), stimulus_of(r).value_or(""));
        if (!groups.count(key)) order.push_back(key);
        groups[key].push_back(&r);
    }
    for (const auto& key: order) {
        auto& rs = groups[key];
        std::stable_sort(rs.begin(), rs.end(), [](const json* a, const json* b) {
            return number_or_nan(*a, "bin_ms") < number_or_nan(*b, "bin_ms");
        });
        for (const char* series: {"information", "total", "noise"}) {
            curve_series c = blank("info_rate_vs_bin_width", *rs.front(), series);
            c.x = {"bin width", "ms", {}};
            const std::string name = series;
            c.y = {name == "information" ? "information rate" : "entropy rate", "bits/s", {}};
            const char* key_of = name == "information" ? "info_rate_bits_per_s"
                                 : name == "total"     ? "total_entropy_rate_bits_per_s"
                                                       : "noise_entropy_rate_bits_per_s";
            for (const json* r: rs) {
                c.x.values.push_back(number_or_nan(*r, "bin_ms"));
                c.y.values.push_back(number_or_nan(*r, key_of));
                if (name == "information") {
                    const json& ci = r->value("info_rate_ci95_bits_per_s", json());
                    const bool ok = ci.is_array() && ci.size() == 2 && ci[0].is_number() && ci[1].is_number();
                    c.y_low.push_back(ok ? ci[0].get<double>() : NAN);
                    c.y_high.push_back(ok ? ci[1].get<double>() : NAN);
                }
            }
            out.push_back(std::move(c));
        }
    }
}

void direct_rates_vs_inverse_letters(const json& records, std::vector<curve_series>& out) {
    for (const auto& r: records) {
        const double bin_s = number_or_nan(r, "bin_ms") / 1000;
        const json& by = r.value("by_letters", json::array());
        const json& fit = r.value("fit_letters", json());
        const bool has_fit = fit.is_array() && fit.size() == 2 && fit[0].is_number() && fit[1].is_number();
        if (!by.is_array() || by.empty() || !(bin_s > 0)) continue;
        for (const char* series: {"total", "noise", "information"}) {
            const std::string name = series;
            curve_series c = blank("entropy_rate_vs_inverse_letters", r, series);
            c.bin_ms = bin_s * 1000;
            c.x = {"inverse word length", "1/letters", {}};
            c.y = {name == "information" ? "information rate" : "entropy rate", "bits/s", {}};
            const char* key_of = name == "information" ? "info_bits" : name == "total" ? "total_entropy_bits" : "noise_entropy_bits";
            std::vector<double> fx, fy;
            for (const auto& le: by) {
                const double letters = number_or_nan(le, "letters");
                if (!(letters > 0)) continue;
                const double x = 1 / letters, y = number_or_nan(le, key_of) / (letters * bin_s);
                const bool in = has_fit && letters >= fit[0].get<double>() && letters <= fit[1].get<double>();
                c.x.values.push_back(x);
                c.y.values.push_back(y);
                c.in_fit.push_back(in);
                if (in && std::isfinite(y)) {
                    fx.push_back(x);
                    fy.push_back(y);
                }
            }
            if (name != "information" && !fx.empty()) {
                curve_fit f;
                // The direct method's own fit (one length gives a flat line: that length's rate).
                const line_fit line = fit_line(fx, fy);
                f.coefficients = {line.intercept, line.slope};
                f.x_range = {*std::min_element(fx.begin(), fx.end()), *std::max_element(fx.begin(), fx.end())};
                c.fit = f;
            }
            out.push_back(std::move(c));
        }
    }
}

void stiminfo_time_courses(const json& records, std::vector<curve_series>& out) {
    std::map<std::string, std::vector<const json*>> by_unit;
    std::vector<std::string> order;
    for (const auto& r: records) {
        const std::string unit = r["unit"].get<std::string>();
        if (!by_unit.count(unit)) order.push_back(unit);
        by_unit[unit].push_back(&r);
    }
    for (const auto& unit: order) {
        auto& rs = by_unit[unit];
        if (rs.size() < 2) continue;
        const auto centre = [](const json* r) {
            const json& w = r->value("window_ms", json());
            return w.is_array() && w.size() == 2 && w[0].is_number() && w[1].is_number()
                       ? (w[0].get<double>() + w[1].get<double>()) / 2
                       : NAN;
        };
        std::stable_sort(rs.begin(), rs.end(), [&](const json* a, const json* b) { return centre(a) < centre(b); });
        const json& first = *rs.front();
        const std::string interval_estimator = first.value("info_ci95_estimator", "");
        std::vector<std::string> names = estimator_names(first);
        names.push_back("null");
        for (const auto& name: names) {
            curve_series c = blank("info_vs_time", first, name);
            c.stimulus.reset();
            c.x = {"window centre", "ms", {}};
            c.y = {"information", "bits", {}};
            const bool with_interval = name == interval_estimator;
            for (const json* r: rs) {
                c.x.values.push_back(centre(r));
                c.y.values.push_back(name == "null" ? number_or_nan(r->value("null", json::object()), "mean_bits")
                                                    : number_or_nan(r->value("info_bits", json::object()), name.c_str()));
                if (with_interval) {
                    const json& ci = r->value("info_ci95_bits", json());
                    const bool ok = ci.is_array() && ci.size() == 2 && ci[0].is_number() && ci[1].is_number();
                    c.y_low.push_back(ok ? ci[0].get<double>() : NAN);
                    c.y_high.push_back(ok ? ci[1].get<double>() : NAN);
                }
            }
            out.push_back(std::move(c));
        }
    }
}
}  // namespace

std::vector<curve_series> curves_from_records(const json& result, const std::string& analysis) {
    std::vector<curve_series> out;
    const json& records = result["records"];
    if (analysis == "direct") {
        direct_rates_vs_bin_width(records, out);
        direct_rates_vs_inverse_letters(records, out);
    } else {
        stiminfo_time_courses(records, out);
    }
    return out;
}

}  // namespace rastrum
