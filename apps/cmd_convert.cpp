#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/provenance.hpp>
#include <rastrum/recording_hdf5.hpp>
#include <rastrum/version.hpp>

#include <iostream>

namespace rastrum::app {

namespace {

std::size_t spike_count(const recording& rec) {
    std::size_t n = 0;
    for (const auto& u: rec.units) n += u.spike_times.size();
    return n;
}

// What the native reader gives back must be what was read from the input, to the bit: the check
// that makes "lossless" a fact of every run rather than a claim.
void require_same(const recording& read, const recording& written, const std::string& out) {
    bool same = read.units.size() == written.units.size() && read.trial_start == written.trial_start &&
                read.trial_stop == written.trial_stop && read.stimulus == written.stimulus;
    for (std::size_t u = 0; same && u < read.units.size(); ++u) {
        same = read.units[u].id == written.units[u].id && read.units[u].spike_times == written.units[u].spike_times;
    }
    if (!same) throw internal_error("convert: " + out + " does not read back as the recording that was written");
}

}  // namespace

int run_convert(int argc, char** argv) {
    std::string file, out;
    bool overwrite = false, quiet = false;
    input_options input;
    po::options_description options("Options");
    options.add_options()
        ("out", po::value(&out)->required(), "the recording to write in the native layout (NAME.h5 or NAME.hdf5)")
        ("overwrite", po::bool_switch(&overwrite), "replace OUT if it exists")
        ("quiet,q", po::bool_switch(&quiet), "no status lines");
    add_input_options(options, input);
    po::variables_map vm;
    if (!parse_command(argc, argv, "convert", "FILE [input options] --out OUT.h5 [--overwrite]", options,
                       {{"file", "FILE", recording_file_meaning, &file}}, vm)) {
        return 0;
    }
    const recording_source source = source_of(file, input);
    const output_target target = resolve_output(out, "--out");
    if (!has_hdf5_name(out)) throw usage_error("--out " + out + ": name the native recording NAME.h5 (or NAME.hdf5)");
    check_output_targets({target}, source_files(source));
    refuse_to_replace(target, overwrite);
    // Made ready before the recording is read: an OUT that cannot be written is known at once.
    output_file written(target, output_file::content::by_path);

    provenance origin;
    const recording rec = read_input(source, quiet, origin, spikes_read::whole);
    const std::vector<std::pair<std::string, std::string>> notes = {
        {"converted_from", file},
        {"converted_from_sha256", origin.input_sha256},
        {"converted_from_format", rec.origin.format},
        {"converted_by", std::string("rastrum ") + version() + ": " + joined_command_line(argc + 1, argv - 1)},
        {"converted_utc", utc_now()}};
    // Written and read back under a temporary name, put in place only once it has proved equal.
    write_recording_hdf5(rec, written, notes);
    require_same(rec, read_recording_hdf5(written.path_to_write()), out);
    finish_outputs({{&written, nullptr}});
    note(quiet, "wrote " + out + ": " + std::to_string(rec.units.size()) + " units, " + std::to_string(spike_count(rec)) +
                    " spikes, " + std::to_string(rec.trial_count()) + " trials" +
                    (rec.has_stimulus() ? " with labels" : "") + ", read back identical");
    return 0;
}

}  // namespace rastrum::app
