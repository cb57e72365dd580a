#include "hdf5_read_helpers.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/recording_hdf5.hpp>

#include <algorithm>
#include <cmath>
#include <sstream>

namespace rastrum {

namespace {

constexpr const char* layout_name = "spike-recording";
constexpr std::int64_t layout_version = 1;

std::string number(double x) {
    std::ostringstream out;
    out.precision(17);
    out << x;
    return out.str();
}

bool is_digit(char c) { return c >= '0' && c <= '9'; }

// Natural order: runs of decimal digits compare by their value, everything else byte by byte, so
// "u2" < "u10" and "tetrode2/ch3" sorts as a person would list it. Names equal under that rule
// ("u01", "u1") fall back to byte order, which keeps the order total and deterministic.
bool natural_less(const std::string& a, const std::string& b) {
    std::size_t i = 0;
    std::size_t j = 0;
    while (i < a.size() && j < b.size()) {
        if (is_digit(a[i]) && is_digit(b[j])) {
            std::size_t i_end = i;
            std::size_t j_end = j;
            while (i_end < a.size() && is_digit(a[i_end])) ++i_end;
            while (j_end < b.size() && is_digit(b[j_end])) ++j_end;
            // Compare without leading zeros: the longer run is the larger number, equal lengths
            // compare digit by digit. No conversion, so runs of any length work.
            std::size_t i_lead = i;
            std::size_t j_lead = j;
            while (i_lead + 1 < i_end && a[i_lead] == '0') ++i_lead;
            while (j_lead + 1 < j_end && b[j_lead] == '0') ++j_lead;
            const std::size_t i_len = i_end - i_lead;
            const std::size_t j_len = j_end - j_lead;
            if (i_len != j_len) return i_len < j_len;
            const int digits = a.compare(i_lead, i_len, b, j_lead, j_len);
            if (digits != 0) return digits < 0;
            i = i_end;
            j = j_end;
        } else {
            const auto ca = static_cast<unsigned char>(a[i]);
            const auto cb = static_cast<unsigned char>(b[j]);
            if (ca != cb) return ca < cb;
            ++i;
            ++j;
        }
    }
    const bool a_done = i == a.size();
    const bool b_done = j == b.size();
    if (a_done != b_done) return a_done;
    return a < b;
}

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
    // Checked here rather than left to validate(): the index must be the one in the file, before
    // sorting moves elements, and sorting NaN would be undefined.
    for (std::size_t i = 0; i < unit.spike_times.size(); ++i) {
        if (!std::isfinite(unit.spike_times[i])) {
            throw input_error(src.path(), hdf5::element_path(object, i), "a finite time in seconds",
                              number(unit.spike_times[i]));
        }
    }
    if (unit.spike_times.empty()) {
        warnings.push_back("unit " + id + ": no spikes; kept, it carries no information");
    } else if (!std::is_sorted(unit.spike_times.begin(), unit.spike_times.end())) {
        std::sort(unit.spike_times.begin(), unit.spike_times.end());
        warnings.push_back("unit " + id + ": spike times were not sorted; sorted them");
    }
    return unit;
}

}  // namespace

recording read_recording_hdf5(const std::string& path) {
    hdf5::source src(path);
    recording rec;
    rec.source = path;

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
