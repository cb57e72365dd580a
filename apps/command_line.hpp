#pragma once
// What every subcommand shares: parsing of option values, the usage-error convention, and
// writing outputs so that a failure leaves nothing half-written.
#include <rastrum/curves.hpp>
#include <rastrum/output_file.hpp>
#include <rastrum/provenance.hpp>
#include <rastrum/recording.hpp>
#include <rastrum/recording_source.hpp>

#include <boost/program_options.hpp>

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum::app {

namespace po = boost::program_options;

/// "A-B" or "A" -> (A, B). Throws usage_error naming `option` on anything else.
std::pair<int, int> parse_int_range(const std::string& text, const std::string& option);
/// "2,4,8" -> {2, 4, 8}; each a finite number. Throws usage_error naming `option`.
std::vector<double> parse_number_list(const std::string& text, const std::string& option);
/// "a,b,c" -> {"a", "b", "c"} (empty items rejected).
std::vector<std::string> parse_text_list(const std::string& text, const std::string& option);

/// A positional argument: its option name inside Boost, what help calls it, and what it is.
/// With `values` instead of `value` it takes every remaining positional argument (one or more), so
/// it must come last.
struct positional_argument {
    std::string name;       // e.g. "file"
    std::string shown_as;   // e.g. "FILE"
    std::string meaning;    // e.g. "the recording (HDF5, native layout)"
    std::string* value;
    std::vector<std::string>* values = nullptr;
};

/// Parses argv for one subcommand: named options, required positional arguments, --help. Returns
/// false when help was printed (the caller then returns 0). Option names must be spelled in full.
/// Boost's parse errors become usage_error. `epilogue` follows the exit codes in --help.
///
/// Two options are left out of --help because `rastrum batch` asks them of its analyses:
/// `--describe-options` prints `options` as JSON and returns false, and, for the kinds in
/// analysis_kinds(), `--check-options` makes analyse_and_write return before reading anything.
bool parse_command(int argc, char** argv, const std::string& command, const std::string& synopsis,
                   const po::options_description& options, const std::vector<positional_argument>& positional,
                   po::variables_map& vm, const std::string& epilogue = "");

/// A double option whose help shows its default as people write it (0.03, not 0.029999...).
po::typed_value<double>* number_value(double* target);

/// Whole numbers typed as text so that "-1" cannot wrap around into a huge unsigned value.
/// Throws usage_error naming `option` unless `text` is a whole number in [low, high].
std::uint64_t parse_whole_number(const std::string& text, const std::string& option, std::uint64_t low,
                                 std::uint64_t high);

/// The whole command line as typed, for provenance.
std::string joined_command_line(int argc, char** argv);
/// The same for a list of arguments.
std::string joined_command_line(const std::vector<std::string>& arguments);

/// The output `option` names when it was given (`vm` has it), resolved by resolve_output: how it
/// will be written, or usage_error for an empty path, a folder, a socket, a missing folder.
std::optional<output_target> output_option(const po::variables_map& vm, const std::string& option, const std::string& path);

/// A recording's name: NAME.h5 or NAME.hdf5.
bool has_hdf5_name(const std::string& path);

/// Recordings are data: a file that `target` would replace is refused (usage_error) unless
/// `overwrite`. A stream (a FIFO, a device) replaces nothing.
void refuse_to_replace(const output_target& target, bool overwrite);

/// How every command that reads a recording finds it: the format (detected from the content unless
/// --format says) and the objects that hold units, trials and labels in NWB, MAT and text inputs.
struct input_options {
    std::string format = "auto";
    recording_source source;  // everything but the path, which is the command's FILE
};

/// Declares --format, --stimulus-column, --intervals, --unit-column, --mat-spikes,
/// --mat-trial-start, --mat-trial-stop, --mat-stimulus, --mat-unit-ids and --trials-csv.
void add_input_options(po::options_description& options, input_options& input);

/// The recording FILE with those options. Throws usage_error for an unknown --format.
recording_source source_of(const std::string& file, const input_options& input);

/// What help says FILE is, for every command that reads a recording.
extern const char* const recording_file_meaning;

/// The options every analysis takes: which trials, where results go, and how it talks to people.
struct shared_options {
    std::string trials;
    std::string excluded_trials;
    std::string json;  // empty: not asked for
    std::string csv;
    std::string curves_csv;
    std::string h5;
    std::string progress = "auto";
    bool quiet = false;
    std::string max_memory;  // empty: the default bound (memory_bound.hpp)
};

/// Declares --trials, --exclude-trials, --json, --csv (`csv_rows` says what a row is), --curves-csv,
/// --h5, --progress, --quiet and --max-memory, stored in `shared`.
void add_shared_options(po::options_description& options, shared_options& shared, const std::string& csv_rows);

/// --max-memory in bytes for an analysis request (0: the default bound). Throws usage_error.
std::uint64_t max_memory_of(const shared_options& shared);

/// --trials and --exclude-trials as a selection (everything when neither is given).
trial_selection trials_of(const shared_options& shared);

/// Where an analysis writes: --json, --csv, --curves-csv, --h5 (files, streams or '-' for stdout),
/// and how it reports progress.
struct output_choice {
    std::optional<output_target> json;
    std::optional<output_target> csv;
    std::optional<output_target> curves_csv;
    std::optional<output_target> h5;
    bool quiet = false;
    std::string progress = "auto";
    bool check_only = false;  // --check-options: every option is checked, nothing is read or written
};

/// Checks the outputs of `shared` against the input files before any work is done.
output_choice choose_outputs(const shared_options& shared, const po::variables_map& vm,
                             const std::vector<std::string>& inputs);

/// What an analysis produces for its outputs.
struct rendered_results {
    std::string json;
    std::string csv;
    std::string table;
    std::string curves_csv;
    /// Writes the HDF5 results file at the path given (a temporary, renamed when all outputs are
    /// written), naming the output as the user did (the second argument) in errors.
    std::function<void(const std::string&, const std::string&)> write_h5;
    /// Where the result came from (tool, version, input, parameters, run) as one JSON object; CSV
    /// outputs start with it as a '#' comment line.
    std::string provenance_json;
};

/// Every output of an analysis from its result JSON (without curves), its curves (computed once, for
/// the JSON's `curves`, the curves CSV and the HDF5 results file), its records CSV and its table.
rendered_results render_results(nlohmann::ordered_json result, std::vector<curve_series> curves,
                                const std::string& analysis, std::string csv, std::string table);

/// How read_input reads the units' spike times.
enum class spikes_read { on_demand, whole };

/// Opens the recording (its units read on demand by `spikes(u)`, or all of them now), prints the
/// loader's warnings so far (unless quiet) and fills the input part of `origin`: path, sha256 of
/// every file read, and what was read from where.
recording read_input(const recording_source& source, bool quiet, provenance& origin,
                     spikes_read how = spikes_read::on_demand);

/// The part every analysis command shares: makes the outputs ready (an output that cannot be
/// written is an output_error before any work), opens the recording (loader warnings to stderr,
/// those of units read during the analysis after it), fills the provenance, lets `analyse` run and
/// render (it sets `finished_utc`), writes the outputs all together (finish_outputs), and prints
/// the table unless an output went to standard output.
int analyse_and_write(int argc, char** argv, const recording_source& source, unsigned threads, const output_choice& out,
                      const std::function<rendered_results(const recording&, provenance&)>& analyse);

/// Status and progress lines for people go to stderr, never stdout.
void note(bool quiet, const std::string& text);

}  // namespace rastrum::app
