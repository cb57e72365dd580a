#include <rastrum/errors.hpp>
#include <rastrum/figure_report.hpp>
#include <rastrum/output_folder.hpp>
#include <rastrum/recording_source.hpp>
#include <rastrum/report_page.hpp>
#include <rastrum/sha256.hpp>

#include <algorithm>
#include <filesystem>
#include <set>

namespace rastrum {

namespace {

/// Gives every figure a file name no other has: a readable base, then -2, -3 ... on a clash
/// (ids that differ only in characters a file name cannot hold).
class file_namer {
public:
    std::string name(const std::string& prefix, const figure& f) {
        std::string base = prefix.empty() ? "" : prefix + "-";
        base += f.kind;
        if (!f.unit.empty()) base += "-" + file_name_part(f.unit);
        if (!f.qualifier.empty()) base += "-" + file_name_part(f.qualifier);
        std::string candidate = base + ".svg";
        for (int k = 2; used_.count(candidate); ++k) candidate = base + "-" + std::to_string(k) + ".svg";
        used_.insert(candidate);
        return candidate;
    }
    std::string prefix_for(const std::string& path) {
        const std::string stem = file_name_part(std::filesystem::path(path).stem().string());
        std::string candidate = stem;
        for (int k = 2; prefixes_.count(candidate); ++k) candidate = stem + "-" + std::to_string(k);
        prefixes_.insert(candidate);
        return candidate;
    }

private:
    std::set<std::string> used_{"index.html"};
    std::set<std::string> prefixes_{"raster"};
};

std::vector<std::string> units_of(const result_document& r) {
    std::vector<std::string> units;
    for (const auto& rec: r.content["records"]) units.push_back(rec["unit"].get<std::string>());
    return units;
}

void check_units(const unit_choice& units, const std::vector<result_document>& results) {
    std::vector<std::string> known;
    for (const auto& r: results) {
        for (const auto& u: units_of(r)) {
            if (std::find(known.begin(), known.end(), u) == known.end()) known.push_back(u);
        }
    }
    for (const auto& id: units.ids) {
        if (std::find(known.begin(), known.end(), id) != known.end()) continue;
        std::string list;
        for (const auto& k: known) list += (list.empty() ? "" : ", ") + k;
        throw usage_error("--unit " + id + ": no result holds this unit; they hold " + (list.empty() ? "no units" : list));
    }
}

}  // namespace

figure_report make_figure_report(const figure_report_request& request) {
    std::vector<result_document> results;
    for (const auto& path: request.results) results.push_back(read_result_file(path));
    check_units(request.units, results);
    figure_report out;
    file_namer namer;
    report_contents contents;
    std::vector<std::pair<std::string, std::string>> svgs;
    for (const auto& r: results) {
        report_result section;
        section.result = &r;
        const std::string prefix = namer.prefix_for(r.path);
        const auto drawn = r.analysis == "direct" ? direct_figures(r, request.units) : stiminfo_figures(r, request.units);
        for (const auto& f: drawn) {
            section.figures.push_back({f, namer.name(prefix, f)});
            svgs.emplace_back(section.figures.back().file, f.svg);
        }
        contents.results.push_back(section);
    }
    if (request.recording) {
        // Any format found from the content alone (native, NWB); MAT and text need input options figures lacks.
        const recording rec = read_recording(recording_source{*request.recording, {}, {}, {}, {}, {}});
        contents.recording_path = *request.recording;
        const std::string sha = file_sha256(*request.recording);
        // Rasters are drawn for the units of the results computed from this recording; results of
        // other recordings (a report may gather several) get none. Only when no result matches is
        // the recording drawn anyway, with a notice, since then it may not be what the user meant.
        std::vector<const result_document*> from_recording;
        for (const auto& r: results) {
            const auto& input = r.content.value("input", nlohmann::ordered_json::object());
            if (input.value("sha256", std::string()) == sha) from_recording.push_back(&r);
        }
        if (from_recording.empty()) {
            for (const auto& r: results) {
                from_recording.push_back(&r);
                contents.notices.push_back("The recording " + *request.recording + " is not the file " + r.path +
                                           " was computed from (its SHA-256 differs): rasters may not match the numbers.");
            }
        }
        std::vector<std::string> units;
        for (const result_document* document: from_recording) {
            const result_document& r = *document;
            for (const auto& u: units_of(r)) {
                if (!request.units.wants(u) || std::find(units.begin(), units.end(), u) != units.end()) continue;
                const bool present = std::any_of(rec.units.begin(), rec.units.end(), [&](const unit_spikes& s) { return s.id == u; });
                // Populations ("u1+u2") have no spikes of their own.
                const bool population = std::any_of(r.content["records"].begin(), r.content["records"].end(), [&](const auto& rec_json) {
                    return rec_json["unit"] == u && rec_json.contains("units") && rec_json["units"].size() > 1;
                });
                if (present) {
                    units.push_back(u);
                } else if (!population) {
                    contents.notices.push_back("Unit " + u + " is not in the recording " + *request.recording + ": no raster.");
                }
            }
        }
        for (const auto& f: raster_figures(rec, units, request.raster)) {
            contents.recording_figures.push_back({f, namer.name("", f)});
            svgs.emplace_back(contents.recording_figures.back().file, f.svg);
        }
    }
    out.notices = contents.notices;
    out.figures = svgs.size();
    out.files.emplace_back("index.html", report_html(contents));
    out.files.insert(out.files.end(), svgs.begin(), svgs.end());
    return out;
}

}  // namespace rastrum
