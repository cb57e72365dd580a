#include "report_tables.hpp"

#include <rastrum/format.hpp>
#include <rastrum/result_file.hpp>
#include <rastrum/svg_text.hpp>

#include <algorithm>
#include <cmath>
#include <sstream>

namespace rastrum::report {

namespace {
using json = nlohmann::ordered_json;

std::string number(const json& object, const char* key, int decimals) {
    const double x = number_or_nan(object, key);
    return std::isfinite(x) ? format_fixed(x, decimals) : "&ndash;";
}

std::string pair_text(const json& pair, int decimals) {
    if (!pair.is_array() || pair.size() != 2 || !pair[0].is_number() || !pair[1].is_number()) return "&ndash;";
    return "[" + format_fixed(pair[0].get<double>(), decimals) + ", " + format_fixed(pair[1].get<double>(), decimals) + "]";
}

std::string window_of(const json& r) {
    const json& w = r.value("window_ms", json());
    if (!w.is_array() || w.size() != 2 || !w[0].is_number() || !w[1].is_number()) return "";
    return format_number(w[0].get<double>()) + "-" + format_number(w[1].get<double>()) + " ms";
}

std::string where_of(const json& r) {
    const std::string unit = r["unit"].get<std::string>();
    const double bin = number_or_nan(r, "bin_ms");
    const std::string window = window_of(r);
    if (!window.empty()) return unit + " at " + window;
    if (std::isfinite(bin)) return unit + " at " + format_number(bin) + " ms";
    return unit;
}

bool has_warnings(const json& r) { return r.contains("warnings") && r["warnings"].is_array() && !r["warnings"].empty(); }

/// The row of cautions under a record's row (nothing when it has none of its own).
std::string caution_row(std::size_t record, const grouped_cautions& cautions, std::size_t columns) {
    std::string items;
    for (const auto& c: cautions.own) {
        if (c.record == record) items += "<li>" + html(c.text) + "</li>";
    }
    if (items.empty()) return "";
    return "<tr class=\"caution\"><td colspan=\"" + std::to_string(columns) +
           "\"><span class=\"flag\" aria-hidden=\"true\">&#9888;</span> <strong>Caution</strong><ul>" + items + "</ul></td></tr>\n";
}

std::string shared_cautions(const grouped_cautions& cautions) {
    if (cautions.shared.empty()) return "";
    std::string out = "<div class=\"shared-cautions\"><span class=\"flag\" aria-hidden=\"true\">&#9888;</span> "
                      "<strong>Every record below:</strong><ul>";
    for (const auto& s: cautions.shared) out += "<li>" + html(s) + "</li>";
    return out + "</ul></div>\n";
}

bool own_caution(std::size_t record, const grouped_cautions& cautions) {
    return std::any_of(cautions.own.begin(), cautions.own.end(), [&](const caution& c) { return c.record == record; });
}

/// The flag beside the main number of a row whose record has cautions.
std::string flag(bool cautioned) {
    return cautioned ? " <span class=\"flag\" title=\"see the caution below\">&#9888;</span>" : "";
}

/// Header text that may wrap after its hyphens ("quadratic-extrapolation" is wider than its numbers).
std::string breakable(const std::string& text) {
    std::string out;
    for (char c: html(text)) {
        out += c;
        if (c == '-') out += "<wbr>";
    }
    return out;
}

std::string header_row(const std::vector<std::string>& names) {
    std::string out = "<thead><tr>";
    for (const auto& n: names) out += "<th scope=\"col\">" + n + "</th>";
    return out + "</tr></thead>\n";
}
}  // namespace

std::string html(const std::string& text) { return svg::escape(text); }

std::vector<caution> cautions_of(const json& result) {
    std::vector<caution> out;
    const json& records = result["records"];
    for (std::size_t i = 0; i < records.size(); ++i) {
        if (!has_warnings(records[i])) continue;
        for (const auto& w: records[i]["warnings"]) {
            if (w.is_string()) out.push_back({i, where_of(records[i]), w.get<std::string>()});
        }
    }
    return out;
}

grouped_cautions group_cautions(const std::vector<caution>& cautions, std::size_t records) {
    grouped_cautions g;
    if (records >= 2) {
        for (const auto& c: cautions) {
            if (c.record != 0 || std::find(g.shared.begin(), g.shared.end(), c.text) != g.shared.end()) continue;
            std::size_t holders = 0;
            for (std::size_t r = 0; r < records; ++r) {
                holders += std::any_of(cautions.begin(), cautions.end(), [&](const caution& k) { return k.record == r && k.text == c.text; });
            }
            if (holders == records) g.shared.push_back(c.text);
        }
    }
    for (const auto& c: cautions) {
        if (std::find(g.shared.begin(), g.shared.end(), c.text) == g.shared.end()) g.own.push_back(c);
    }
    return g;
}

std::string direct_table(const json& result, const grouped_cautions& cautions) {
    const json& records = result["records"];
    const bool with_null = std::any_of(records.begin(), records.end(), [](const json& r) { return r.value("null", json()).is_object(); });
    std::vector<std::string> names = {"unit", "bin ms", "trials", "rate Hz", "total b/s", "noise b/s", "info b/s",
                                      "info 95% interval", "bits/spike", "efficiency", "fit L"};
    if (with_null) {
        names.push_back("null b/s");
        names.push_back("p(null)");
    }
    std::ostringstream out;
    out << shared_cautions(cautions) << "<div class=\"table-wrap\"><table>\n" << header_row(names) << "<tbody>\n";
    for (std::size_t i = 0; i < records.size(); ++i) {
        const json& r = records[i];
        const bool cautioned = own_caution(i, cautions);
        const json& fit = r.value("fit_letters", json());
        const std::string fit_text = fit.is_array() && fit.size() == 2 ? fit[0].dump() + "-" + fit[1].dump() : "&ndash;";
        out << "<tr" << (cautioned ? " class=\"cautioned\"" : "") << "><td class=\"text\">" << html(r["unit"].get<std::string>())
            << "</td><td>" << format_number(number_or_nan(r, "bin_ms")) << "</td><td>" << number(r, "trials", 0) << "</td><td>"
            << number(r, "mean_rate_hz", 2) << "</td><td>" << number(r, "total_entropy_rate_bits_per_s", 2) << "</td><td>"
            << number(r, "noise_entropy_rate_bits_per_s", 2) << "</td><td class=\"main\">"
            << number(r, "info_rate_bits_per_s", 2) << flag(cautioned) << "</td><td>"
            << pair_text(r.value("info_rate_ci95_bits_per_s", json()), 2) << "</td><td class=\"main\">"
            << number(r, "bits_per_spike", 3) << "</td><td>" << number(r, "coding_efficiency", 3) << "</td><td>" << fit_text
            << "</td>";
        if (with_null) {
            const json& null = r.value("null", json());
            out << "<td>" << number(null, "mean_bits_per_s", 2) << "</td><td>" << number(null, "p_value", 3) << "</td>";
        }
        out << "</tr>\n" << caution_row(i, cautions, names.size());
    }
    out << "</tbody></table></div>\n";
    return out.str();
}

namespace {
std::string population_table(const json& records) {
    std::ostringstream rows;
    for (const auto& r: records) {
        const json& p = r.value("population", json());
        if (!p.is_object()) continue;
        const json& ci = p.value("ci95_bits", json());
        rows << "<tr><td class=\"text\">" << html(r["unit"].get<std::string>()) << "</td><td>" << html(window_of(r)) << "</td>";
        for (const char* v: {"joint", "sum_single", "synergy", "independent", "shuffle_corrected"}) {
            const std::string key = std::string(v) + "_bits";
            rows << "<td>" << number(p, key.c_str(), 4) << "<br><span class=\"interval\">"
                 << (ci.is_object() ? pair_text(ci.value(v, json()), 3) : "&ndash;") << "</span></td>";
        }
        rows << "</tr>\n";
    }
    if (rows.str().empty()) return "";
    return "<h4>Populations</h4><p class=\"note\">Synergy = joint &minus; sum of the units alone (negative: redundancy); "
           "95% intervals under each value.</p><div class=\"table-wrap\"><table>\n" +
           header_row({"units", "window", "joint bits", "sum of singles", "synergy", "independent", "shuffle-corrected"}) +
           "<tbody>\n" + rows.str() + "</tbody></table></div>\n";
}
}  // namespace

std::string stiminfo_table(const json& result, const grouped_cautions& cautions) {
    const json& records = result["records"];
    const std::vector<std::string> estimators = records.empty() ? std::vector<std::string>{} : estimator_names(records[0]);
    const std::string interval_estimator = records.empty() ? "" : records[0].value("info_ci95_estimator", "");
    // The caution flag sits beside the estimate the interval belongs to (or the first, if that is not shown).
    const std::string flagged = std::find(estimators.begin(), estimators.end(), interval_estimator) != estimators.end()
                                    ? interval_estimator
                                    : (estimators.empty() ? "" : estimators.front());
    std::vector<std::string> names = {"unit", "window", "trials", "conditions"};
    for (const auto& e: estimators) names.push_back(breakable(e));
    for (const char* n: {"null-subtracted", "95% interval", "p(shuffle)"}) names.push_back(breakable(n));
    names.push_back("bits/spike" + (interval_estimator.empty() ? std::string() : " (" + breakable(interval_estimator) + ")"));
    std::ostringstream out;
    out << shared_cautions(cautions)
        << "<p class=\"note\">Information in bits about which condition was shown, by each estimator (plug-in is biased "
           "upward); null-subtracted is plug-in minus its mean under shuffled labels"
        << (interval_estimator.empty() ? "" : "; the 95% interval and bits per spike are reported with " + html(interval_estimator))
        << ".</p>\n<div class=\"table-wrap\"><table>\n" << header_row(names) << "<tbody>\n";
    for (std::size_t i = 0; i < records.size(); ++i) {
        const json& r = records[i];
        const bool cautioned = own_caution(i, cautions);
        out << "<tr" << (cautioned ? " class=\"cautioned\"" : "") << "><td class=\"text\">" << html(r["unit"].get<std::string>())
            << "</td><td>" << html(window_of(r)) << "</td><td>" << number(r, "trials", 0) << "</td><td>" << number(r, "stimuli", 0)
            << "</td>";
        const json& info = r.value("info_bits", json::object());
        for (const auto& e: estimators) {
            out << "<td" << (e == flagged ? " class=\"main\"" : "") << ">" << number(info, e.c_str(), 4)
                << (e == flagged ? flag(cautioned) : "") << "</td>";
        }
        out << "<td>" << number(r, "info_null_subtracted_bits", 4) << "</td><td>" << pair_text(r.value("info_ci95_bits", json()), 3)
            << "</td><td>" << number(r.value("null", json()), "p_value", 3) << "</td><td>"
            << number(r.value("bits_per_spike", json::object()), interval_estimator.c_str(), 3) << "</td></tr>\n"
            << caution_row(i, cautions, names.size());
    }
    out << "</tbody></table></div>\n" << population_table(records);
    return out.str();
}

}  // namespace rastrum::report
