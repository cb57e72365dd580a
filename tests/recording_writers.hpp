#pragma once
// The project's own writers of the foreign formats, for tests: NWB 2.x and MATLAB 7.3 MAT-files
// through the HDF5 C++ API, following the storage facts of the NWB format specification and of
// MATLAB's files (notes/recording-layout.md cites them), and the two CSV files of the text format.
// Independent of the loaders: nothing here includes rastrum's readers. tests/reference/write_nwb_mat.py
// writes the same formats a second way, with h5py.
#include <rastrum/recording.hpp>

#include <string>

namespace rastrum::testing {

struct nwb_writing {
    bool float32_times = false;
    int index_bits = 64;               // width of spike_times_index: 8, 16, 32 or 64 (unsigned)
    bool unit_name_column = true;      // a unit_name column with the ids; else the ids must be integers, written to id
    std::string intervals = "trials";  // the TimeIntervals table under /intervals
    std::string label_column = "stimulus";
    bool integer_labels = false;       // labels written as int64 (they must be integers)
    bool fixed_length_labels = false;  // fixed-length strings instead of variable-length
    bool ascii_labels = false;         // character set ASCII instead of UTF-8
};

/// An NWB 2.7.0 file holding `rec` in /units and /intervals/<intervals>.
void write_nwb(const recording& rec, const std::string& path, const nwb_writing& how = {});

struct mat_writing {
    bool row_vectors = true;       // 1xN (HDF5 [N,1]) rather than Nx1 (HDF5 [1,N])
    bool single_times = false;     // single instead of double
    bool numeric_labels = false;   // labels as a double vector (they must be numbers) instead of a cellstr
    bool unit_id_variable = false; // also a cellstr of unit ids, "ids"
};

/// A MATLAB 7.3 MAT-file with variables spikes (cell), trial_start, trial_stop and, when `rec` has
/// labels, stimulus.
void write_mat(const recording& rec, const std::string& path, const mat_writing& how = {});

/// spikes CSV (unit,time_s; a unit without spikes as one row with an empty time) and trials CSV
/// (start_s,stop_s[,stimulus]), times in the shortest form that reads back exactly.
void write_text(const recording& rec, const std::string& spikes_csv, const std::string& trials_csv);

}  // namespace rastrum::testing
