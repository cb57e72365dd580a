#include <rastrum/errors.hpp>
#include <rastrum/format_detection.hpp>
#include <rastrum/recording_hdf5.hpp>
#include <rastrum/recording_mat.hpp>
#include <rastrum/recording_nwb.hpp>
#include <rastrum/recording_source.hpp>
#include <rastrum/recording_text.hpp>

#include <algorithm>

namespace rastrum {

namespace {

constexpr std::pair<recording_format, const char*> names[] = {
    {recording_format::native, "native"}, {recording_format::nwb, "nwb"}, {recording_format::mat, "mat"},
    {recording_format::text, "text"}};

// An input option, and the formats it applies to.
struct input_option {
    const char* name;
    bool given;
    std::vector<recording_format> formats;
};

std::vector<input_option> options_of(const recording_source& s) {
    using f = recording_format;
    return {{"--stimulus-column", s.stimulus_column.has_value(), {f::nwb, f::text}},
            {"--intervals", s.nwb.intervals.has_value(), {f::nwb}},
            {"--unit-column", s.nwb.unit_column.has_value(), {f::nwb}},
            {"--mat-spikes", s.mat.spikes.has_value(), {f::mat}},
            {"--mat-trial-start", s.mat.trial_start.has_value(), {f::mat}},
            {"--mat-trial-stop", s.mat.trial_stop.has_value(), {f::mat}},
            {"--mat-stimulus", s.mat.stimulus.has_value(), {f::mat}},
            {"--mat-unit-ids", s.mat.unit_ids.has_value(), {f::mat}},
            {"--trials-csv", s.trials_csv.has_value(), {f::text}}};
}

std::string format_phrase(recording_format f) {
    switch (f) {
    case recording_format::native: return "native-layout HDF5 files";
    case recording_format::nwb: return "NWB files";
    case recording_format::mat: return "MAT-files";
    case recording_format::text: return "spikes CSV files";
    }
    return "";
}

// Options meant for another format are refused rather than ignored: a --mat-spikes given for an
// NWB file is a mistake the user wants to hear about.
void check_options(const recording_source& s, recording_format format, const std::string& detail) {
    for (const auto& o: options_of(s)) {
        if (!o.given || std::find(o.formats.begin(), o.formats.end(), format) != o.formats.end()) continue;
        std::string applies;
        for (std::size_t i = 0; i < o.formats.size(); ++i) {
            applies += (i == 0 ? "" : " and ") + format_phrase(o.formats[i]);
        }
        throw usage_error(std::string(o.name) + " applies to " + applies + "; " + s.path + " is " +
                          (s.format ? "read as --format " + format_name(format) : detail));
    }
    if (format == recording_format::text && !s.trials_csv) {
        throw usage_error(s.path + " is a spikes CSV (unit,time_s): name its trials with --trials-csv PATH "
                          "(a CSV with the header start_s,stop_s and optionally a label column)");
    }
}

}  // namespace

std::string format_name(recording_format format) {
    for (const auto& [f, name]: names) {
        if (f == format) return name;
    }
    throw internal_error("format_name: unknown format");
}

std::optional<recording_format> format_named(const std::string& name) {
    for (const auto& [f, n]: names) {
        if (name == n) return f;
    }
    return std::nullopt;
}

recording open_recording(const recording_source& source) {
    const detected_format found = source_format(source);
    check_options(source, found.format, found.detail);
    switch (found.format) {
    case recording_format::native: return open_recording_hdf5(source.path);
    case recording_format::nwb: return open_recording_nwb(source.path, source.nwb, source.stimulus_column);
    case recording_format::mat: return open_recording_mat(source.path, source.mat);
    // Text must be parsed whole to find any unit's rows, so it is read whole (notes/recording-layout.md).
    case recording_format::text: return read_recording_text(source.path, *source.trials_csv, source.stimulus_column);
    }
    throw internal_error("open_recording: unknown format");
}

recording read_recording(const recording_source& source) {
    recording rec = open_recording(source);
    read_all_units(rec);
    return rec;
}

std::vector<std::string> source_files(const recording_source& source) {
    std::vector<std::string> files{source.path};
    if (source.trials_csv) files.push_back(*source.trials_csv);
    return files;
}

}  // namespace rastrum
