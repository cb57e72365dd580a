#include "bad_recordings.hpp"

#include <H5Cpp.h>

#include <cmath>
#include <functional>

namespace rastrum::testing {

namespace {

void write_doubles(H5::Group& g, const std::string& name, const std::vector<double>& v) {
    const hsize_t n = v.size();
    H5::DataSpace space(1, &n);
    g.createDataSet(name, H5::PredType::NATIVE_DOUBLE, space).write(v.data(), H5::PredType::NATIVE_DOUBLE);
}

void write_ints(H5::Group& g, const std::string& name, const std::vector<long long>& v) {
    const hsize_t n = v.size();
    H5::DataSpace space(1, &n);
    g.createDataSet(name, H5::PredType::NATIVE_LLONG, space).write(v.data(), H5::PredType::NATIVE_LLONG);
}

// A valid recording of two trials, changed by `damage` before it is closed.
std::string write_with(const std::string& path, const std::function<void(H5::H5File&)>& damage,
                       bool spikes = true, bool stop = true) {
    H5::H5File f(path, H5F_ACC_TRUNC);
    H5::Group units = f.createGroup("/units");
    H5::Group u1 = units.createGroup("u1");
    if (spikes) write_doubles(u1, "spike_times", {0.1, 0.2, 1.3});
    H5::Group trials = f.createGroup("/trials");
    write_doubles(trials, "start_time", {0.0, 1.0});
    if (stop) write_doubles(trials, "stop_time", {0.9, 1.9});
    damage(f);
    return path;
}

}  // namespace

std::vector<bad_recording> write_bad_recordings(const std::string& folder) {
    std::vector<bad_recording> out;
    out.push_back({write_with(folder + "/nan.h5", [](H5::H5File& f) {
                       H5::Group u = f.openGroup("/units").createGroup("u2");
                       write_doubles(u, "spike_times", {0.1, std::nan(""), 0.5});
                   }),
                   "/units/u2/spike_times[1]"});
    out.push_back({write_with(folder + "/no-stop.h5", [](H5::H5File&) {}, true, false), "/trials/stop_time"});
    out.push_back({write_with(folder + "/integer-spikes.h5", [](H5::H5File& f) {
                       H5::Group u = f.openGroup("/units").createGroup("u2");
                       write_ints(u, "spike_times", {1, 2, 3});
                   }),
                   "/units/u2/spike_times"});
    out.push_back({write_with(folder + "/short-stimulus.h5", [](H5::H5File& f) {
                       H5::Group t = f.openGroup("/trials");
                       write_ints(t, "stimulus", {1, 2, 3});
                   }),
                   "/trials/stimulus"});
    out.push_back({write_with(folder + "/no-spike-times.h5", [](H5::H5File&) {}, false), "/units/u1"});
    return out;
}

}  // namespace rastrum::testing
