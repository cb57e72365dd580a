#pragma once
/// Recordings in MATLAB v7.3 MAT-files (HDF5 behind a 512-byte user block; notes/recording-layout.md,
/// "MATLAB 7.3 MAT-files"). The user names the variables:
///   spikes        cell array, one cell per unit, each a double (or single) vector of spike times [s]
///   trial_start   double vector [s];  trial_stop  double vector [s]
///   stimulus      numeric vector or cell array of char vectors, one per trial (optional)
///   unit_ids      numeric vector or cell array of char vectors, one per cell of spikes (optional;
///                 else u1, u2, ... in the order of the cells)
/// Row and column vectors are both accepted (MATLAB stores arrays column-major).
#include <rastrum/recording.hpp>
#include <rastrum/recording_source.hpp>

#include <string>
#include <vector>

namespace rastrum {

/// Reads the variables `choice` names. Throws usage_error when spikes, trial_start or trial_stop is
/// not named or not in the file (listing the variables the file holds), input_error naming the
/// variable as MATLAB writes it ("spikes{3}(18)", "trial_start(4)") for anything unreadable or
/// invalid, including MATLAB classes that cannot be read (string, table, struct, ...), with what to
/// save instead.
recording read_recording_mat(const std::string& path, const mat_choice& choice);

/// The same, opened for reading unit by unit: every variable and each cell's array checked (class,
/// shape, size) at opening; a cell's times read when `rec.spikes(u)` asks, with the same checks and
/// messages.
recording open_recording_mat(const std::string& path, const mat_choice& choice);

/// "spikes (cell 1x3), ts (double 40x1), ...": the variables of a MAT-file, for survey and messages.
std::vector<std::pair<std::string, std::string>> mat_variables(const std::string& path);

}  // namespace rastrum
