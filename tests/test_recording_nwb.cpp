// NWB 2.x files read through HDF5 alone. Files are written by the tests' own NWB writer
// (recording_writers.cpp, after the NWB 2.7.0 schema: Units with spike_times and its VectorIndex
// of exclusive end offsets, TimeIntervals with start_time/stop_time and user columns; hdmf-common
// DynamicTable); then single datasets are replaced with the HDF5 C++ API to make each malformed
// case, so every test states in HDF5 terms what is wrong.
#include "loader_checks.hpp"
#include "recording_writers.hpp"

#include <rastrum/format_detection.hpp>
#include <rastrum/recording_nwb.hpp>
#include <rastrum/recording_source.hpp>

#include <H5Cpp.h>
#include <gtest/gtest.h>

#include <cmath>
#include <functional>

using namespace rastrum::testing;
using rastrum::nwb_choice;
using rastrum::read_recording_nwb;

namespace {

std::string nwb_file(const rastrum::recording& rec, const nwb_writing& how = {},
                     const std::function<void(H5::H5File&)>& change = {}) {
    return hdf5_file(".nwb", [&](const std::string& path) { write_nwb(rec, path, how); }, change);
}

template <class T>
void replace(H5::H5File& f, const std::string& path, const std::vector<T>& v, const H5::PredType& file_type,
             const H5::PredType& memory_type) {
    if (f.nameExists(path)) f.unlink(path);
    const hsize_t n = v.size();
    const H5::DataSet ds = f.createDataSet(path, file_type, H5::DataSpace(1, &n));
    if (n > 0) ds.write(v.data(), memory_type);
}

void replace_index(H5::H5File& f, const std::vector<std::uint64_t>& ends) {
    replace(f, "/units/spike_times_index", ends, H5::PredType::STD_U64LE, H5::PredType::NATIVE_UINT64);
}

void replace_doubles(H5::H5File& f, const std::string& path, const std::vector<double>& v) {
    replace(f, path, v, H5::PredType::IEEE_F64LE, H5::PredType::NATIVE_DOUBLE);
}

void expect_error(const std::string& path, const std::function<void()>& read, const std::string& object,
                  const std::string& expected_part, const std::string& found_part = "") {
    const rastrum::input_error e = input_error_of(read);
    EXPECT_EQ(e.file, path);
    EXPECT_EQ(e.object, object) << e.what();
    EXPECT_TRUE(contains(e.expected, expected_part)) << e.what();
    EXPECT_TRUE(contains(e.found, found_part)) << e.what();
}

void expect_nwb_error(const std::string& path, const std::string& object, const std::string& expected_part,
                      const std::string& found_part = "") {
    expect_error(path, [&] { read_recording_nwb(path); }, object, expected_part, found_part);
}

}  // namespace

// --- what a valid file gives ------------------------------------------------------------------

TEST(NwbRead, UnitsTrialsAndLabelsAsWritten) {
    const rastrum::recording rec = invented_recording();
    const std::string path = nwb_file(rec);
    const rastrum::recording back = read_recording_nwb(path);
    expect_same_recording(back, rec);
    EXPECT_EQ(back.source, path);
    EXPECT_EQ(back.origin.format, "nwb");
    EXPECT_EQ(back.origin.format_detail, "an NWB 2.7.0 file");
    EXPECT_EQ(back.origin.units.object, "/units (ids from /units/unit_name)");
    EXPECT_EQ(back.origin.trials.object, "/intervals/trials");
    EXPECT_EQ(back.origin.labels.object, "/intervals/trials/stimulus");
    ASSERT_EQ(back.warnings.size(), 1u);  // u2 has no spikes: an empty row, equal end offsets
    EXPECT_TRUE(contains(back.warnings[0], "u2")) << back.warnings[0];
}

TEST(NwbRead, Float32TimesIntegerIdsAndLabelsNarrowIndex) {
    // Binary fractions are exact in float32, so the comparison can stay exact (NWB: "float32 times
    // are allowed", format description, data type sizes are minimums).
    const rastrum::recording rec = binary_fraction_recording();
    for (const int bits: {8, 16, 32, 64}) {
        nwb_writing how;
        how.float32_times = true;
        how.index_bits = bits;
        how.unit_name_column = false;
        how.integer_labels = true;
        const std::string path = nwb_file(rec, how);
        const rastrum::recording back = read_recording_nwb(path);
        expect_same_recording(back, rec);
        EXPECT_EQ(back.origin.units.object, "/units") << "ids from the id dataset";
    }
}

TEST(NwbRead, FixedAndVariableLengthAsciiAndUtf8Labels) {
    rastrum::recording rec = binary_fraction_recording();
    rec.stimulus = {"on", "off", "on"};
    for (const bool fixed: {false, true}) {
        for (const bool ascii: {false, true}) {
            nwb_writing how;
            how.fixed_length_labels = fixed;
            how.ascii_labels = ascii;
            expect_same_recording(read_recording_nwb(nwb_file(rec, how)), rec);
        }
    }
}

TEST(NwbRead, FloatLabelsAsShortestDecimals) {
    const std::string path = nwb_file(binary_fraction_recording(), {}, [](H5::H5File& f) {
        replace_doubles(f, "/intervals/trials/stimulus", {0.25, 3.0, 0.1});
    });
    EXPECT_EQ(read_recording_nwb(path).stimulus, (std::vector<std::string>{"0.25", "3", "0.1"}));
}

TEST(NwbRead, BooleanLabelsByTheirNames) {
    // h5py (and so PyNWB) stores bool as an HDF5 enumeration over int8 {FALSE = 0, TRUE = 1}
    // (shared formats notes, section 1, from h5py's h5t.pyx).
    const std::string path = nwb_file(binary_fraction_recording(), {}, [](H5::H5File& f) {
        f.unlink("/intervals/trials/stimulus");
        H5::EnumType type(H5::PredType::NATIVE_INT8);
        std::int8_t no = 0, yes = 1;  // insert() takes non-const pointers
        type.insert("FALSE", &no);
        type.insert("TRUE", &yes);
        const std::int8_t values[3] = {1, 0, 1};
        const hsize_t n = 3;
        f.createDataSet("/intervals/trials/stimulus", type, H5::DataSpace(1, &n)).write(values, type);
    });
    EXPECT_EQ(read_recording_nwb(path).stimulus, (std::vector<std::string>{"TRUE", "FALSE", "TRUE"}));
}

TEST(NwbRead, OtherIntervalTableAndLabelColumn) {
    const rastrum::recording rec = invented_recording();
    nwb_writing how;
    how.intervals = "flashes";
    how.label_column = "contrast";
    const std::string path = nwb_file(rec, how);
    nwb_choice choice;
    choice.intervals = "flashes";
    const rastrum::recording unlabelled = read_recording_nwb(path, choice);
    EXPECT_FALSE(unlabelled.has_stimulus()) << "no column named stimulus: no labels unless one is named";
    EXPECT_TRUE(contains(unlabelled.origin.labels_hint, "--stimulus-column")) << unlabelled.origin.labels_hint;
    EXPECT_TRUE(contains(unlabelled.origin.labels_hint, "contrast")) << unlabelled.origin.labels_hint;
    const rastrum::recording labelled = read_recording_nwb(path, choice, std::string("contrast"));
    expect_same_recording(labelled, rec);
    EXPECT_EQ(labelled.origin.labels.object, "/intervals/flashes/contrast");
}

TEST(NwbRead, UnitColumnChosenOrIdForced) {
    const std::string path = nwb_file(invented_recording());
    nwb_choice by_id;
    by_id.unit_column = "id";
    const auto ids = read_recording_nwb(path, by_id);
    EXPECT_EQ(ids.units[0].id, "0");
    EXPECT_EQ(ids.units[2].id, "2");
    EXPECT_EQ(ids.units[2].spike_times, invented_recording().units[2].spike_times) << "row 2 is u10";
    nwb_choice wrong;
    wrong.unit_column = "quality";
    const std::string message = usage_error_of([&] { read_recording_nwb(path, wrong); });
    EXPECT_TRUE(contains(message, "unit_name")) << "lists the columns there are: " << message;
}

TEST(NwbRead, UnsortedSpikesOfAUnitAreSortedWithAWarning) {
    rastrum::recording rec = binary_fraction_recording();
    const std::string path = nwb_file(rec, {}, [](H5::H5File& f) {
        replace_doubles(f, "/units/spike_times", {0.125, 0.5, 2.5, 1.25, 1.75, 2.25});
    });
    const auto back = read_recording_nwb(path);
    expect_same_recording(back, rec);
    ASSERT_EQ(back.warnings.size(), 1u);
    EXPECT_TRUE(contains(back.warnings[0], "sorted")) << back.warnings[0];
}

TEST(NwbRead, DetectedFromTheRootAttributes) {
    const std::string path = nwb_file(invented_recording());
    const auto found = rastrum::detect_format(path);
    EXPECT_EQ(found.format, rastrum::recording_format::nwb);
    EXPECT_EQ(found.detail, "an NWB 2.7.0 file");
    rastrum::recording_source source;
    source.path = path;
    expect_same_recording(rastrum::read_recording(source), invented_recording());
}

TEST(NwbRead, TablesAndColumnsForSurvey) {
    const auto tables = rastrum::nwb_tables(nwb_file(invented_recording()));
    ASSERT_EQ(tables.size(), 2u);
    EXPECT_EQ(tables[0].path, "/units");
    EXPECT_EQ(tables[0].type, "Units");
    EXPECT_EQ(tables[1].path, "/intervals/trials");
    std::vector<std::string> names;
    for (const auto& [name, what]: tables[1].columns) names.push_back(name);
    EXPECT_EQ(names, (std::vector<std::string>{"id", "start_time", "stimulus", "stop_time"}));
    for (const auto& [name, what]: tables[0].columns) {
        if (name == "spike_times") {
            EXPECT_TRUE(contains(what, "ragged")) << what;
        }
    }
}

// --- VectorIndex rules (NWB format description, "Tables and ragged arrays") --------------------

TEST(NwbMalformed, IndexRunsBackwards) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) { replace_index(f, {5, 4, 9}); });
    expect_nwb_error(path, "/units/spike_times_index[1]", "ascending", "4");
}

TEST(NwbMalformed, IndexPastTheData) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) { replace_index(f, {5, 5, 10}); });
    expect_nwb_error(path, "/units/spike_times_index[2]", "at most 9", "10");
}

TEST(NwbMalformed, SpikesThatBelongToNoUnit) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) { replace_index(f, {5, 5, 8}); });
    expect_nwb_error(path, "/units/spike_times_index[2]", "equal to the 9 elements", "8");
}

TEST(NwbMalformed, IndexLengthDiffersFromRows) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) { replace_index(f, {5, 9}); });
    expect_nwb_error(path, "/units/spike_times_index", "3 rows", "2");
}

TEST(NwbMalformed, NoIndex) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) { f.unlink("/units/spike_times_index"); });
    expect_nwb_error(path, "/units/spike_times_index", "VectorIndex", "nothing");
}

TEST(NwbMalformed, FloatIndex) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) {
        replace_doubles(f, "/units/spike_times_index", {5, 5, 9});
    });
    expect_nwb_error(path, "/units/spike_times_index", "integer", "64-bit float");
}

TEST(NwbMalformed, NanSpikeNamedByItsPlaceInSpikeTimes) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) {
        replace_doubles(f, "/units/spike_times", {0.1, 0.2, 1.5, 2.25, 9.75, 1e-300, 0.7, NAN, 3.5});
    });
    expect_nwb_error(path, "/units/spike_times[7]", "finite", "nan");
}

TEST(NwbMalformed, RepeatedUnitNames) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) {
        f.unlink("/units/unit_name");
        H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
        const char* names[] = {"a", "b", "a"};
        const hsize_t n = 3;
        f.createDataSet("/units/unit_name", t, H5::DataSpace(1, &n)).write(names, t);
    });
    expect_nwb_error(path, "/units/unit_name[2]", "differ", "twice");
}

TEST(NwbMalformed, StopBeforeStartNamesTheIntervalsTable) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) {
        replace_doubles(f, "/intervals/trials/stop_time", {0.9, 0.5, 2.9, 4.0});
    });
    expect_nwb_error(path, "/intervals/trials/stop_time[1]", "after the start time 1", "0.5");
}

TEST(NwbMalformed, LabelColumnOfOtherLength) {
    const std::string path = nwb_file(binary_fraction_recording(), {}, [](H5::H5File& f) {
        replace(f, "/intervals/trials/stimulus", std::vector<std::int64_t>{1, 2}, H5::PredType::STD_I64LE,
                H5::PredType::NATIVE_INT64);
    });
    expect_nwb_error(path, "/intervals/trials/stimulus", "3 rows", "2");
}

TEST(NwbMalformed, RaggedLabelColumn) {
    const std::string path = nwb_file(binary_fraction_recording(), {}, [](H5::H5File& f) {
        replace(f, "/intervals/trials/stimulus_index", std::vector<std::uint8_t>{1, 2, 3}, H5::PredType::STD_U8LE,
                H5::PredType::NATIVE_UINT8);
    });
    expect_nwb_error(path, "/intervals/trials/stimulus", "one value per trial", "ragged");
}

TEST(NwbMalformed, NoTrialsTableListsTheTablesThereAre) {
    nwb_writing how;
    how.intervals = "epochs";
    const std::string path = nwb_file(invented_recording(), how);
    expect_nwb_error(path, "/intervals/trials", "--intervals", "epochs");
    nwb_choice missing;
    missing.intervals = "flashes";
    EXPECT_TRUE(contains(usage_error_of([&] { read_recording_nwb(path, missing); }), "epochs"));
    EXPECT_TRUE(contains(usage_error_of([&] { read_recording_nwb(path, missing); }), "--intervals flashes"));
}

TEST(NwbMalformed, MissingLabelColumnListsTheColumns) {
    const std::string path = nwb_file(invented_recording());
    const std::string message = usage_error_of([&] { read_recording_nwb(path, {}, std::string("orientation")); });
    EXPECT_TRUE(contains(message, "--stimulus-column orientation")) << message;
    EXPECT_TRUE(contains(message, "start_time, stimulus, stop_time")) << message;
}

TEST(NwbMalformed, NoUnitsTable) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) { f.unlink("/units"); });
    expect_nwb_error(path, "/units", "Units table", "nothing");
}

TEST(NwbMalformed, VersionOneFilesAreRefused) {
    // NWB 1.x kept "NWB-1.0.x" in a root dataset nwb_version (shared formats notes, section 5; unverified).
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) {
        f.removeAttr("nwb_version");
        const H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
        f.createDataSet("/nwb_version", t, H5::DataSpace(H5S_SCALAR)).write(std::string("NWB-1.0.5"), t);
    });
    expect_nwb_error(path, "/@nwb_version", "NWB 2.x", "NWB 1.x");
    EXPECT_EQ(rastrum::detect_format(path).format, rastrum::recording_format::nwb);
}

TEST(NwbMalformed, OtherRootType) {
    const std::string path = nwb_file(invented_recording(), {}, [](H5::H5File& f) {
        f.removeAttr("neurodata_type");
        const H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
        f.createAttribute("neurodata_type", t, H5::DataSpace(H5S_SCALAR)).write(t, std::string("Units"));
    });
    expect_nwb_error(path, "/@neurodata_type", "NWBFile", "Units");
}
