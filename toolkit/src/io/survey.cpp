#include <rastrum/survey.hpp>

#include <algorithm>
#include <cstdio>
#include <sstream>

namespace rastrum {

recording_overview survey(const recording& rec) {
    recording_overview o;
    o.trials = rec.trial_count();
    std::vector<std::size_t> all(o.trials);
    for (std::size_t k = 0; k < o.trials; ++k) {
        all[k] = k;
        const seconds d = rec.trial_stop[k] - rec.trial_start[k];
        o.shortest_trial = k == 0 ? d : std::min(o.shortest_trial, d);
        o.longest_trial = std::max(o.longest_trial, d);
        o.total_trial_time += d;
    }
    for (std::size_t u = 0; u < rec.units.size(); ++u) {
        const shared_spikes times = rec.spikes(u);  // one unit at a time, whatever the recording's size
        unit_overview uo;
        uo.id = rec.units[u].id;
        uo.spikes = times->size();
        uo.spikes_outside_trials = spikes_outside_trials(*times, rec);
        uo.spikes_in_trials = uo.spikes - uo.spikes_outside_trials;
        uo.rate_in_trials_hz = o.total_trial_time > 0 ? static_cast<double>(uo.spikes_in_trials) / o.total_trial_time : 0;
        o.units.push_back(uo);
    }
    o.labels = stimulus_labels(rec);
    o.warnings = rec.all_warnings();
    o.origin = rec.origin;
    o.source = rec.source;
    return o;
}

nlohmann::ordered_json survey_json(const recording_overview& o) {
    nlohmann::ordered_json j;
    j["trials"] = {{"count", o.trials},
                   {"shortest_s", o.shortest_trial},
                   {"longest_s", o.longest_trial},
                   {"total_s", o.total_trial_time}};
    nlohmann::ordered_json labels = nlohmann::ordered_json::object();
    for (const auto& [label, n]: o.labels) labels[label] = n;
    j["stimulus_labels"] = labels;
    j["units"] = nlohmann::ordered_json::array();
    for (const auto& u: o.units) {
        j["units"].push_back({{"unit", u.id},
                              {"spikes", u.spikes},
                              {"spikes_in_trials", u.spikes_in_trials},
                              {"spikes_outside_trials", u.spikes_outside_trials},
                              {"rate_in_trials_hz", u.rate_in_trials_hz}});
    }
    j["warnings"] = o.warnings;
    return j;
}

std::string survey_text(const recording_overview& o, const std::string& path) {
    std::ostringstream s;
    char line[256];
    s << path << (o.origin.format_detail.empty() ? "" : ": " + o.origin.format_detail) << "\n";
    if (!o.origin.format.empty()) {
        auto where = [&](const place& p) { return p.file.empty() || p.file == o.source ? p.object : p.file + ": " + p.object; };
        s << "read: units from " << where(o.origin.units) << "; trials from " << where(o.origin.trials) << "; labels "
          << (o.labels.empty() ? "none" : "from " + where(o.origin.labels)) << "\n";
    }
    if (o.shortest_trial == o.longest_trial) {
        std::snprintf(line, sizeof line, "trials: %zu, all %.4g s long (%.4g s in all)\n", o.trials, o.shortest_trial,
                      o.total_trial_time);
    } else {
        std::snprintf(line, sizeof line, "trials: %zu, %.4g to %.4g s long (%.4g s in all)\n", o.trials, o.shortest_trial,
                      o.longest_trial, o.total_trial_time);
    }
    s << line;
    if (o.labels.empty()) {
        s << "stimulus labels: none\n";
    } else {
        s << "stimulus labels:";
        for (const auto& [label, n]: o.labels) s << "  " << label << " (" << n << " trials)";
        s << "\n";
    }
    std::snprintf(line, sizeof line, "\n%-16s %10s %10s %10s %12s\n", "unit", "spikes", "in trials", "outside",
                  "rate (Hz)");
    s << line;
    for (const auto& u: o.units) {
        std::snprintf(line, sizeof line, "%-16s %10zu %10zu %10zu %12.3f\n", u.id.c_str(), u.spikes, u.spikes_in_trials,
                      u.spikes_outside_trials, u.rate_in_trials_hz);
        s << line;
    }
    for (const auto& w: o.warnings) s << "warning: " << w << "\n";
    return s.str();
}

nlohmann::ordered_json contents_json(const source_contents& c) {
    nlohmann::ordered_json j;
    j["format"] = format_name(c.format);
    j["detail"] = c.detail;
    j["groups"] = nlohmann::ordered_json::array();
    for (const auto& g: c.groups) {
        nlohmann::ordered_json items = nlohmann::ordered_json::array();
        for (const auto& [name, what]: g.items) items.push_back({{"name", name}, {"what", what}});
        j["groups"].push_back({{"name", g.name}, {"kind", g.kind}, {"items", items}});
    }
    return j;
}

std::string contents_text(const source_contents& c) {
    std::ostringstream s;
    if (c.groups.empty()) return s.str();
    switch (c.format) {
    case recording_format::nwb: s << "\nin the file (choose with --intervals, --stimulus-column, --unit-column):\n"; break;
    case recording_format::mat:
        s << "\nin the file (name them with --mat-spikes, --mat-trial-start, --mat-trial-stop, --mat-stimulus, "
             "--mat-unit-ids):\n";
        break;
    default: s << "\ncolumns (--stimulus-column picks the label column of the trials):\n"; break;
    }
    for (const auto& g: c.groups) {
        s << "  " << g.name << (g.kind.empty() ? "" : " (" + g.kind + ")") << "\n";
        for (const auto& [name, what]: g.items) {
            char line[512];
            std::snprintf(line, sizeof line, "      %-24s %s\n", name.c_str(), what.c_str());
            s << line;
        }
    }
    return s.str();
}

}  // namespace rastrum
