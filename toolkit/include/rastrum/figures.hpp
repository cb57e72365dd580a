#pragma once
/// The figures of a result (and of a recording): each an SVG document with the words the report
/// page shows beside it. What each figure shows is in notes/figures.md.
#include <rastrum/recording.hpp>
#include <rastrum/result_file.hpp>

#include <optional>
#include <string>
#include <vector>

namespace rastrum {

struct figure {
    std::string kind;       // what it shows, e.g. "rate-vs-bin-width" (part of the file name)
    std::string unit;       // the unit it concerns; empty for a summary across units
    std::string qualifier;  // e.g. "2ms" or "0-100ms" when a unit has several of this kind
    std::string title;
    std::string caption;    // how to read it
    std::string svg;
};

/// Which units to draw: every unit when `ids` is empty. Population ids ("u1+u2") count as units.
struct unit_choice {
    std::vector<std::string> ids;
    bool wants(const std::string& unit) const;
};

/// Information and entropy rates against bin width, entropy rates against 1/L with the line fit,
/// entropies against 1/N with the quadratic fit, and bits per spike across units.
std::vector<figure> direct_figures(const result_document& result, const unit_choice& units);

/// Information time courses against the shuffle null, information against the fraction of trials,
/// and information per unit for single windows.
std::vector<figure> stiminfo_figures(const result_document& result, const unit_choice& units);

struct raster_options {
    std::optional<double> psth_bin_ms;  // PSTH bin width; by default a 1-2-5 value near 1/60 of a trial
};

/// Raster and PSTH of each of `units` in the recording, trials aligned to their start and cut to
/// the shortest trial; trials grouped by stimulus label when there are at most seven labels.
std::vector<figure> raster_figures(const recording& rec, const std::vector<std::string>& units,
                                   const raster_options& options);

}  // namespace rastrum
