#include "hdf5_read_helpers.hpp"
#include "loader_steps.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/recording_hdf5.hpp>

#include <algorithm>
#include <memory>

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

std::string spike_times_of(const std::string& id) { return "/units/" + id + "/spike_times"; }

// The units of /units: their groups and datasets checked at opening, their times read when asked.
class native_loader: public unit_loader {
public:
    native_loader(std::shared_ptr<hdf5::source> src, std::vector<std::string> ids): src_(std::move(src)), ids_(std::move(ids)) {
        for (const auto& id: ids_) {
            src_->group("/units/" + id, "a unit group holding spike_times (float64 [n])");
            counts_.push_back(src_->float64_count(spike_times_of(id)));
        }
    }
    std::size_t spike_count(std::size_t u) const override { return counts_[u]; }
    std::vector<seconds> load(std::size_t u, std::vector<std::string>& warnings) override {
        const hdf5::error_capture capture;  // on the thread that reads
        const std::string object = spike_times_of(ids_[u]);
        std::vector<seconds> times = src_->read_float64(object);
        settle_spike_times(times, ids_[u], [&](std::size_t i) { return place{src_->path(), hdf5::element_path(object, i)}; },
                           warnings);
        return times;
    }

private:
    std::shared_ptr<hdf5::source> src_;
    std::vector<std::string> ids_;
    std::vector<std::size_t> counts_;
};

}  // namespace

recording open_recording_hdf5(const std::string& path) {
    auto src = std::make_shared<hdf5::source>(path);
    recording rec;
    rec.source = path;
    rec.origin.format = "native";
    rec.origin.format_detail = "an HDF5 file in the native layout";

    check_layout_attributes(*src);

    src->group("/units", "a group /units holding one group per unit");
    std::vector<std::string> ids = src->member_names("/units");
    if (ids.empty()) throw input_error(path, "/units", "at least one unit group", "an empty group");
    std::stable_sort(ids.begin(), ids.end(), natural_less);
    for (const auto& id: ids) rec.units.push_back({id, {}});
    rec.store = std::make_shared<unit_store>(std::make_unique<native_loader>(src, ids), ids.size());

    src->group("/trials", "a group /trials holding start_time and stop_time (float64 [T])");
    rec.trial_start = src->read_float64("/trials/start_time");
    rec.trial_stop = src->read_float64("/trials/stop_time");
    const bool labelled = src->exists("/trials/stimulus");
    if (labelled) rec.stimulus = src->read_labels("/trials/stimulus");

    // Lengths, finiteness, order and overlap of trials, and label count, are validate()'s rules;
    // it names the same HDF5 paths this file uses. Spike times are checked as each unit is read.
    validate(rec);
    // validate() reads no labels as "unlabelled", but an empty dataset beside T trials is a mismatch.
    if (labelled && rec.stimulus.size() != rec.trial_count()) {
        throw input_error(path, "/trials/stimulus", std::to_string(rec.trial_count()) + " labels, one per trial",
                          std::to_string(rec.stimulus.size()) + " labels");
    }
    return rec;
}

recording read_recording_hdf5(const std::string& path) {
    recording rec = open_recording_hdf5(path);
    read_all_units(rec);
    return rec;
}

}  // namespace rastrum
