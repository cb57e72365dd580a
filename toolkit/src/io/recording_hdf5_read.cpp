#include "hdf5_read_helpers.hpp"
#include "loader_steps.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/recording_hdf5.hpp>

#include <algorithm>

namespace rastrum {

namespace {

constexpr const char* layout_name = "spike-recording";
constexpr std::int64_t layout_version = 1;

void check_layout_attributes(hdf5::source& src) {
    if (src.has_attribute("/", "layout")) {
        const std::string value = src.read_string_attribute("/", "layout");
        if (value != layout_name) {
            throw input_error(src.path(), hdf5::attribute_path("/", "layout"),
                              std::string("layout \"") + layout_name + "\" (or no layout attribute)",
                              "\"" + value + "\"");
        }
    }
    if (src.has_attribute("/", "layout_version")) {
        const std::int64_t value = src.read_int64_attribute("/", "layout_version");
        if (value != layout_version) {
            throw input_error(src.path(), hdf5::attribute_path("/", "layout_version"),
                              "layout_version " + std::to_string(layout_version) +
                                  ", the only version this rastrum supports",
                              std::to_string(value));
        }
    }
}

unit_spikes read_unit(hdf5::source& src, const std::string& id, std::vector<std::string>& warnings) {
    const std::string group = "/units/" + id;
    src.group(group, "a unit group holding spike_times (float64 [n])");
    const std::string object = group + "/spike_times";
    unit_spikes unit{id, src.read_float64(object)};
    settle_spike_times(unit.spike_times, id, [&](std::size_t i) { return place{src.path(), hdf5::element_path(object, i)}; },
                       warnings);
    return unit;
}

}  // namespace

recording read_recording_hdf5(const std::string& path) {
    hdf5::source src(path);
    recording rec;
    rec.source = path;
    rec.origin.format = "native";
    rec.origin.format_detail = "an HDF5 file in the native layout";

    check_layout_attributes(src);

    src.group("/units", "a group /units holding one group per unit");
    std::vector<std::string> ids = src.member_names("/units");
    if (ids.empty()) throw input_error(path, "/units", "at least one unit group", "an empty group");
    std::stable_sort(ids.begin(), ids.end(), natural_less);
    rec.units.reserve(ids.size());
    for (const auto& id: ids) rec.units.push_back(read_unit(src, id, rec.warnings));

    src.group("/trials", "a group /trials holding start_time and stop_time (float64 [T])");
    rec.trial_start = src.read_float64("/trials/start_time");
    rec.trial_stop = src.read_float64("/trials/stop_time");
    const bool labelled = src.exists("/trials/stimulus");
    if (labelled) rec.stimulus = src.read_labels("/trials/stimulus");

    // Lengths, finiteness, order and overlap of trials, and label count, are validate()'s rules;
    // it names the same HDF5 paths this file uses.
    validate(rec);
    // validate() reads no labels as "unlabelled", but an empty dataset beside T trials is a mismatch.
    if (labelled && rec.stimulus.size() != rec.trial_count()) {
        throw input_error(path, "/trials/stimulus", std::to_string(rec.trial_count()) + " labels, one per trial",
                          std::to_string(rec.stimulus.size()) + " labels");
    }
    return rec;
}

}  // namespace rastrum
