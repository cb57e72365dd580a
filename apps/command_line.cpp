#include "command_line.hpp"
#include "progress_display.hpp"

#include <rastrum/batch_plan.hpp>
#include <rastrum/curves_output.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/parallel.hpp>
#include <rastrum/recording_hdf5.hpp>
#include <rastrum/recording_source.hpp>
#include <rastrum/sha256.hpp>
#include <rastrum/version.hpp>
#include <rastrum/format.hpp>
#include <rastrum/memory_bound.hpp>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <iostream>

namespace rastrum::app {

namespace {
int parse_int(const std::string& text, const std::string& option) {
    std::size_t used = 0;
    int value = 0;
    try {
        value = std::stoi(text, &used);
    } catch (const std::exception&) {
        used = 0;
    }
    if (used == 0 || used != text.size()) throw usage_error(option + ": '" + text + "' is not a whole number");
    return value;
}
}  // namespace

std::pair<int, int> parse_int_range(const std::string& text, const std::string& option) {
    const auto dash = text.find('-', 1);
    if (dash == std::string::npos) {
        const int v = parse_int(text, option);
        return {v, v};
    }
    return {parse_int(text.substr(0, dash), option), parse_int(text.substr(dash + 1), option)};
}

std::vector<std::string> parse_text_list(const std::string& text, const std::string& option) {
    std::vector<std::string> items;
    std::size_t start = 0;
    while (true) {
        const auto comma = text.find(',', start);
        std::string item = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
        if (item.empty()) throw usage_error(option + ": empty item in '" + text + "'");
        items.push_back(item);
        if (comma == std::string::npos) break;
        start = comma + 1;
    }
    return items;
}

std::vector<double> parse_number_list(const std::string& text, const std::string& option) {
    std::vector<double> values;
    for (const auto& item: parse_text_list(text, option)) {
        std::size_t used = 0;
        double v = 0;
        try {
            v = std::stod(item, &used);
        } catch (const std::exception&) {
            used = 0;
        }
        if (used == 0 || used != item.size() || !std::isfinite(v)) {
            throw usage_error(option + ": '" + item + "' is not a number");
        }
        values.push_back(v);
    }
    return values;
}

namespace {
// What `rastrum batch` needs to know of a command's options to turn plan keys into them.
void describe_options(const std::string& command, const po::options_description& options) {
    nlohmann::ordered_json list = nlohmann::ordered_json::array();
    for (const auto& o: options.options()) {
        list.push_back({{"name", o->long_name()},
                        {"takes_value", o->semantic()->max_tokens() > 0},
                        {"repeatable", o->semantic()->is_composing()}});
    }
    std::cout << nlohmann::ordered_json{{"command", command}, {"options", list}}.dump(2) << "\n";
}
}  // namespace

bool parse_command(int argc, char** argv, const std::string& command, const std::string& synopsis,
                   const po::options_description& options, const std::vector<positional_argument>& positional,
                   po::variables_map& vm, const std::string& epilogue) {
    po::options_description help_option;
    help_option.add_options()("help,h", "show this help and exit");
    po::options_description hidden;
    hidden.add_options()("describe-options", "");
    if (find_analysis_kind(command)) hidden.add_options()("check-options", "");
    po::positional_options_description order;
    for (const auto& p: positional) {
        if (p.values) {
            hidden.add_options()(p.name.c_str(), po::value(p.values)->multitoken());
            order.add(p.name.c_str(), -1);
        } else {
            hidden.add_options()(p.name.c_str(), po::value(p.value));
            order.add(p.name.c_str(), 1);
        }
    }
    po::options_description all;
    all.add(options).add(help_option).add(hidden);
    // No abbreviations: "--bin-m" must not quietly mean "--bin-ms".
    const int style = po::command_line_style::default_style & ~po::command_line_style::allow_guessing;
    try {
        po::store(po::command_line_parser(argc, argv).options(all).positional(order).style(style).run(), vm);
    } catch (const po::error& e) {
        throw usage_error(e.what());
    }
    if (vm.count("describe-options")) {
        describe_options(command, options);
        return false;
    }
    if (vm.count("help")) {
        po::options_description shown;
        shown.add(options).add(help_option);
        std::cout << "Usage: rastrum " << command << " " << synopsis << "\n\n";
        for (const auto& p: positional) std::cout << "  " << p.shown_as << "  " << p.meaning << "\n";
        std::cout << "\n" << shown << "\n"
                  << "Exit codes: 0 success, 1 unexpected failure, 2 usage error, 3 unreadable or invalid input,\n"
                     "4 the data cannot support the analysis, 6 an output cannot be written (the message names it\n"
                     "and why); 128 + N stopped by signal N (SIGINT, SIGTERM, SIGHUP), its unfinished outputs removed.\n"
                     "Output files are written whole or not at all (a temporary beside each, renamed; a symlink's\n"
                     "target is replaced); '-', /dev/stdout, a FIFO or a device such as /dev/null is written directly.\n"
                  << epilogue;
        return false;
    }
    for (const auto& p: positional) {
        if (!vm.count(p.name)) throw usage_error("missing " + p.shown_as + " (" + p.meaning + ")");
    }
    try {
        po::notify(vm);
    } catch (const po::error& e) {
        throw usage_error(e.what());
    }
    return true;
}

po::typed_value<double>* number_value(double* target) {
    return po::value(target)->default_value(*target, format_number(*target));
}

std::uint64_t parse_whole_number(const std::string& text, const std::string& option, std::uint64_t low,
                                 std::uint64_t high) {
    const bool digits = !text.empty() && text.find_first_not_of("0123456789") == std::string::npos;
    std::uint64_t value = 0;
    bool fits = digits && text.size() <= 20;
    if (fits) {
        try {
            value = std::stoull(text);
        } catch (const std::exception&) {
            fits = false;
        }
    }
    if (!fits || value < low || value > high) {
        throw usage_error(option + ": expected a whole number from " + std::to_string(low) + " to " +
                          std::to_string(high) + ", got '" + text + "'");
    }
    return value;
}

std::string joined_command_line(int argc, char** argv) { return joined_command_line(std::vector<std::string>(argv, argv + argc)); }

std::string joined_command_line(const std::vector<std::string>& arguments) {
    std::string line;
    for (std::size_t i = 0; i < arguments.size(); ++i) {
        if (i) line += ' ';
        const std::string& a = arguments[i];
        line += a.find_first_of(" \t'\"") != std::string::npos ? "'" + a + "'" : a;
    }
    return line;
}

std::optional<output_target> output_option(const po::variables_map& vm, const std::string& option, const std::string& path) {
    if (!vm.count(option.substr(2))) return std::nullopt;
    return resolve_output(path, option);
}

bool has_hdf5_name(const std::string& path) {
    const std::string extension = std::filesystem::path(path).extension().string();
    return extension == ".h5" || extension == ".hdf5";
}

void refuse_to_replace(const output_target& target, bool overwrite) {
    std::error_code ec;
    if (!overwrite && target.method == output_method::replace && std::filesystem::exists(target.final_path, ec)) {
        throw usage_error(target.path + " exists; choose another name or add --overwrite");
    }
}

void add_shared_options(po::options_description& options, shared_options& shared, const std::string& csv_rows) {
    options.add_options()
        ("trials", po::value(&shared.trials),
         "only these trials: indices from 0 (as in /trials) and ranges, e.g. 0-49,60; every trial when absent")
        ("exclude-trials", po::value(&shared.excluded_trials), "leave out these trials (same form as --trials)")
        ("json", po::value(&shared.json), "write results as JSON to this file ('-' for stdout instead of the table)")
        ("csv", po::value(&shared.csv), ("write tidy CSV to this file: " + csv_rows).c_str())
        ("curves-csv", po::value(&shared.curves_csv),
         "write the curves (the JSON's 'curves') as tidy CSV to this file: one row per point")
        ("h5", po::value(&shared.h5),
         "write an HDF5 results file: the whole result and every curve, one group per analysis and unit")
        ("progress", po::value(&shared.progress)->default_value(shared.progress),
         "progress on stderr: auto (a bar on a terminal, nothing otherwise), bar, plain (a line every few seconds) or none")
        ("quiet,q", po::bool_switch(&shared.quiet), "no table, no progress and no status lines")
        ("max-memory", po::value(&shared.max_memory)->value_name("SIZE"),
         ("the most memory the analysis may use, e.g. 8G or 512M (K, M, G, T: powers of 1024): what it would "
          "need is estimated before any work, and a request beyond it is refused (exit 4); default: half of " +
          [] {
              const available_memory a = memory_available();
              return format_bytes(static_cast<double>(a.bytes)) + " (" + a.limited_by + " here)";
          }()).c_str());
}

std::uint64_t max_memory_of(const shared_options& shared) {
    return shared.max_memory.empty() ? 0 : parse_memory_size(shared.max_memory, "--max-memory");
}

const char* const recording_file_meaning =
    "the recording: HDF5 in the native layout, NWB 2.x, a MATLAB 7.3 MAT-file, or a spikes CSV (unit,time_s) with "
    "--trials-csv; the format is found from the content";

void add_input_options(po::options_description& options, input_options& input) {
    recording_source& s = input.source;
    auto text = [](std::optional<std::string>& target) {
        return po::value<std::string>()->notifier([&target](const std::string& v) { target = v; });
    };
    po::options_description group("Input options (which format, and where units, trials and labels are)");
    group.add_options()
        ("format", po::value(&input.format)->default_value(input.format),
         "auto (from the file's content), native, nwb, mat or text")
        ("stimulus-column", text(s.stimulus_column)->value_name("NAME"),
         "NWB and text: the column of the trials table (or trials CSV) holding each trial's label; by default a "
         "column named stimulus when there is one ('rastrum survey' lists the columns)")
        ("intervals", text(s.nwb.intervals)->value_name("NAME"),
         "NWB: the table in /intervals holding the trials (default trials)")
        ("unit-column", text(s.nwb.unit_column)->value_name("NAME"),
         "NWB: the column of /units giving unit ids (default unit_name when present, else id)")
        ("mat-spikes", text(s.mat.spikes)->value_name("VAR"),
         "MAT-file: the cell array of spike-time vectors in seconds, one cell per unit")
        ("mat-trial-start", text(s.mat.trial_start)->value_name("VAR"), "MAT-file: the vector of trial start times (s)")
        ("mat-trial-stop", text(s.mat.trial_stop)->value_name("VAR"), "MAT-file: the vector of trial stop times (s)")
        ("mat-stimulus", text(s.mat.stimulus)->value_name("VAR"),
         "MAT-file: one label per trial, a numeric vector or a cell array of char vectors")
        ("mat-unit-ids", text(s.mat.unit_ids)->value_name("VAR"),
         "MAT-file: one id per cell of --mat-spikes (numbers or char vectors); default u1, u2, ...")
        ("trials-csv", text(s.trials_csv)->value_name("PATH"),
         "text: the trials CSV (header start_s,stop_s and optionally a label column) beside FILE, the spikes CSV "
         "(header unit,time_s)");
    options.add(group);
}

recording_source source_of(const std::string& file, const input_options& input) {
    recording_source source = input.source;
    source.path = file;
    if (input.format != "auto") {
        source.format = format_named(input.format);
        if (!source.format) throw usage_error("--format " + input.format + ": choose auto, native, nwb, mat or text");
    }
    return source;
}

trial_selection trials_of(const shared_options& shared) {
    trial_selection s;
    if (!shared.trials.empty()) s.only = parse_trial_list(shared.trials, "--trials");
    if (!shared.excluded_trials.empty()) s.excluded = parse_trial_list(shared.excluded_trials, "--exclude-trials");
    return s;
}

output_choice choose_outputs(const shared_options& shared, const po::variables_map& vm,
                             const std::vector<std::string>& inputs) {
    output_choice out;
    out.quiet = shared.quiet;
    out.check_only = vm.count("check-options") > 0;
    out.json = output_option(vm, "--json", shared.json);
    out.csv = output_option(vm, "--csv", shared.csv);
    out.curves_csv = output_option(vm, "--curves-csv", shared.curves_csv);
    out.h5 = output_option(vm, "--h5", shared.h5);
    out.progress = shared.progress;
    parse_progress_style(out.progress);
    std::vector<output_target> targets;
    for (const auto* t: {&out.json, &out.csv, &out.curves_csv, &out.h5}) {
        if (*t) targets.push_back(**t);
    }
    check_output_targets(targets, inputs);
    return out;
}

rendered_results render_results(nlohmann::ordered_json result, std::vector<curve_series> curves,
                                const std::string& analysis, std::string csv, std::string table) {
    rendered_results out;
    nlohmann::ordered_json head;  // the provenance: every key but the records
    for (const auto& [key, value]: result.items()) {
        if (key != "records") head[key] = value;
    }
    out.provenance_json = head.dump();
    out.csv = std::move(csv);
    out.table = std::move(table);
    out.curves_csv = curves_csv(curves, analysis);
    nlohmann::ordered_json whole = result;
    whole["curves"] = curves_json(curves);
    out.json = whole.dump(2) + "\n";
    // The HDF5 file keeps the result without its curves, which get datasets of their own.
    out.write_h5 = [result = std::move(result), curves = std::move(curves)](const std::string& path, const std::string& shown) {
        write_results_hdf5(path, result, curves, shown);
    };
    return out;
}

recording read_input(const recording_source& source, bool quiet, provenance& origin, spikes_read how) {
    origin.input_path = source.path;
    recording rec = open_recording(source);
    if (how == spikes_read::whole) read_all_units(rec);
    origin.input_sha256 = file_sha256(source.path);
    origin.input_read = origin_json(rec);
    const std::vector<std::string> files = source_files(source);
    for (std::size_t i = 1; i < files.size(); ++i) origin.other_inputs.emplace_back(files[i], file_sha256(files[i]));
    for (const auto& w: rec.warnings) note(quiet, "warning: " + w);
    return rec;
}

int analyse_and_write(int argc, char** argv, const recording_source& source, unsigned threads, const output_choice& out,
                      const std::function<rendered_results(const recording&, provenance&)>& analyse) {
    if (out.check_only) return 0;
    // Made ready before any work: an output that cannot be written is known now, not after the analysis.
    std::optional<output_file> json, csv, curves_csv, h5;
    if (out.json) json.emplace(*out.json);
    if (out.csv) csv.emplace(*out.csv);
    if (out.curves_csv) curves_csv.emplace(*out.curves_csv);
    if (out.h5) h5.emplace(*out.h5, output_file::content::by_path);

    provenance origin;
    // argv[0] is the subcommand's name; the program's own name sits just before it.
    origin.command_line = joined_command_line(argc + 1, argv - 1);
    origin.started_utc = utc_now();
    origin.threads = effective_threads(threads);
    const recording rec = read_input(source, out.quiet, origin);
    const rendered_results results = [&] {
        try {
            return analyse(rec, origin);
        } catch (const insufficient_data&) {
            // A damaged unit the analysis did not reach is still the first thing to report (exit 3).
            check_unread_units(rec);
            throw;
        }
    }();
    // What the loader noticed about the units read during the analysis (sorted times, no spikes).
    if (rec.store) {
        for (const auto& w: rec.store->warnings()) note(out.quiet, "warning: " + w);
    }
    // One comment line of provenance, so a CSV file alone still says what made it (pandas reads
    // past it with comment='#', R with comment.char = '#').
    const std::string origin_line = "# " + results.provenance_json + "\n";
    const std::string csv_text = origin_line + results.csv, curves_text = origin_line + results.curves_csv;
    std::vector<std::pair<output_file*, const std::string*>> parts;
    if (json) parts.emplace_back(&*json, &results.json);
    if (csv) parts.emplace_back(&*csv, &csv_text);
    if (curves_csv) parts.emplace_back(&*curves_csv, &curves_text);
    if (h5) {
        results.write_h5(h5->path_to_write(), h5->target().path);
        parts.emplace_back(&*h5, nullptr);
    }
    // Every output, or (on any error) none of the files changed.
    finish_outputs(parts);
    const bool table_elsewhere =
        std::any_of(parts.begin(), parts.end(), [](const auto& p) { return p.first->target().is_standard_output(); });
    if (!out.quiet && !table_elsewhere) {
        std::cout << results.table << "\nMade by rastrum " << version() << ": " << origin.command_line << "\n(input sha256 "
                  << origin.input_sha256 << ", " << origin.threads << (origin.threads == 1 ? " thread" : " threads")
                  << ", " << origin.started_utc << " to " << origin.finished_utc << ")\n";
    }
    for (const auto& p: parts) {
        if (p.first->target().path != "-") note(out.quiet, "wrote " + p.first->target().path);
    }
    return 0;
}

void note(bool quiet, const std::string& text) {
    if (!quiet) std::cerr << text << "\n";
}

}  // namespace rastrum::app
