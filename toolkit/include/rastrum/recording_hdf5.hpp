#pragma once
/// The native recording layout on HDF5 (notes/recording-layout.md):
///   /                             attributes layout = "spike-recording", layout_version = 1 (optional)
///   /units/<unit_id>/spike_times  float64 [n], seconds on the session clock
///   /trials/start_time            float64 [T], seconds
///   /trials/stop_time             float64 [T], seconds
///   /trials/stimulus              int64 [T] or variable-length UTF-8 strings [T]; optional
#include <rastrum/output_file.hpp>
#include <rastrum/recording.hpp>

#include <memory>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

/// Reads a recording in the native layout. Unsorted spike times are sorted and a warning recorded;
/// units with no spikes are kept and a warning recorded. Throws input_error (file, HDF5 path,
/// expected, found) for anything that does not follow the layout or breaks `validate`.
recording read_recording_hdf5(const std::string& path);

/// Opens a recording in the native layout for reading unit by unit: ids, trials and labels read and
/// checked, each unit's group and spike_times dataset checked (type, shape, size); spike times read
/// when `rec.spikes(u)` asks, with the checks and messages of read_recording_hdf5. The file stays
/// open as long as the recording (or a copy) does.
recording open_recording_hdf5(const std::string& path);

/// Writes `rec` in the native layout to `path` (string labels; integer-looking labels are still
/// written as strings), with each of `notes` as a text attribute of the root (where the recording
/// came from, for a converted file; the reader ignores them). The file appears complete or not at
/// all: it is written to a temporary name beside `path` and renamed. Throws input_error (naming
/// `rec.source`) for a unit id or label the layout cannot hold, output_error when the file cannot be
/// written.
void write_recording_hdf5(const recording& rec, const std::string& path,
                          const std::vector<std::pair<std::string, std::string>>& notes = {});

/// The same into `out` (made with output_file::content::by_path), which the caller finishes with
/// finish_outputs, after reading it back for example, or lets go to leave its target unchanged.
void write_recording_hdf5(const recording& rec, output_file& out,
                          const std::vector<std::pair<std::string, std::string>>& notes = {});

/// The same writer one unit at a time, for recordings that are not held whole (write_recording_hdf5
/// is this over every unit): units in order, then the trials and labels, into `out` (content::by_path),
/// which the caller finishes after finish().
class recording_hdf5_writer {
public:
    explicit recording_hdf5_writer(output_file& out, const std::vector<std::pair<std::string, std::string>>& notes = {});
    ~recording_hdf5_writer();
    recording_hdf5_writer(const recording_hdf5_writer&) = delete;
    recording_hdf5_writer& operator=(const recording_hdf5_writer&) = delete;

    /// Writes /units/<id>/spike_times. Throws input_error naming `source` for an id the layout
    /// cannot hold or times that are not finite and ascending.
    void add_unit(const std::string& id, const std::vector<seconds>& spike_times, const std::string& source);
    /// Writes the trials and labels of `rec`, checked by validate() (ids included; its spike times
    /// are not written again and may be empty), and closes the file. Throws output_error naming
    /// `out` when libhdf5 cannot write (a full file system, say).
    void finish(const recording& rec);

private:
    struct state;
    template <class F>
    void guarded(F&& f);
    std::unique_ptr<state> state_;
};

}  // namespace rastrum
