// Raster and PSTH of units in a recording.
#include "figure_parts.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/figures.hpp>
#include <rastrum/format.hpp>
#include <rastrum/plot_scale.hpp>

#include <algorithm>
#include <cmath>

namespace rastrum {

namespace {

constexpr std::size_t most_groups = 7;  // one palette style each

struct trial_group {
    std::string label;  // empty: all trials, unlabelled
    std::vector<std::size_t> trials;
};

std::vector<trial_group> groups_of(const recording& rec) {
    const auto labels = stimulus_labels(rec);
    if (labels.empty() || labels.size() > most_groups) {
        trial_group all;
        for (std::size_t k = 0; k < rec.trial_count(); ++k) all.trials.push_back(k);
        if (!labels.empty()) {
            // Too many labels for a style each: one group, but trials of a label kept together.
            std::stable_sort(all.trials.begin(), all.trials.end(), [&](std::size_t a, std::size_t b) {
                const auto rank = [&](std::size_t k) {
                    return std::find_if(labels.begin(), labels.end(), [&](const auto& l) { return l.first == rec.stimulus[k]; }) -
                           labels.begin();
                };
                return rank(a) < rank(b);
            });
        }
        return {all};
    }
    std::vector<trial_group> groups;
    for (const auto& [label, count]: labels) {
        trial_group g;
        g.label = label;
        for (std::size_t k = 0; k < rec.trial_count(); ++k) {
            if (rec.stimulus[k] == label) g.trials.push_back(k);
        }
        groups.push_back(g);
    }
    return groups;
}

std::string group_label(const trial_group& g) {
    const std::string trials = std::to_string(g.trials.size()) + (g.trials.size() == 1 ? " trial" : " trials");
    return g.label.empty() ? "all " + trials : "stimulus " + g.label + " (" + trials + ")";
}

}  // namespace

std::vector<figure> raster_figures(const recording& rec, const std::vector<std::string>& units, const raster_options& options) {
    std::vector<figure> out;
    if (rec.trial_count() == 0) return out;
    seconds duration = rec.trial_stop[0] - rec.trial_start[0];
    for (std::size_t k = 0; k < rec.trial_count(); ++k) duration = std::min(duration, rec.trial_stop[k] - rec.trial_start[k]);
    const double bin_s = options.psth_bin_ms ? *options.psth_bin_ms / 1000 : svg::nice_value(duration / 60);
    if (!(bin_s > 0) || bin_s > duration) {
        throw usage_error("--psth-ms: the PSTH bin must be positive and at most the shortest trial (" +
                          format_number(duration * 1000) + " ms), got " + format_number(bin_s * 1000) + " ms");
    }
    const auto bins = std::max<std::size_t>(1, static_cast<std::size_t>(std::floor(duration / bin_s + 1e-9)));
    // Milliseconds for short trials, where seconds would need many decimals.
    const bool in_ms = duration < 2;
    const double scale = in_ms ? 1000 : 1;
    const std::string time_label = std::string("time from trial start (") + (in_ms ? "ms" : "s") + ")";
    const auto groups = groups_of(rec);
    for (const auto& id: units) {
        const unit_spikes& unit = rec.unit(id);
        svg::panel raster_panel, psth_panel;
        raster_panel.title = "Raster";
        raster_panel.y_label = "trial";
        raster_panel.x_label = time_label;
        raster_panel.y_downward = true;
        raster_panel.y_whole_numbers = true;
        raster_panel.x_domain = std::make_pair(0.0, duration * scale);
        raster_panel.y_domain = std::make_pair(0.5, static_cast<double>(rec.trial_count()) + 0.5);
        raster_panel.height = std::clamp(1.5 * static_cast<double>(rec.trial_count()), 160.0, 320.0);
        psth_panel.title = "PSTH, " + format_number(bin_s * 1000) + " ms bins";
        psth_panel.y_label = "firing rate (spikes/s)";
        psth_panel.x_label = time_label;
        psth_panel.x_domain = raster_panel.x_domain;
        psth_panel.y_from_zero = true;
        psth_panel.height = 200;
        std::size_t row = 0;
        for (std::size_t g = 0; g < groups.size(); ++g) {
            const auto aligned = align_to_trials(unit.spike_times, rec, groups[g].trials);
            svg::raster r;
            r.label = groups.size() > 1 ? group_label(groups[g]) : "";
            r.colour = svg::palette_style(g).colour;
            std::vector<double> counts(bins, 0);
            for (const auto& spikes: aligned) {
                ++row;
                for (seconds t: spikes) {
                    if (t >= duration) break;
                    r.x.push_back(t * scale);
                    r.row.push_back(static_cast<double>(row));
                    const auto b = static_cast<std::size_t>(t / bin_s);
                    if (b < bins) counts[b] += 1;
                }
            }
            raster_panel.rasters.push_back(r);
            svg::series psth;
            psth.label = groups.size() > 1 ? group_label(groups[g]) : group_label(groups[g]) + ", mean";
            psth.look = svg::palette_style(g);
            psth.look.line_width = 1.5;
            psth.steps = true;
            for (std::size_t b = 0; b <= bins; ++b) psth.x.push_back(static_cast<double>(b) * bin_s * scale);
            for (double c: counts) psth.y.push_back(c / (static_cast<double>(groups[g].trials.size()) * bin_s));
            psth_panel.lines.push_back(psth);
        }
        svg::chart chart;
        chart.title = id + ": raster and PSTH";
        chart.panels = {raster_panel, psth_panel};
        out.push_back(figure_parts::drawn_figure(
            chart, "raster", id, "",
            "Spikes of " + id + " in each trial, aligned to the trial's start and cut to the shortest trial (" +
                format_number(duration) + " s)" + (groups.size() > 1 ? ", trials grouped by stimulus label" : "") +
                "; below, the firing rate in " + format_number(bin_s * 1000) +
                " ms bins (spike count over trials times bin width)."));
    }
    return out;
}

}  // namespace rastrum
