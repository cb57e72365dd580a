// The native layout on real HDF5 files: what is written is read back exactly, and each malformed
// file (written with the HDF5 C++ API directly, tests/hdf5_test_files.hpp) is refused with its HDF5
// path named and what was expected there.
#include <rastrum/errors.hpp>
#include <rastrum/recording_hdf5.hpp>

#include "hdf5_test_files.hpp"
#include "io/hdf5_read_helpers.hpp"

#include <H5Cpp.h>
#include <gtest/gtest.h>
#ifdef RASTRUM_SANITIZED
#include <sanitizer/lsan_interface.h>
#endif

#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <functional>
#include <iterator>
#include <limits>
#include <optional>

namespace fs = std::filesystem;
using namespace hdf5_test;

// --- round trip ---------------------------------------------------------------------------------

TEST(RoundTrip, WhatIsWrittenIsReadBackExactly) {
    const std::string path = scratch();
    const rastrum::recording rec = sample();
    rastrum::write_recording_hdf5(rec, path);
    const rastrum::recording back = rastrum::read_recording_hdf5(path);
    EXPECT_EQ(back.source, path);
    ASSERT_EQ(back.units.size(), 3u);
    // Natural order of ids puts u10 after u2 (the sample already is in that order).
    EXPECT_EQ(back.units[0].id, "u1");
    EXPECT_EQ(back.units[1].id, "u2");
    EXPECT_EQ(back.units[2].id, "u10");
    for (std::size_t i = 0; i < 3; ++i) EXPECT_EQ(back.units[i].spike_times, rec.units[i].spike_times);
    EXPECT_EQ(back.trial_start, rec.trial_start);
    EXPECT_EQ(back.trial_stop, rec.trial_stop);
    EXPECT_EQ(back.stimulus, rec.stimulus);
    // The empty unit is kept, with a warning naming it.
    ASSERT_EQ(back.warnings.size(), 1u);
    EXPECT_TRUE(contains(back.warnings[0], "u2")) << back.warnings[0];
}

TEST(RoundTrip, WriterFollowsTheLayout) {
    const std::string path = scratch();
    rastrum::write_recording_hdf5(sample(), path);
    H5::H5File f(path, H5F_ACC_RDONLY);
    std::string layout;
    const H5::Attribute a = f.openAttribute("layout");
    a.read(a.getStrType(), layout);
    EXPECT_EQ(layout, "spike-recording");
    std::int64_t version = 0;
    f.openAttribute("layout_version").read(H5::PredType::NATIVE_INT64, &version);
    EXPECT_EQ(version, 1);
    const H5::DataSet stimulus = f.openDataSet("/trials/stimulus");
    ASSERT_EQ(stimulus.getTypeClass(), H5T_STRING);
    EXPECT_TRUE(stimulus.getStrType().isVariableStr());
    EXPECT_EQ(stimulus.getStrType().getCset(), H5T_CSET_UTF8);
    const H5::DataSet spikes = f.openDataSet("/units/u10/spike_times");
    EXPECT_EQ(spikes.getTypeClass(), H5T_FLOAT);
    EXPECT_EQ(spikes.getDataType().getSize(), 8u);
}

TEST(RoundTrip, UnlabelledRecordingHasNoStimulusDataset) {
    const std::string path = scratch();
    rastrum::recording rec = sample();
    rec.stimulus.clear();
    rastrum::write_recording_hdf5(rec, path);
    EXPECT_FALSE(H5::H5File(path, H5F_ACC_RDONLY).nameExists("/trials/stimulus"));
    EXPECT_FALSE(rastrum::read_recording_hdf5(path).has_stimulus());
}

TEST(RoundTrip, IntegerLabelsReadAsDecimalText) {
    parts p;
    p.stimulus.reset();
    const std::string path = write_file(p, [](H5::H5File& f) {
        put_ints<std::int64_t>(f, "/trials/stimulus", {3, -7, 3}, H5::PredType::STD_I64LE,
                               H5::PredType::NATIVE_INT64);
    });
    EXPECT_EQ(rastrum::read_recording_hdf5(path).stimulus, (std::vector<std::string>{"3", "-7", "3"}));
}

TEST(RoundTrip, NarrowAndUnsignedIntegerLabels) {
    parts p;
    p.stimulus.reset();
    const std::string narrow = write_file(p, [](H5::H5File& f) {
        put_ints<std::int16_t>(f, "/trials/stimulus", {-300, 0, 12}, H5::PredType::STD_I16BE,
                               H5::PredType::NATIVE_INT16);
    });
    EXPECT_EQ(rastrum::read_recording_hdf5(narrow).stimulus, (std::vector<std::string>{"-300", "0", "12"}));
}

TEST(RoundTrip, FixedLengthStringLabels) {
    parts p;
    p.stimulus.reset();
    const std::string path = write_file(p, [](H5::H5File& f) {
        put_fixed_strings(f, "/trials/stimulus", {"on", "off", "on"}, 5, H5T_STR_NULLPAD);
    });
    EXPECT_EQ(rastrum::read_recording_hdf5(path).stimulus, (std::vector<std::string>{"on", "off", "on"}));
}

TEST(RoundTrip, SpacePaddedStringLabels) {
    parts p;
    p.stimulus.reset();
    const std::string path = write_file(p, [](H5::H5File& f) {
        put_fixed_strings(f, "/trials/stimulus", {"on", "off", "on"}, 4, H5T_STR_SPACEPAD);
    });
    EXPECT_EQ(rastrum::read_recording_hdf5(path).stimulus, (std::vector<std::string>{"on", "off", "on"}));
}

TEST(RoundTrip, Float32TimesAreAccepted) {
    parts p;
    p.units = {{"u1", {0.5}}};
    const std::string path = write_file(p, [](H5::H5File& f) {
        const std::vector<float> times = {0.25f, 1.5f, 2.0625f};
        const hsize_t n = times.size();
        f.createDataSet("/units/u7/spike_times", H5::PredType::IEEE_F32LE, H5::DataSpace(1, &n),
                        H5::DSetCreatPropList::DEFAULT, H5::DSetAccPropList::DEFAULT, with_parents())
            .write(times.data(), H5::PredType::NATIVE_FLOAT);
    });
    const auto rec = rastrum::read_recording_hdf5(path);
    EXPECT_EQ(rec.unit("u7").spike_times, (std::vector<double>{0.25, 1.5, 2.0625}));
}

TEST(RoundTrip, LayoutAttributesAreOptional) {
    // write_file writes no root attributes at all.
    EXPECT_EQ(rastrum::read_recording_hdf5(write_file(parts{})).units.size(), 2u);
}

TEST(RoundTrip, UnitIdsInNaturalOrder) {
    parts p;
    p.units = {{"u10", {0.1}}, {"u2", {0.1}}, {"u1", {0.1}}, {"a", {0.1}}, {"u02", {0.1}}};
    const auto rec = rastrum::read_recording_hdf5(write_file(p));
    std::vector<std::string> ids;
    for (const auto& u: rec.units) ids.push_back(u.id);
    // HDF5 lists names in byte order (a, u02, u1, u10, u2); digit runs compare by value, and the
    // tie u02 = u2 falls back to byte order.
    EXPECT_EQ(ids, (std::vector<std::string>{"a", "u1", "u02", "u2", "u10"}));
}

// Many units (listed by one pass over the group's links): every one is found, in natural order,
// in old-style and in new-style (indexed, "dense") groups. Expected order: common practice.
TEST(RoundTrip, ManyUnitIdsListedOnceInNaturalOrder) {
    parts p;
    p.units.clear();
    for (int i = 40; i >= 1; --i) p.units.push_back({"u" + std::to_string((i * 17) % 40 + 1), {0.1}});
    std::vector<std::string> expected;
    for (int i = 1; i <= 40; ++i) expected.push_back("u" + std::to_string(i));
    for (const bool dense: {false, true}) {
        const std::string path = scratch();
        {
            H5::FileAccPropList access;
            if (dense) access.setLibverBounds(H5F_LIBVER_LATEST, H5F_LIBVER_LATEST);
            H5::H5File f(path, H5F_ACC_TRUNC, H5::FileCreatPropList::DEFAULT, access);
            f.createGroup("/units");
            for (const auto& [id, times]: p.units) put_f64(f, "/units/" + id + "/spike_times", times);
            f.createGroup("/trials");
            put_f64(f, "/trials/start_time", *p.start);
            put_f64(f, "/trials/stop_time", *p.stop);
        }
        const auto rec = rastrum::read_recording_hdf5(path);
        std::vector<std::string> ids;
        for (const auto& u: rec.units) ids.push_back(u.id);
        EXPECT_EQ(ids, expected) << (dense ? "new-style group" : "old-style group");
    }
}

TEST(RoundTrip, UnsortedSpikesAreSortedWithAWarning) {
    parts p;
    p.units = {{"u1", {0.125, 0.5}}, {"u2", {2.25, 0.25, 1.75}}};
    const auto rec = rastrum::read_recording_hdf5(write_file(p));
    EXPECT_EQ(rec.unit("u2").spike_times, (std::vector<double>{0.25, 1.75, 2.25}));
    ASSERT_EQ(rec.warnings.size(), 1u);
    EXPECT_TRUE(contains(rec.warnings[0], "u2") && contains(rec.warnings[0], "sorted")) << rec.warnings[0];
}

// --- writer failures ----------------------------------------------------------------------------

TEST(Writer, FailureLeavesThePreviousFileAndNoTemporary) {
    const std::string path = scratch();
    { std::ofstream(path) << "previous contents"; }
    rastrum::recording rec = sample();
    rec.units[0].id = "a/b";  // not an HDF5 name
    EXPECT_THROW(rastrum::write_recording_hdf5(rec, path), rastrum::error);
    std::ifstream in(path);
    std::string text;
    std::getline(in, text);
    EXPECT_EQ(text, "previous contents");
    for (const auto& entry: fs::directory_iterator(fs::path(path).parent_path())) {
        EXPECT_FALSE(contains(entry.path().filename().string(), fs::path(path).filename().string() + ".tmp"))
            << entry.path();
    }
}

TEST(Writer, MissingDirectoryIsAnErrorNotAFile) {
    const std::string dir = scratch(".nodir");
    const std::string path = dir + "/out.h5";
    EXPECT_THROW(rastrum::write_recording_hdf5(sample(), path), rastrum::error);
    EXPECT_FALSE(fs::exists(path));
}

// --- the file itself ----------------------------------------------------------------------------

TEST(Malformed, MissingFile) { expect_error(scratch(".absent"), "", "HDF5 file", "no such file"); }

TEST(Malformed, NotHdf5) {
    const std::string path = scratch(".txt");
    { std::ofstream(path) << "unit,time\nu1,0.5\n"; }
    expect_error(path, "", "HDF5 file", "signature");
}

TEST(Malformed, Directory) {
    const std::string path = scratch(".dir");
    fs::create_directories(path);
    expect_error(path, "", "HDF5 file", "directory");
}

TEST(Malformed, TruncatedFile) {
    const std::string path = write_file(parts{});
    fs::resize_file(path, fs::file_size(path) / 2);
    expect_error(path, "", "HDF5");
}

// --- root attributes ----------------------------------------------------------------------------

TEST(Malformed, OtherLayout) {
    const std::string path = write_file(parts{}, [](H5::H5File& f) { put_string_attribute(f, "layout", "nwb"); });
    expect_error(path, "/@layout", "spike-recording", "nwb");
}

TEST(Malformed, OtherLayoutVersion) {
    const std::string path = write_file(parts{}, [](H5::H5File& f) {
        put_string_attribute(f, "layout", "spike-recording");
        put_int_attribute(f, "layout_version", 2);
    });
    expect_error(path, "/@layout_version", "layout_version 1, the only version", "2");
}

TEST(Malformed, LayoutVersionAsText) {
    const std::string path = write_file(parts{}, [](H5::H5File& f) { put_string_attribute(f, "layout_version", "1"); });
    expect_error(path, "/@layout_version", "integer", "string");
}

// --- units --------------------------------------------------------------------------------------

TEST(Malformed, NoUnitsGroup) {
    parts p;
    p.units.clear();
    p.units_group = false;
    expect_error(write_file(p), "/units", "group", "nothing");
}

TEST(Malformed, EmptyUnitsGroup) {
    parts p;
    p.units.clear();
    expect_error(write_file(p), "/units", "at least one unit");
}

TEST(Malformed, UnitsIsADataset) {
    parts p;
    p.units.clear();
    p.units_group = false;
    expect_error(write_file(p, [](H5::H5File& f) { put_f64(f, "/units", {1.0}); }), "/units", "group", "dataset");
}

TEST(Malformed, UnitIsADataset) {
    const std::string path = write_file(parts{}, [](H5::H5File& f) { put_f64(f, "/units/u3", {1.0}); });
    expect_error(path, "/units/u3", "spike_times", "dataset");
}

TEST(Malformed, UnitWithoutSpikeTimes) {
    const std::string path = write_file(parts{}, [](H5::H5File& f) { f.createGroup("/units/u3"); });
    expect_error(path, "/units/u3/spike_times", "dataset", "nothing");
}

TEST(Malformed, IntegerSpikeTimes) {
    const std::string path = write_file(parts{}, [](H5::H5File& f) {
        put_ints<std::int64_t>(f, "/units/u3/spike_times", {1, 2}, H5::PredType::STD_I64LE,
                               H5::PredType::NATIVE_INT64);
    });
    expect_error(path, "/units/u3/spike_times", "float64", "64-bit signed integer");
}

TEST(Malformed, ScalarSpikeTimes) {
    const std::string path = write_file(parts{}, [](H5::H5File& f) {
        const double t = 0.5;
        f.createDataSet("/units/u3/spike_times", H5::PredType::IEEE_F64LE, H5::DataSpace(H5S_SCALAR),
                        H5::DSetCreatPropList::DEFAULT, H5::DSetAccPropList::DEFAULT, with_parents())
            .write(&t, H5::PredType::NATIVE_DOUBLE);
    });
    expect_error(path, "/units/u3/spike_times", "1-D", "scalar");
}

TEST(Malformed, NanSpikeTimeIsNamedByIndex) {
    std::vector<double> times(20);
    for (std::size_t i = 0; i < times.size(); ++i) times[i] = 0.125 * static_cast<double>(i);
    times[17] = std::numeric_limits<double>::quiet_NaN();
    parts p;
    p.units.emplace_back("u3", times);
    expect_error(write_file(p), "/units/u3/spike_times[17]", "finite", "nan");
}

TEST(Malformed, InfiniteSpikeTimeBeforeSorting) {
    // Out of order as well, so the index must be the file's, not the sorted one.
    parts p;
    p.units.emplace_back("u3", std::vector<double>{2.0, 1.0, std::numeric_limits<double>::infinity(), 0.5});
    expect_error(write_file(p), "/units/u3/spike_times[2]", "finite", "inf");
}

// --- trials -------------------------------------------------------------------------------------

TEST(Malformed, NoTrialsGroup) {
    parts p;
    p.start.reset();
    p.stop.reset();
    p.stimulus.reset();
    p.trials_group = false;
    expect_error(write_file(p), "/trials", "start_time and stop_time", "nothing");
}

TEST(Malformed, MissingStartTime) {
    parts p;
    p.start.reset();
    expect_error(write_file(p), "/trials/start_time", "float64", "nothing");
}

TEST(Malformed, MissingStopTime) {
    parts p;
    p.stop.reset();
    expect_error(write_file(p), "/trials/stop_time", "float64", "nothing");
}

TEST(Malformed, StringStartTimes) {
    parts p;
    p.start.reset();
    expect_error(write_file(p, [](H5::H5File& f) { put_strings(f, "/trials/start_time", {"0", "1", "2"}); }),
                 "/trials/start_time", "float64", "string");
}

TEST(Malformed, CompoundStopTimes) {
    parts p;
    p.stop.reset();
    const std::string path = write_file(p, [](H5::H5File& f) {
        struct pair {
            double t;
            std::int32_t flag;
        };
        H5::CompType type(sizeof(pair));
        type.insertMember("t", HOFFSET(pair, t), H5::PredType::NATIVE_DOUBLE);
        type.insertMember("flag", HOFFSET(pair, flag), H5::PredType::NATIVE_INT32);
        const std::vector<pair> v = {{0.75, 0}, {1.875, 0}, {2.75, 0}};
        const hsize_t n = v.size();
        f.createDataSet("/trials/stop_time", type, H5::DataSpace(1, &n)).write(v.data(), type);
    });
    expect_error(path, "/trials/stop_time", "float64", "compound");
}

TEST(Malformed, TwoDimensionalStartTimes) {
    parts p;
    p.start.reset();
    const std::string path = write_file(p, [](H5::H5File& f) {
        const hsize_t dims[2] = {3, 2};
        const double v[6] = {0, 0, 1, 1, 2, 2};
        f.createDataSet("/trials/start_time", H5::PredType::IEEE_F64LE, H5::DataSpace(2, dims))
            .write(v, H5::PredType::NATIVE_DOUBLE);
    });
    expect_error(path, "/trials/start_time", "1-D", "2-D dataset [3 x 2]");
}

TEST(Malformed, InfiniteStartTime) {
    parts p;
    p.start = {0.0, 1.0, std::numeric_limits<double>::infinity()};
    expect_error(write_file(p), "/trials/start_time[2]", "finite", "inf");
}

TEST(Malformed, StopNotAfterStart) {
    parts p;
    p.stop = {0.75, 1.0, 2.75};
    expect_error(write_file(p), "/trials/stop_time[1]", "after the start time 1", "1");
}

TEST(Malformed, StartAndStopLengthsDiffer) {
    parts p;
    p.stop = {0.75, 1.875};
    expect_error(write_file(p), "/trials/stop_time", "3 stop times", "2");
}

TEST(Malformed, NoTrials) {
    parts p;
    p.start = std::vector<double>{};
    p.stop = std::vector<double>{};
    p.stimulus.reset();
    expect_error(write_file(p), "/trials/start_time", "at least one trial");
}

TEST(Malformed, OverlappingTrials) {
    parts p;
    p.stop = {0.75, 2.5, 2.75};  // trial 1 runs past the start of trial 2
    expect_error(write_file(p), "/trials/stop_time[1]", "not overlap", "2.5");
}

TEST(Malformed, TrialsOutOfOrder) {
    parts p;
    p.start = {0.0, 2.0, 1.0};
    p.stop = {0.75, 2.75, 1.875};
    expect_error(write_file(p), "/trials/start_time[2]", "ascending", "1");
}

