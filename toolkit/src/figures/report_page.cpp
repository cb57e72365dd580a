#include "report_tables.hpp"

#include <rastrum/report_page.hpp>
#include <rastrum/version.hpp>

#include <algorithm>
#include <sstream>

namespace rastrum {

using namespace report;
using json = nlohmann::ordered_json;

namespace {

// Inline and system fonts only: the page must open anywhere without a network.
constexpr const char* style_sheet = R"(
body { margin: 0; background: #ffffff; color: #1d1d1d;
       font: 15px/1.45 system-ui, -apple-system, "Segoe UI", "DejaVu Sans", "Liberation Sans", sans-serif; }
main { max-width: 1240px; margin: 0 auto; padding: 1.25rem 1.5rem 3rem; }
h1 { font-size: 1.6rem; margin: 0.5rem 0 0.25rem; }
h2 { font-size: 1.3rem; margin: 2.25rem 0 0.5rem; border-bottom: 2px solid #0072B2; padding-bottom: 0.2rem; }
h3 { font-size: 1.1rem; margin: 1.75rem 0 0.5rem; }
h4 { font-size: 1rem; margin: 1.25rem 0 0.25rem; }
.meta, .note { color: #4a4a4a; font-size: 0.9rem; }
.meta code { font-size: 0.85rem; word-break: break-all; }
.table-wrap { overflow-x: auto; margin: 0.5rem 0 1rem; }
table { border-collapse: collapse; font-size: 0.86rem; font-variant-numeric: tabular-nums; }
th, td { padding: 0.25rem 0.45rem; border-bottom: 1px solid #dddddd; text-align: right; vertical-align: top; white-space: nowrap; }
th { background: #f3f3f3; font-weight: 600; white-space: normal; vertical-align: bottom; }
td.text { text-align: left; }
td.main { font-weight: 600; }
.interval { color: #555555; font-size: 0.8rem; }
tr.cautioned td { background: #fff8ec; }
tr.caution td { background: #fff8ec; text-align: left; white-space: normal; color: #4d3300;
                border-left: 4px solid #D55E00; padding-bottom: 0.45rem; }
tr.caution ul, .shared-cautions ul, .cautions ul { margin: 0.2rem 0 0; padding-left: 1.3rem; }
.flag { color: #D55E00; font-weight: 700; }
.cautions { border: 2px solid #D55E00; background: #fff4ec; border-radius: 6px; padding: 0.6rem 1rem 0.75rem; margin: 1rem 0; }
.cautions h2 { border: none; margin: 0 0 0.25rem; color: #8a2f00; font-size: 1.15rem; }
.shared-cautions { border-left: 4px solid #D55E00; background: #fff8ec; padding: 0.4rem 0.75rem; margin: 0.5rem 0; }
.notices { border: 2px solid #0072B2; background: #eef6fc; border-radius: 6px; padding: 0.5rem 1rem; }
.unit-cautions { color: #8a2f00; margin: 0.25rem 0 0.5rem; }
nav.contents { font-size: 0.9rem; margin: 0.75rem 0; }
nav.contents ul { margin: 0.2rem 0 0; padding-left: 1.3rem; }
a { color: #0060a0; }
figure { margin: 1rem 0 1.75rem; }
figure img { display: block; width: 100%; max-width: 760px; height: auto; border: 1px solid #e6e6e6; }
figcaption { max-width: 760px; font-size: 0.9rem; color: #333333; margin-top: 0.35rem; }
figcaption strong { color: #1d1d1d; }
)";

std::string analysis_title(const std::string& analysis) {
    return analysis == "direct" ? "Direct method: information about a repeated stimulus"
                                : "Stimulus information: bits about which condition was shown";
}

std::string figure_html(const placed_figure& f) {
    return "<figure><img src=\"" + html(f.file) + "\" alt=\"" + html(f.drawing.title) + "\"><figcaption><strong>" +
           html(f.drawing.title) + ".</strong> " + html(f.drawing.caption) + "</figcaption></figure>\n";
}

/// Every parameter as key = value, compactly: what a methods section needs to restate the run.
std::string parameters_text(const json& result) {
    const json& parameters = result.value("parameters", json::object());
    if (!parameters.is_object() || parameters.empty()) return "not recorded";
    std::string text;
    for (const auto& [key, value]: parameters.items()) {
        text += (text.empty() ? "" : "; ") + html(key) + " = " + html(value.is_string() ? value.get<std::string>() : value.dump());
    }
    return text;
}

std::string provenance_html(const result_document& r) {
    const json& c = r.content;
    const json& input = c.value("input", json::object());
    const json& run = c.value("run", json::object());
    std::ostringstream out;
    out << "<p class=\"meta\">Result <code>" << html(r.path) << "</code> from recording <code>"
        << html(input.value("path", std::string("?"))) << "</code> (SHA-256 <code>" << html(input.value("sha256", std::string("?")))
        << "</code>), rastrum " << html(c.value("version", std::string("?"))) << ", started "
        << html(run.value("started_utc", std::string("?"))) << ".<br>Command: <code>"
        << html(run.value("command_line", std::string("?"))) << "</code><br>Parameters: " << parameters_text(c)
        << "</p>\n";
    if (r.curves_from_records) {
        out << "<p class=\"note\">This result holds no curves (it was written by an older rastrum): the figures show "
               "what its records hold, without the entropies against 1/N.</p>\n";
    }
    return out.str();
}

/// Units in the order their figures come.
std::vector<std::string> figure_units(const report_result& r) {
    std::vector<std::string> units;
    for (const auto& f: r.figures) {
        if (!f.drawing.unit.empty() && std::find(units.begin(), units.end(), f.drawing.unit) == units.end()) {
            units.push_back(f.drawing.unit);
        }
    }
    return units;
}

/// Anchors by position, so that no id ever depends on what a unit id contains.
std::string result_anchor(std::size_t result) { return "result-" + std::to_string(result + 1); }
std::string unit_anchor(std::size_t result, std::size_t unit) {
    return result_anchor(result) + "-unit-" + std::to_string(unit + 1);
}

/// Under a unit's heading: how many of its records carry cautions, so the figures are read with them.
std::string unit_caution_note(const report_result& r, const std::string& unit) {
    std::size_t records = 0, cautioned = 0;
    for (const auto& rec: r.result->content["records"]) {
        if (rec["unit"] != unit) continue;
        ++records;
        const json& w = rec.value("warnings", json::array());
        cautioned += w.is_array() && !w.empty();
    }
    if (cautioned == 0) return "";
    return "<p class=\"unit-cautions\"><span class=\"flag\" aria-hidden=\"true\">&#9888;</span> " + std::to_string(cautioned) +
           " of " + std::to_string(records) + " records of " + html(unit) +
           " carry cautions; they are listed under their rows in the table above.</p>\n";
}

/// The figures of one result: its summaries first, then one heading per unit.
std::string figures_html(const report_result& r, std::size_t index) {
    std::ostringstream out;
    for (const auto& f: r.figures) {
        if (f.drawing.unit.empty()) out << figure_html(f);
    }
    const auto units = figure_units(r);
    for (std::size_t u = 0; u < units.size(); ++u) {
        out << "<h3 id=\"" << unit_anchor(index, u) << "\">Unit " << html(units[u]) << "</h3>\n" << unit_caution_note(r, units[u]);
        for (const auto& f: r.figures) {
            if (f.drawing.unit == units[u]) out << figure_html(f);
        }
    }
    return out.str();
}

/// Links to every result and unit: the page is long when there are many units.
std::string contents_html(const report_contents& contents) {
    std::ostringstream out;
    out << "<nav class=\"contents\"><strong>Contents</strong><ul>\n<li><a href=\"#cautions\">Statistical cautions</a></li>\n";
    for (std::size_t i = 0; i < contents.results.size(); ++i) {
        const report_result& r = contents.results[i];
        out << "<li><a href=\"#" << result_anchor(i) << "\">" << html(r.result->path) << "</a>";
        const auto units = figure_units(r);
        for (std::size_t u = 0; u < units.size(); ++u) {
            out << (u == 0 ? ": " : ", ") << "<a href=\"#" << unit_anchor(i, u) << "\">" << html(units[u]) << "</a>";
        }
        out << "</li>\n";
    }
    if (!contents.recording_figures.empty()) out << "<li><a href=\"#recording\">Spikes in the recording</a></li>\n";
    out << "</ul></nav>\n";
    return out.str();
}

std::string caution_box(const std::vector<std::pair<const report_result*, grouped_cautions>>& all) {
    std::size_t records = 0, cautioned = 0, count = 0;
    std::ostringstream list;
    for (const auto& [r, g]: all) {
        const json& rs = r->result->content["records"];
        records += rs.size();
        for (std::size_t i = 0; i < rs.size(); ++i) {
            const json& w = rs[i].value("warnings", json::array());
            cautioned += w.is_array() && !w.empty();
        }
        if (g.shared.empty() && g.own.empty()) continue;
        list << "<li><strong>" << html(r->result->path) << "</strong><ul>\n";
        for (const auto& s: g.shared) {
            list << "<li><strong>every record:</strong> " << html(s) << "</li>\n";
            ++count;
        }
        for (const auto& c: g.own) {
            list << "<li><strong>" << html(c.where) << ":</strong> " << html(c.text) << "</li>\n";
            ++count;
        }
        list << "</ul></li>\n";
    }
    std::ostringstream out;
    out << "<section class=\"cautions\" id=\"cautions\"><h2><span class=\"flag\" aria-hidden=\"true\">&#9888;</span> "
           "Statistical cautions</h2>\n";
    if (count == 0) {
        out << "<p>No record carries a caution.</p>";
    } else {
        out << "<p>" << cautioned << " of " << records
            << " records carry cautions: the data may not support the number as it stands. Each caution is repeated under "
               "the row it concerns.</p>\n<ul>\n"
            << list.str() << "</ul>";
    }
    out << "</section>\n";
    return out.str();
}

}  // namespace

std::string report_html(const report_contents& contents) {
    std::vector<std::pair<const report_result*, grouped_cautions>> cautions;
    for (const auto& r: contents.results) {
        cautions.emplace_back(&r, group_cautions(cautions_of(r.result->content), r.result->content["records"].size()));
    }
    std::ostringstream out;
    out << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
           "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
           "<title>rastrum report</title>\n<style>"
        << style_sheet << "</style>\n</head>\n<body>\n<main>\n<h1>Information in spike trains</h1>\n"
        << "<p class=\"meta\">Report made by rastrum " << html(version()) << " from " << contents.results.size()
        << (contents.results.size() == 1 ? " result" : " results") << ". Figures are SVG files beside this page.</p>\n";
    if (!contents.notices.empty()) {
        out << "<div class=\"notices\"><strong>About the inputs</strong><ul>\n";
        for (const auto& n: contents.notices) out << "<li>" << html(n) << "</li>\n";
        out << "</ul></div>\n";
    }
    out << contents_html(contents) << caution_box(cautions);
    for (std::size_t i = 0; i < contents.results.size(); ++i) {
        const report_result& r = contents.results[i];
        out << "<section id=\"" << result_anchor(i) << "\">\n<h2>" << html(analysis_title(r.result->analysis)) << "</h2>\n"
            << provenance_html(*r.result);
        out << (r.result->analysis == "direct" ? direct_table(r.result->content, cautions[i].second)
                                               : stiminfo_table(r.result->content, cautions[i].second));
        out << figures_html(r, i) << "</section>\n";
    }
    if (!contents.recording_figures.empty()) {
        out << "<section id=\"recording\">\n<h2>Spikes in the recording</h2>\n<p class=\"meta\">Recording <code>" << html(contents.recording_path)
            << "</code>.</p>\n";
        for (const auto& f: contents.recording_figures) out << figure_html(f);
        out << "</section>\n";
    }
    out << "</main>\n</body>\n</html>\n";
    return out.str();
}

}  // namespace rastrum
