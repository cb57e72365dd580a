#pragma once
/// Curves leave the tool three ways, all from the same `curve_series`: a JSON array (the `curves` key
/// of every result), tidy CSV (one row per point) and an HDF5 results file (one group per analysis
/// and unit, datasets carrying their quantity, unit and description as attributes).
#include <rastrum/curves.hpp>

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace rastrum {

nlohmann::ordered_json curves_json(const std::vector<curve_series>& curves);

/// Columns: analysis, curve, unit, stimulus, bin_ms, letters, window_start_ms, window_stop_ms, series,
/// x_quantity, x_unit, x, y_quantity, y_unit, y, y_ci95_low, y_ci95_high, in_fit, fit_value.
std::string curves_csv(const std::vector<curve_series>& curves, const std::string& analysis);

/// Writes `result` (the whole JSON result, kept as the root attribute `result_json`) and every curve
/// to a new HDF5 file at `path` (the caller makes it atomic). Layout in notes/recording-layout.md.
/// Throws output_error naming `shown_as` (the output as the user named it; `path` when empty).
void write_results_hdf5(const std::string& path, const nlohmann::ordered_json& result,
                        const std::vector<curve_series>& curves, const std::string& shown_as = "");

}  // namespace rastrum
