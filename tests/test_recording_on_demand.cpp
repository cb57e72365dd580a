// Recordings opened for reading unit by unit (open_recording): every format gives, unit by unit,
// exactly the spikes and warnings the whole-file read gives (which the format tests check against
// the recordings their independent writers wrote); nothing is held before a unit is asked for; a
// damaged unit is reported when it is read, with the whole-file read's message; and the analyses'
// unit holder keeps at most one unit per thread and one more.
#include "loader_checks.hpp"
#include "recording_writers.hpp"

#include <rastrum/aligned_units.hpp>
#include <rastrum/parallel.hpp>
#include <rastrum/recording_hdf5.hpp>
#include <rastrum/recording_source.hpp>

#include <H5Cpp.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <functional>

using namespace rastrum::testing;
using rastrum::recording;
using rastrum::recording_format;
using rastrum::recording_source;

namespace {

// The invented recording with one unit's times out of order, so that reading it warns.
recording awkward_recording() {
    recording rec = invented_recording();
    rec.units[2].spike_times = {3.5, 0.7, 1e-300, 3.0 - 1e-12};
    return rec;
}

recording_source source_in(recording_format format, const recording& rec, bool valid_for_native = true) {
    recording_source s;
    s.format = format;
    switch (format) {
    case recording_format::native:
        s.path = scratch(".h5");
        if (valid_for_native) {
            recording sorted = rec;  // the native writer refuses unsorted times (validate)
            for (auto& u: sorted.units) std::sort(u.spike_times.begin(), u.spike_times.end());
            rastrum::write_recording_hdf5(sorted, s.path);
        }
        break;
    case recording_format::nwb:
        s.path = scratch(".nwb");
        write_nwb(rec, s.path);
        break;
    case recording_format::mat:
        s.path = scratch(".mat");
        write_mat(rec, s.path, mat_writing{true, false, false, true});  // with the unit ids, "ids"
        s.mat.unit_ids = "ids";
        s.mat.spikes = "spikes";
        s.mat.trial_start = "trial_start";
        s.mat.trial_stop = "trial_stop";
        s.mat.stimulus = "stimulus";
        break;
    case recording_format::text:
        s.path = scratch(".csv");
        s.trials_csv = scratch("-trials.csv");
        write_text(rec, s.path, *s.trials_csv);
        break;
    }
    return s;
}

void expect_unit_by_unit_equals_whole(const recording_source& s, bool expect_on_demand) {
    const recording whole = rastrum::read_recording(s);
    const recording opened = rastrum::open_recording(s);
    EXPECT_EQ(opened.on_demand(), expect_on_demand);
    ASSERT_EQ(opened.units.size(), whole.units.size());
    EXPECT_EQ(opened.trial_start, whole.trial_start);
    EXPECT_EQ(opened.trial_stop, whole.trial_stop);
    EXPECT_EQ(opened.stimulus, whole.stimulus);
    for (std::size_t u = 0; u < whole.units.size(); ++u) {
        EXPECT_EQ(opened.units[u].id, whole.units[u].id);
        // Nothing is held before it is asked for: the point of reading on demand.
        if (expect_on_demand) {
            EXPECT_TRUE(opened.units[u].spike_times.empty()) << opened.units[u].id;
        }
        EXPECT_EQ(opened.spike_count(u), whole.units[u].spike_times.size()) << whole.units[u].id;
    }
    // Read in the reverse order, and twice, to show that a unit does not depend on what was read before.
    for (std::size_t u = whole.units.size(); u-- > 0;) {
        EXPECT_EQ(*opened.spikes(u), whole.units[u].spike_times) << whole.units[u].id;
        EXPECT_EQ(*opened.spikes(u), whole.units[u].spike_times) << whole.units[u].id;
    }
    // Warnings in the recording's order of units, each once, as the whole-file read lists them.
    EXPECT_EQ(opened.all_warnings(), whole.warnings);
}

void expect_same_error(const recording_source& s, std::size_t bad_unit, const std::string& object) {
    const rastrum::input_error whole = input_error_of([&] { rastrum::read_recording(s); });
    const recording opened = rastrum::open_recording(s);  // opening reads no spike times: no error yet
    for (std::size_t u = 0; u < bad_unit; ++u) EXPECT_NO_THROW(opened.spikes(u));
    const rastrum::input_error late = input_error_of([&] { opened.spikes(bad_unit); });
    EXPECT_EQ(late.file, s.path);
    EXPECT_EQ(late.object, object) << late.what();
    EXPECT_EQ(std::string(late.what()), std::string(whole.what()));
    EXPECT_TRUE(contains(late.expected, "finite")) << late.what();
    EXPECT_EQ(late.found, "nan");
}

}  // namespace

// --- every format, unit by unit -------------------------------------------------------------

TEST(OnDemand, NativeUnitsEqualTheWholeFileRead) {
    const recording_source s = source_in(recording_format::native, invented_recording());
    expect_unit_by_unit_equals_whole(s, true);
    expect_same_recording(rastrum::read_recording(s), invented_recording());
}

TEST(OnDemand, NwbUnitsEqualTheWholeFileRead) {
    const recording_source s = source_in(recording_format::nwb, awkward_recording());
    expect_unit_by_unit_equals_whole(s, true);
    // The whole-file read, in turn, is the recording the independent writer wrote, sorted.
    expect_same_recording(rastrum::read_recording(s), invented_recording());
}

TEST(OnDemand, MatUnitsEqualTheWholeFileRead) {
    const recording_source s = source_in(recording_format::mat, awkward_recording());
    expect_unit_by_unit_equals_whole(s, true);
    expect_same_recording(rastrum::read_recording(s), invented_recording());
}

TEST(OnDemand, TextIsReadWholeAndGivesTheSameUnits) {
    // A CSV must be parsed to its end to find any unit's rows, so it is held whole (on_demand() false).
    const recording_source s = source_in(recording_format::text, awkward_recording());
    expect_unit_by_unit_equals_whole(s, false);
    expect_same_recording(rastrum::read_recording(s), invented_recording());
}

TEST(OnDemand, NativeWarningsComeWithTheUnitsRead) {
    const recording opened = rastrum::open_recording(source_in(recording_format::native, invented_recording()));
    EXPECT_TRUE(opened.all_warnings().empty());  // u2 has no spikes, but it has not been read yet
    opened.spikes(2);
    EXPECT_TRUE(opened.all_warnings().empty());
    opened.spikes(1);
    ASSERT_EQ(opened.all_warnings().size(), 1u);
    EXPECT_TRUE(contains(opened.all_warnings()[0], "unit u2: no spikes")) << opened.all_warnings()[0];
}

// --- a damaged unit, found when it is read ---------------------------------------------------

TEST(OnDemandDamaged, NativeNanIsReportedWhenTheUnitIsRead) {
    recording_source s = source_in(recording_format::native, invented_recording());
    {
        H5::H5File f(s.path, H5F_ACC_RDWR);
        const std::vector<double> times{1e-300, NAN, 3.0 - 1e-12, 3.5};  // u10, the last unit
        f.openDataSet("/units/u10/spike_times").write(times.data(), H5::PredType::NATIVE_DOUBLE);
    }
    expect_same_error(s, 2, "/units/u10/spike_times[1]");
}

TEST(OnDemandDamaged, NwbNanIsReportedWhenTheUnitIsRead) {
    recording rec = invented_recording();
    rec.units[2].spike_times[1] = NAN;  // u10: rows u1 (5 spikes), u2 (none), u10, so spike_times[6]
    expect_same_error(source_in(recording_format::nwb, rec), 2, "/units/spike_times[6]");
}

TEST(OnDemandDamaged, MatNanIsReportedWhenTheUnitIsRead) {
    recording rec = invented_recording();
    rec.units[2].spike_times[1] = NAN;
    expect_same_error(source_in(recording_format::mat, rec), 2, "spikes{3}(2)");
}

TEST(OnDemandDamaged, UnitsNotYetReadAreCheckedOnRequest) {
    // What the commands do when an analysis stops early for lack of data: the damaged unit it did
    // not reach is still reported, with the whole-file read's message.
    recording rec = invented_recording();
    rec.units[2].spike_times[1] = NAN;
    const recording_source s = source_in(recording_format::nwb, rec);
    const recording opened = rastrum::open_recording(s);
    opened.spikes(0);
    const rastrum::input_error e = input_error_of([&] { rastrum::check_unread_units(opened); });
    EXPECT_EQ(e.object, "/units/spike_times[6]") << e.what();
    EXPECT_TRUE(opened.store->was_read(0));
    EXPECT_TRUE(opened.store->was_read(1));   // u2, read by the check and fine
    EXPECT_FALSE(opened.store->was_read(2));  // u10 failed its checks
}

TEST(OnDemandDamaged, StructuralFaultsOfAUnitAreFoundAtOpening) {
    // A unit's dataset of the wrong type is known without reading its values, so opening refuses it.
    recording_source s = source_in(recording_format::native, invented_recording());
    {
        H5::H5File f(s.path, H5F_ACC_RDWR);
        f.unlink("/units/u10/spike_times");
        const hsize_t n = 2;
        const std::vector<std::int32_t> v{1, 2};
        f.createDataSet("/units/u10/spike_times", H5::PredType::STD_I32LE, H5::DataSpace(1, &n))
            .write(v.data(), H5::PredType::NATIVE_INT32);
    }
    const rastrum::input_error e = input_error_of([&] { rastrum::open_recording(s); });
    EXPECT_EQ(e.object, "/units/u10/spike_times") << e.what();
    EXPECT_TRUE(contains(e.found, "integer")) << e.what();
}

// --- the analyses' unit holder ---------------------------------------------------------------

namespace {

// 40 units of 200 random spikes over 10 trials, written in the native layout.
recording many_units() { return random_units(40, 200, 0.8, false, 7); }

}  // namespace

TEST(AlignedUnits, EachUnitReadOnceAndAtMostOneMoreThanThreadsHeld) {
    const recording written = many_units();
    recording_source s;
    s.path = scratch(".h5");
    rastrum::write_recording_hdf5(written, s.path);
    const recording opened = rastrum::open_recording(s);
    ASSERT_TRUE(opened.on_demand());
    const std::vector<std::size_t> trials{0, 2, 3, 4, 5, 6, 7, 8, 9};
    constexpr std::size_t per_unit = 3;  // as the direct method's bin widths
    for (const unsigned threads: {1u, 2u, 4u}) {
        rastrum::aligned_units held(opened, trials, std::vector<std::size_t>(opened.units.size(), per_unit));
        std::atomic<int> mismatches{0};
        rastrum::parallel_for(opened.units.size() * per_unit, threads, [&](std::size_t task) {
            const std::size_t u = task / per_unit;
            const rastrum::aligned_units::hold unit(held, u);
            // Aligned as align_to_trials aligns the spikes written (tested in test_recording).
            if (unit.spikes() != rastrum::align_to_trials(written.units[u].spike_times, written, trials)) ++mismatches;
        });
        EXPECT_EQ(mismatches, 0);
        EXPECT_EQ(held.reads(), opened.units.size()) << threads << " threads";
        // Analytic: tasks are taken in increasing order and a unit's tasks are adjacent, so every
        // unit held is either a task in progress (at most `threads`) or the one unit whose next
        // task has not been taken yet.
        EXPECT_LE(held.most_held(), threads + 1) << threads << " threads";
        EXPECT_GE(held.most_held(), 1u);
    }
    EXPECT_TRUE(opened.all_warnings().empty());
}

TEST(AlignedUnits, UnitsNoTaskNeedsAreNeverRead) {
    recording_source s;
    s.path = scratch(".h5");
    rastrum::write_recording_hdf5(many_units(), s.path);
    const recording opened = rastrum::open_recording(s);
    std::vector<std::size_t> uses(opened.units.size(), 0);
    uses[5] = 2;
    rastrum::aligned_units held(opened, {0, 1}, uses);
    {
        const rastrum::aligned_units::hold a(held, 5);
        const rastrum::aligned_units::hold b(held, 5);
        EXPECT_EQ(&a.spikes(), &b.spikes());  // one copy for both holds
    }
    EXPECT_EQ(held.reads(), 1u);
    EXPECT_EQ(held.most_held(), 1u);
}
