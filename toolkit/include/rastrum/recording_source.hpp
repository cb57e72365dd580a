#pragma once
/// One entry point for reading a recording in any supported format. A `recording_source` says
/// which file and, where the format needs it, which of its objects hold units, trials and labels;
/// `read_recording` finds the format from the file's content (or takes the one given), reads it
/// with that format's loader and returns the same `recording` model, validated, whatever the format.
#include <rastrum/recording.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

enum class recording_format { native, nwb, mat, text };

/// "native", "nwb", "mat", "text".
std::string format_name(recording_format format);
/// The inverse of format_name; std::nullopt for any other text.
std::optional<recording_format> format_named(const std::string& name);

/// NWB 2.x: which tables and columns (notes/recording-layout.md, "NWB 2.x").
struct nwb_choice {
    std::optional<std::string> intervals;    // table under /intervals holding the trials ("trials")
    std::optional<std::string> unit_column;  // column of /units giving unit ids ("unit_name" when present, else id)
};

/// MATLAB v7.3 MAT-files: the variables, named by the user.
struct mat_choice {
    std::optional<std::string> spikes;       // cell array of spike-time vectors, one cell per unit
    std::optional<std::string> trial_start;  // numeric vector [s]
    std::optional<std::string> trial_stop;   // numeric vector [s]
    std::optional<std::string> stimulus;     // numeric vector or cell array of char vectors; optional
    std::optional<std::string> unit_ids;     // numeric vector or cell array of char vectors; optional
};

struct recording_source {
    std::string path;                            // the recording; for text, the spikes CSV (unit,time_s)
    std::optional<recording_format> format;      // found from the content when not given
    std::optional<std::string> stimulus_column;  // label column of the trials table (NWB) or CSV (text);
                                                 // "stimulus" when the table has one
    nwb_choice nwb;
    mat_choice mat;
    std::optional<std::string> trials_csv;       // text: the trials, start_s,stop_s[,stimulus]
};

/// Reads the recording `source` describes. Throws usage_error when an option does not apply to the
/// file's format or a needed one is missing (naming what the file offers), input_error (file,
/// object, expected, found) for anything unreadable or invalid.
recording read_recording(const recording_source& source);

/// The same recording opened for reading unit by unit (notes/recording-layout.md, "Reading unit by
/// unit"): ids, spike counts, trials and labels read and checked now, every unit's spike times when
/// `spikes(u)` asks, with the same checks and messages (an input_error then). Native, NWB and MAT
/// files are read so (`on_demand()`); a text recording is read whole. read_recording is this
/// followed by read_all_units.
recording open_recording(const recording_source& source);

/// A table, or the variables, of a file, with what each column or variable is.
struct offered_group {
    std::string name;                                        // "/intervals/trials", "variables", a CSV path
    std::string kind;                                        // "TimeIntervals", "MAT-file", "CSV"
    std::vector<std::pair<std::string, std::string>> items;  // ("stimulus", "variable-length string [40]")
};

/// What a file offers to read, shown by survey so that people can choose the input options.
struct source_contents {
    recording_format format = recording_format::native;
    std::string detail;                  // "NWB 2.7.0", "MATLAB 7.3 MAT-file, Platform: GLNXA64", ...
    std::vector<offered_group> groups;   // NWB: /units and the tables of /intervals; MAT: its variables;
                                         // text: the columns of both files; native: none
};

/// Looks at the file(s) without reading the recording. Throws input_error as read_recording does.
source_contents describe_source(const recording_source& source);

/// Every file the recording is read from: the path, and the trials CSV of a text recording.
std::vector<std::string> source_files(const recording_source& source);

}  // namespace rastrum
