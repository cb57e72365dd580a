#pragma once
/// Results as curves: one series of (x, y) points, with an optional 95% band and fitted polynomial,
/// labelled by what it belongs to. The same model feeds the JSON `curves` array, the tidy curves CSV,
/// the HDF5 results file and the figures, so all four always agree.
#include <rastrum/direct_analysis.hpp>
#include <rastrum/stiminfo_analysis.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

struct curve_axis {
    std::string quantity;  // "bin width"
    std::string unit;      // "ms"; empty for pure numbers
    std::vector<double> values;
};

/// y = c0 + c1 x + c2 x^2 + ..., fitted over x_range; c0 is the value extrapolated to x = 0.
struct curve_fit {
    std::vector<double> coefficients;
    std::pair<double, double> x_range{0, 0};
};

struct curve_series {
    std::string curve;  // info_rate_vs_bin_width, entropy_rate_vs_inverse_letters, entropy_vs_inverse_trials,
                        // info_vs_time, info_vs_trial_fraction
    std::string unit;   // "u1", or "u1+u2" for a population
    std::optional<std::string> stimulus;
    std::optional<double> bin_ms;
    std::optional<int> letters;
    std::optional<std::pair<double, double>> window_ms;
    std::string series;  // information, total, noise, an estimator's name, or null
    curve_axis x;
    curve_axis y;
    std::vector<double> y_low;   // the 95% band; empty when there is none
    std::vector<double> y_high;
    std::vector<bool> in_fit;    // empty when every point (or none) is fitted
    std::optional<curve_fit> fit;
};

/// Per unit: information, total and noise entropy rates against bin width; per unit and bin width:
/// entropy rates against 1/L with the fitted lines; per unit, bin width and word length: entropies
/// against 1/N with the fitted quadratics.
std::vector<curve_series> direct_curves(const std::vector<direct_record>& records);

/// Per unit (when there are several windows): each estimator, and the label-shuffle null band,
/// against the window centre; per unit and window: each estimator against the fraction of trials.
std::vector<curve_series> stiminfo_curves(const std::vector<stiminfo_record>& records, const stiminfo_request& request);

}  // namespace rastrum
