#pragma once
// Every file output of every command, as the output tests run them: the command line with the
// output at a given path, and what a whole output of it looks like. Design checks (the output
// policy of notes/robustness.md, "Output paths"), not numbers.
#include <functional>
#include <string>
#include <vector>

namespace rastrum::testing {

struct output_slot {
    std::string name;       // "stiminfo --csv"
    std::string option;     // how messages name it: "--csv"
    std::string file_name;  // a name for it in a test folder (NAME.h5 where the command needs one)
    enum class content { json, csv, hdf5 } what;
    /// The arguments of rastrum with the output at `out`.
    std::function<std::string(const std::string& out)> command;
    bool may_be_standard_output = true;  // '-' and /dev/stdout: not for NAME.h5 recordings
    bool path_is_named = true;           // false: derived from another (synth's answers file)
};

/// survey --json; direct and stiminfo --json, --csv, --curves-csv, --h5; synth --out and its
/// answers file; convert --out. `input` replaces the recording the analyses read (to test an
/// output that is refused before the input is read); empty: the usual small recordings.
std::vector<output_slot> file_output_slots(const std::string& input = "");

/// A whole output of this slot: parsed JSON, a CSV starting with its provenance line, an HDF5 file.
bool looks_whole(const output_slot& slot, const std::string& bytes);

/// The small recordings the slots read (made once, readable by every user).
const std::string& conditions_recording();
const std::string& frozen_recording();

/// A batch plan in `folder` running stiminfo on a copy of conditions_recording() (c.h5), its results
/// in `output`. Returns the plan's path.
std::string stiminfo_plan(const std::string& folder, const std::string& output);

/// Single-quoted for sh.
std::string shell_quoted(const std::string& text);

}  // namespace rastrum::testing
