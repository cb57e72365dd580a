#pragma once
/// Recordings in NWB 2.x files (notes/recording-layout.md, "NWB 2.x"), read through HDF5 alone:
///   /units                       Units table: id, spike_times + spike_times_index (a VectorIndex of
///                                exclusive end offsets), optionally a column of unit names
///   /intervals/<table>           TimeIntervals table: start_time, stop_time, a label column
#include <rastrum/recording.hpp>
#include <rastrum/recording_source.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

/// Reads the units of /units and the trials of /intervals/<choice.intervals or "trials">, with labels
/// from `stimulus_column` (or a column named stimulus when the table has one). Unit ids come from
/// `choice.unit_column`, else a unit_name column when present, else id. Throws input_error naming the
/// NWB dataset (with [index]) for anything unreadable or invalid, and usage_error for a table or
/// column that does not exist, listing those that do.
recording read_recording_nwb(const std::string& path, const nwb_choice& choice = {},
                             const std::optional<std::string>& stimulus_column = std::nullopt);

/// The same, opened for reading unit by unit: everything but the spike times read and checked
/// (spike_times' type and size against spike_times_index included); unit u's times are read as a
/// hyperslab of /units/spike_times when `rec.spikes(u)` asks, with the same checks and messages.
recording open_recording_nwb(const std::string& path, const nwb_choice& choice = {},
                             const std::optional<std::string>& stimulus_column = std::nullopt);

/// A table of an NWB file and its columns, for survey: which tables and columns --intervals,
/// --stimulus-column and --unit-column can name.
struct nwb_table {
    std::string path;                                          // "/intervals/trials"
    std::string type;                                          // its neurodata_type ("TimeIntervals")
    std::vector<std::pair<std::string, std::string>> columns;  // name, "64-bit float [40]"
};

/// /units and every table in /intervals.
std::vector<nwb_table> nwb_tables(const std::string& path);

}  // namespace rastrum
