// End to end, with the real rastrum command, on recordings read unit by unit: a recording whose
// spike times alone exceed a memory limit is still surveyed and analysed within it (so it cannot
// have been held whole), while the one command that must hold it whole (convert) fails under the
// same limit; and a unit damaged near the end of a file stops the analysis with exit 3, the file
// and the object named, and no output written or changed.
#include "cli_runner.hpp"
#include "loader_checks.hpp"
#include "recording_writers.hpp"

#include <rastrum/random.hpp>
#include <rastrum/recording_hdf5.hpp>

#include <H5Cpp.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>

using namespace rastrum::testing;
using rastrum::recording;

namespace {

std::string quoted(const std::string& path) { return "'" + path + "'"; }

// `units` units of `spikes` uniformly random spike times each over 100 labelled trials of 10 s.
recording big_recording(std::size_t units, std::size_t spikes) {
    recording rec;
    for (std::size_t k = 0; k < 100; ++k) {
        rec.trial_start.push_back(11.0 * static_cast<double>(k));
        rec.trial_stop.push_back(11.0 * static_cast<double>(k) + 10.0);
        rec.stimulus.push_back(k % 2 == 0 ? "a" : "b");
    }
    rastrum::random_stream rng(11);
    for (std::size_t u = 0; u < units; ++u) {
        rastrum::unit_spikes unit{"u" + std::to_string(u + 1), std::vector<double>(spikes)};
        for (double& t: unit.spike_times) t = 1100.0 * rng.uniform();
        std::sort(unit.spike_times.begin(), unit.spike_times.end());
        rec.units.push_back(std::move(unit));
    }
    return rec;
}

// Virtual memory for one run (`ulimit -v`, measured on Debian 12 x86-64, notes/performance.md):
// a run on a small file needs about 50 MiB for the executable and its libraries; on this file,
// read unit by unit, survey and direct (2 threads, 10 ms, letters 1-2) pass within 70 MiB and
// stiminfo within 90 MiB, while convert, which holds every unit, fails within 130 MiB. 20 units of
// 10^6 float64 spike times are 153 MiB: held whole they cannot fit in this limit.
#ifdef RASTRUM_SANITIZED
// AddressSanitizer's shadow memory and its quarantine of freed blocks (256 MiB by default) add to
// every run, so the sanitized build checks these commands for memory errors only; the bound itself
// is checked by the normal build.
constexpr unsigned long limit_kib = 1024 * 1024;
#else
constexpr unsigned long limit_kib = 160 * 1024;
#endif

}  // namespace

TEST(LargeRecording, AnalysedWithinAMemoryLimitTheWholeFileWouldBreak) {
    const std::string folder = fresh_folder("large-within-limit");
    const std::string file = folder + "/big.h5";
    rastrum::write_recording_hdf5(big_recording(20, 1000000), file);

    const auto surveyed = run_rastrum_limited("survey " + quoted(file) + " --json " + quoted(folder + "/survey.json"),
                                              600, limit_kib);
    EXPECT_EQ(surveyed.exit_code, 0) << surveyed.err;
    EXPECT_TRUE(contains(read_file(folder + "/survey.json"), "\"spikes\": 1000000"));

    // Without the calibration: its surrogates hold their own words and tallies, which this limit
    // does not leave room for (the memory check refuses them; tests/test_cli_bounds.cpp).
    const auto direct = run_rastrum_limited("direct " + quoted(file) + " --bin-ms 10 --letters 1-2 --surrogates 0 --threads 2 --quiet "
                                            "--json " + quoted(folder + "/direct.json"),
                                            600, limit_kib);
    EXPECT_EQ(direct.exit_code, 0) << direct.err;
    EXPECT_TRUE(file_exists(folder + "/direct.json"));

    const auto stiminfo = run_rastrum_limited("stiminfo " + quoted(file) + " --window-ms 0:500 --code count --null-shuffles 5 "
                                              "--bootstrap 0 --threads 2 --quiet --json " + quoted(folder + "/stiminfo.json"),
                                              600, limit_kib);
    EXPECT_EQ(stiminfo.exit_code, 0) << stiminfo.err;
    EXPECT_TRUE(file_exists(folder + "/stiminfo.json"));

#ifndef RASTRUM_SANITIZED
    // The limit bites: convert reads every unit before writing, and cannot within it.
    const auto converted = run_rastrum_limited("convert " + quoted(file) + " --quiet --out " + quoted(folder + "/copy.h5"),
                                               600, limit_kib, ending::provoked);
    EXPECT_NE(converted.exit_code, 0) << "convert held 153 MiB of spikes within the limit: the limit proves nothing";
    EXPECT_FALSE(file_exists(folder + "/copy.h5"));
#endif
    std::remove(file.c_str());
}

namespace {

// 30 units of 50 random spikes over 10 labelled trials.
recording thirty_units() { return random_units(30, 50, 0.9, true, 3); }

void expect_late_failure_leaves_nothing(const std::string& folder, const std::string& input,
                                        const std::string& message) {
    const std::string kept = folder + "/kept.json";
    {
        std::FILE* f = std::fopen(kept.c_str(), "w");
        std::fputs("earlier result\n", f);
        std::fclose(f);
    }
    const std::string outputs = " --json " + quoted(kept) + " --csv " + quoted(folder + "/out.csv") + " --curves-csv " +
                                quoted(folder + "/curves.csv") + " --h5 " + quoted(folder + "/out.h5");
    for (const std::string& analysis: {"direct " + input + " --bin-ms 10 --letters 1-2 --threads 2",
                                      "stiminfo " + input + " --window-ms 0:500 --code count --null-shuffles 20 --bootstrap 0 --threads 2"}) {
        const auto r = run_rastrum(analysis + outputs);
        EXPECT_EQ(r.exit_code, 3) << analysis << ": " << r.err;
        EXPECT_TRUE(contains(r.err, message)) << analysis << ": " << r.err;
        EXPECT_EQ(read_file(kept), "earlier result\n") << analysis;
        for (const char* name: {"/out.csv", "/curves.csv", "/out.h5"}) {
            EXPECT_FALSE(file_exists(folder + name)) << analysis << ": " << name;
        }
    }
}

}  // namespace

TEST(LargeRecording, NativeUnitDamagedLateGivesExit3AndNoOutputs) {
    const std::string folder = fresh_folder("large-late-native");
    const recording rec = thirty_units();
    const std::string file = folder + "/late.h5";
    rastrum::write_recording_hdf5(rec, file);
    {  // the native writer refuses NaN, so the last unit is damaged afterwards
        H5::H5File f(file, H5F_ACC_RDWR);
        std::vector<double> times = rec.units[29].spike_times;
        times[2] = NAN;
        f.openDataSet("/units/u30/spike_times").write(times.data(), H5::PredType::NATIVE_DOUBLE);
    }
    // The whole-file read's message (notes/recording-layout.md, "Errors"), found only when u30 is read.
    expect_late_failure_leaves_nothing(folder, quoted(file),
                                       file + ": /units/u30/spike_times[2]: expected a finite time in seconds, found nan");
}

TEST(LargeRecording, NwbUnitDamagedLateGivesExit3AndNoOutputs) {
    const std::string folder = fresh_folder("large-late-nwb");
    recording rec = thirty_units();
    rec.units[29].spike_times[2] = NAN;  // the tests' NWB writer writes what it is given
    const std::string file = folder + "/late.nwb";
    write_nwb(rec, file);
    // Units u1..u29 hold 50 spikes each before u30 in /units/spike_times: its spike 2 is element 1452.
    expect_late_failure_leaves_nothing(folder, quoted(file),
                                       file + ": /units/spike_times[1452]: expected a finite time in seconds, found nan");
}
