#pragma once
/// The native recording layout on HDF5 (notes/recording-layout.md):
///   /                             attributes layout = "spike-recording", layout_version = 1 (optional)
///   /units/<unit_id>/spike_times  float64 [n], seconds on the session clock
///   /trials/start_time            float64 [T], seconds
///   /trials/stop_time             float64 [T], seconds
///   /trials/stimulus              int64 [T] or variable-length UTF-8 strings [T]; optional
#include <rastrum/recording.hpp>

#include <string>
#include <utility>
#include <vector>

namespace rastrum {

/// Reads a recording in the native layout. Unsorted spike times are sorted and a warning recorded;
/// units with no spikes are kept and a warning recorded. Throws input_error (file, HDF5 path,
/// expected, found) for anything that does not follow the layout or breaks `validate`.
recording read_recording_hdf5(const std::string& path);

/// Writes `rec` in the native layout to `path` (string labels; integer-looking labels are still
/// written as strings), with each of `notes` as a text attribute of the root (where the recording
/// came from, for a converted file; the reader ignores them). The file appears complete or not at
/// all: it is written to a temporary name beside `path` and renamed. Throws input_error (naming
/// `rec.source`) for a unit id or label the layout cannot hold, error when the file cannot be written.
void write_recording_hdf5(const recording& rec, const std::string& path,
                          const std::vector<std::pair<std::string, std::string>>& notes = {});

}  // namespace rastrum
