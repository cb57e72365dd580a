#include "loader_checks.hpp"

#include <rastrum/random.hpp>

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>

namespace rastrum::testing {

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

std::string scratch(const std::string& suffix) {
    const auto* info = ::testing::UnitTest::GetInstance()->current_test_info();
    const std::filesystem::path dir = std::filesystem::path(RASTRUM_TEST_TMP) / "loaders";
    std::filesystem::create_directories(dir);
    std::string name = std::string(info->test_suite_name()) + "." + info->name();
    for (char& c: name) {
        if (c == '/') c = '_';
    }
    const std::filesystem::path file = dir / (name + suffix);
    std::filesystem::remove(file);
    return file.string();
}

std::string hdf5_file(const std::string& suffix, const std::function<void(const std::string&)>& write,
                      const std::function<void(H5::H5File&)>& change) {
    const std::string path = scratch(suffix);
    write(path);
    if (change) {
        H5::H5File f(path, H5F_ACC_RDWR);
        change(f);
    }
    return path;
}

input_error input_error_of(const std::function<void()>& f) {
    try {
        f();
    } catch (const input_error& e) {
        return e;
    }
    ADD_FAILURE() << "expected an input_error, none was thrown";
    return input_error("", "", "", "");
}

std::string usage_error_of(const std::function<void()>& f) {
    try {
        f();
    } catch (const usage_error& e) {
        return e.what();
    }
    ADD_FAILURE() << "expected a usage_error, none was thrown";
    return "";
}

recording invented_recording() {
    recording rec;
    rec.units = {{"u1", {0.1, 1.0 / 3.0, 1.5, 2.25, 9.75}}, {"u2", {}}, {"u10", {1e-300, 0.7, 3.0 - 1e-12, 3.5}}};
    rec.trial_start = {0.0, 1.0, 2.0, 3.1};
    rec.trial_stop = {0.9, 2.0, 2.9, 4.0};
    rec.stimulus = {"Grüße", "7", "a, \"quoted\"", "Grüße"};
    return rec;
}

recording random_units(std::size_t units, std::size_t spikes_each, double trial_length, bool labelled,
                       std::uint64_t seed) {
    recording rec;
    for (std::size_t k = 0; k < 10; ++k) {
        rec.trial_start.push_back(static_cast<double>(k));
        rec.trial_stop.push_back(static_cast<double>(k) + trial_length);
        if (labelled) rec.stimulus.push_back(k % 2 == 0 ? "a" : "b");
    }
    random_stream rng(seed);
    for (std::size_t u = 0; u < units; ++u) {
        unit_spikes unit{"u" + std::to_string(u + 1), std::vector<double>(spikes_each)};
        for (double& t: unit.spike_times) t = 10.0 * rng.uniform();
        std::sort(unit.spike_times.begin(), unit.spike_times.end());
        rec.units.push_back(std::move(unit));
    }
    return rec;
}

recording binary_fraction_recording() {
    recording rec;
    rec.units = {{"3", {0.125, 0.5, 1.25, 2.5}}, {"12", {1.75, 2.25}}};
    rec.trial_start = {0.0, 1.0, 2.0};
    rec.trial_stop = {0.75, 1.875, 2.75};
    rec.stimulus = {"-7", "3", "-7"};
    return rec;
}

void expect_same_recording(const recording& a, const recording& b) {
    ASSERT_EQ(a.units.size(), b.units.size());
    for (std::size_t u = 0; u < a.units.size(); ++u) {
        EXPECT_EQ(a.units[u].id, b.units[u].id);
        EXPECT_EQ(a.units[u].spike_times, b.units[u].spike_times) << a.units[u].id;
    }
    EXPECT_EQ(a.trial_start, b.trial_start);
    EXPECT_EQ(a.trial_stop, b.trial_stop);
    EXPECT_EQ(a.stimulus, b.stimulus);
}

}  // namespace rastrum::testing
