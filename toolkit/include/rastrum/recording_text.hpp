#pragma once
/// Recordings as plain text (notes/recording-layout.md, "Plain text"): two CSV files with a header
/// line each.
///   spikes CSV  unit,time_s          one row per spike; a row with an empty time_s declares a unit
///                                    without spikes
///   trials CSV  start_s,stop_s[,stimulus]   one row per trial, in time order
#include <rastrum/recording.hpp>

#include <optional>
#include <string>

namespace rastrum {

/// Reads both files. Columns are found by their header names (in any order; other columns are
/// ignored); labels come from `stimulus_column`, or from a column named stimulus when there is one.
/// Throws input_error naming the file and "line N, column" for every malformed row, and for
/// anything that breaks `validate`; usage_error when `stimulus_column` is not a column.
recording read_recording_text(const std::string& spikes_csv, const std::string& trials_csv,
                              const std::optional<std::string>& stimulus_column = std::nullopt);

}  // namespace rastrum
