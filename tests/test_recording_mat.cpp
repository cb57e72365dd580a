// MATLAB 7.3 MAT-files: HDF5 behind a 512-byte user block, one root dataset per variable with its
// MATLAB_class, cell arrays as object references into /#refs#, arrays column-major (a 1xN row
// vector is HDF5 [N, 1]), char as UTF-16 code units, empty arrays flagged MATLAB_empty (the shared
// formats notes, section 7, from MAT.jl's writer and MATLAB-written fixtures). Files come from the
// tests' own writer (recording_writers.cpp); malformed variables are then written over with the
// HDF5 C++ API.
#include "loader_checks.hpp"
#include "recording_writers.hpp"

#include <rastrum/format_detection.hpp>
#include <rastrum/recording_mat.hpp>

#include <H5Cpp.h>
#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <functional>

using namespace rastrum::testing;
using rastrum::mat_choice;
using rastrum::read_recording_mat;

namespace {

mat_choice standard_names(bool labels = true) {
    mat_choice c;
    c.spikes = "spikes";
    c.trial_start = "trial_start";
    c.trial_stop = "trial_stop";
    if (labels) c.stimulus = "stimulus";
    return c;
}

std::string mat_file(const rastrum::recording& rec, const mat_writing& how = {},
                     const std::function<void(H5::H5File&)>& change = {}) {
    return hdf5_file(".mat", [&](const std::string& path) { write_mat(rec, path, how); }, change);
}

void matlab_class(const H5::H5Object& on, const std::string& value) {
    H5::StrType t(H5::PredType::C_S1, value.size());
    on.createAttribute("MATLAB_class", t, H5::DataSpace(H5S_SCALAR)).write(t, value.data());
}

// Writes over variable `name` with a [rows x columns] MATLAB array (HDF5 [columns, rows]).
template <class T>
H5::DataSet variable(H5::H5File& f, const std::string& name, const std::string& cls, const std::vector<T>& v,
                     const H5::PredType& file_type, const H5::PredType& memory_type, hsize_t rows, hsize_t columns) {
    if (f.nameExists(name)) f.unlink(name);
    const hsize_t dims[2] = {columns, rows};
    const H5::DataSet ds = f.createDataSet(name, file_type, H5::DataSpace(2, dims));
    ds.write(v.data(), memory_type);
    matlab_class(ds, cls);
    return ds;
}

H5::DataSet doubles(H5::H5File& f, const std::string& name, const std::vector<double>& v, hsize_t rows = 1) {
    return variable(f, name, "double", v, H5::PredType::IEEE_F64LE, H5::PredType::NATIVE_DOUBLE, rows, v.size() / rows);
}

void expect_mat_error(const std::string& path, const mat_choice& choice, const std::string& object,
                      const std::string& expected_part, const std::string& found_part = "") {
    const rastrum::input_error e = input_error_of([&] { read_recording_mat(path, choice); });
    EXPECT_EQ(e.file, path);
    EXPECT_EQ(e.object, object) << e.what();
    EXPECT_TRUE(contains(e.expected, expected_part)) << e.what();
    EXPECT_TRUE(contains(e.found, found_part)) << e.what();
}

}  // namespace

// --- what a valid file gives ------------------------------------------------------------------

TEST(MatRead, RowVectorsAndCellstrLabels) {
    const rastrum::recording rec = invented_recording();
    mat_writing how;
    how.unit_id_variable = true;  // u1, u2, u10: the default ids would be u1, u2, u3
    mat_choice names = standard_names();
    names.unit_ids = "ids";
    const std::string path = mat_file(rec, how);
    const rastrum::recording back = read_recording_mat(path, names);
    expect_same_recording(back, rec);
    EXPECT_EQ(back.origin.format, "mat");
    EXPECT_EQ(back.origin.units.object, "spikes (ids from ids)");
    EXPECT_EQ(back.origin.labels.object, "stimulus");
    ASSERT_EQ(back.warnings.size(), 1u);  // u2 is an empty cell element (MATLAB_empty)
    EXPECT_TRUE(contains(back.warnings[0], "u2"));
}

TEST(MatRead, ColumnVectorsSingleTimesNumericLabelsAndUnitIds) {
    const rastrum::recording rec = binary_fraction_recording();  // exact in single
    mat_writing how;
    how.row_vectors = false;
    how.single_times = true;
    how.numeric_labels = true;
    how.unit_id_variable = true;
    mat_choice names = standard_names();
    names.unit_ids = "ids";
    expect_same_recording(read_recording_mat(mat_file(rec, how), names), rec);
}

TEST(MatRead, UnitsAreNumberedWithoutAnIdVariable) {
    rastrum::recording rec = binary_fraction_recording();
    const auto back = read_recording_mat(mat_file(rec), standard_names());
    ASSERT_EQ(back.units.size(), 2u);
    EXPECT_EQ(back.units[0].id, "u1");  // the cell {1}
    EXPECT_EQ(back.units[1].id, "u2");
    EXPECT_EQ(back.units[0].spike_times, rec.units[0].spike_times);
}

TEST(MatRead, CharsOutsideTheBasicPlaneAndEmptyLabels) {
    rastrum::recording rec = binary_fraction_recording();
    rec.stimulus = {"\xf0\x9f\x90\x81 mouse", "", "\xe2\x82\xac"};  // U+1F401 needs a UTF-16 surrogate pair
    EXPECT_EQ(read_recording_mat(mat_file(rec), standard_names()).stimulus, rec.stimulus);
}

TEST(MatRead, UnlabelledWithoutStimulusVariable) {
    const auto back = read_recording_mat(mat_file(invented_recording()), standard_names(false));
    EXPECT_FALSE(back.has_stimulus());
    EXPECT_TRUE(contains(back.origin.labels_hint, "--mat-stimulus"));
}

TEST(MatRead, DetectedFromTheUserBlockAndVariablesListed) {
    const std::string path = mat_file(invented_recording());
    const auto found = rastrum::detect_format(path);
    EXPECT_EQ(found.format, rastrum::recording_format::mat);
    EXPECT_TRUE(contains(found.detail, "MATLAB 7.3 MAT-file, Platform: GLNXA64")) << found.detail;
    const auto variables = rastrum::mat_variables(path);
    ASSERT_EQ(variables.size(), 4u);  // #refs# is not a variable
    EXPECT_EQ(variables[0], (std::pair<std::string, std::string>{"spikes", "cell 1x3"}));
    EXPECT_EQ(variables[3], (std::pair<std::string, std::string>{"trial_stop", "double 1x4"}));
}

TEST(MatRead, OlderMatFilesAreNotHdf5AndSaySo) {
    const std::string path = scratch(".mat");
    {
        std::string header = "MATLAB 5.0 MAT-file, Platform: GLNXA64, Created on: Thu Jan  1 00:00:00 2026";
        header.resize(128, ' ');
        std::ofstream(path, std::ios::binary) << header;
    }
    const auto e = input_error_of([&] { rastrum::detect_format(path); });
    EXPECT_TRUE(contains(e.expected, "-v7.3")) << e.what();
    EXPECT_TRUE(contains(e.found, "MATLAB 5.0")) << e.what();
}

// --- names the user must give -----------------------------------------------------------------

TEST(MatNames, MissingNamesListTheVariables) {
    const std::string path = mat_file(invented_recording());
    mat_choice none;
    const std::string message = usage_error_of([&] { read_recording_mat(path, none); });
    EXPECT_TRUE(contains(message, "--mat-spikes")) << message;
    EXPECT_TRUE(contains(message, "spikes (cell 1x3)")) << message;
    mat_choice wrong = standard_names();
    wrong.trial_stop = "t_off";
    const std::string missing = usage_error_of([&] { read_recording_mat(path, wrong); });
    EXPECT_TRUE(contains(missing, "--mat-trial-stop t_off")) << missing;
    EXPECT_TRUE(contains(missing, "trial_start (double 1x4)")) << missing;
}

// --- MATLAB classes and shapes rastrum cannot read (each message says what to save instead) ----

TEST(MatMalformed, SpikesAsAMatrixNotACell) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) { doubles(f, "spikes", {1, 2, 3, 4}, 2); });
    expect_mat_error(path, standard_names(), "spikes", "cell array", "double 2x2 matrix");
}

TEST(MatMalformed, SpikesAsOneVectorSuggestsACell) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) { doubles(f, "spikes", {1, 2, 3}); });
    expect_mat_error(path, standard_names(), "spikes", "cell array", "save {spikes}");
}

TEST(MatMalformed, StructSaysSaveItsFields) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) {
        f.unlink("trial_start");
        const H5::Group g = f.createGroup("trial_start");
        matlab_class(g, "struct");
    });
    expect_mat_error(path, standard_names(), "trial_start", "double vector", "'-struct'");
}

// MATLAB saves class objects (string, table, ...) as uint32 handles into #subsystem#, flagged
// MATLAB_object_decode (shared formats notes, section 7); the handle values here are invented.
void opaque_object(H5::H5File& f, const std::string& name, const std::string& cls) {
    const std::vector<std::uint32_t> opaque = {0xdd000000, 2, 1, 1};
    const H5::DataSet ds = variable(f, name, cls, opaque, H5::PredType::STD_U32LE, H5::PredType::NATIVE_UINT32, 1, 4);
    ds.createAttribute("MATLAB_object_decode", H5::PredType::STD_I32LE, H5::DataSpace(H5S_SCALAR))
        .write(H5::PredType::NATIVE_INT32, std::vector<std::int32_t>{3}.data());
}

TEST(MatMalformed, StringArraySaysCellstr) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) { opaque_object(f, "stimulus", "string"); });
    expect_mat_error(path, standard_names(), "stimulus", "cell array of char vectors", "cellstr(stimulus)");
}

TEST(MatMalformed, TableObjectIsRefused) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) { opaque_object(f, "trial_stop", "table"); });
    expect_mat_error(path, standard_names(), "trial_stop", "double vector", "table object");
}

TEST(MatMalformed, SparseSaysFull) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) {
        f.unlink("trial_start");
        const H5::Group g = f.createGroup("trial_start");
        matlab_class(g, "double");
        const std::uint64_t rows = 4;
        g.createAttribute("MATLAB_sparse", H5::PredType::STD_U64LE, H5::DataSpace(H5S_SCALAR))
            .write(H5::PredType::NATIVE_UINT64, &rows);
    });
    expect_mat_error(path, standard_names(), "trial_start", "double vector", "full(trial_start)");
}

TEST(MatMalformed, IntegerTimesSayDouble) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) {
        variable(f, "trial_start", "int32", std::vector<std::int32_t>{0, 1, 2, 3}, H5::PredType::STD_I32LE,
                 H5::PredType::NATIVE_INT32, 1, 4);
    });
    expect_mat_error(path, standard_names(), "trial_start", "double vector", "double(trial_start)");
}

TEST(MatMalformed, TimesAsAMatrix) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) {
        doubles(f, "trial_stop", {0.9, 2.0, 2.9, 4.0}, 2);
    });
    expect_mat_error(path, standard_names(), "trial_stop", "double vector", "double 2x2 matrix");
}

TEST(MatMalformed, CharMatrixLabelsSayCellstr) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) {
        variable(f, "stimulus", "char", std::vector<std::uint16_t>{'a', 'b', 'a', 'b'}, H5::PredType::STD_U16LE,
                 H5::PredType::NATIVE_UINT16, 1, 4);
    });
    expect_mat_error(path, standard_names(), "stimulus", "cell array of char vectors", "cellstr(stimulus)");
}

TEST(MatMalformed, NanInACellIsNamedTheMatlabWay) {
    rastrum::recording rec = invented_recording();
    rec.units[2].spike_times[1] = NAN;
    expect_mat_error(mat_file(rec), standard_names(), "spikes{3}(2)", "finite", "nan");
}

TEST(MatMalformed, StopBeforeStartIsNamedTheMatlabWay) {
    rastrum::recording rec = invented_recording();
    rec.trial_stop[1] = 0.5;
    expect_mat_error(mat_file(rec), standard_names(), "trial_stop(2)", "after the start time 1", "0.5");
}

TEST(MatMalformed, LabelsOfOtherLength) {
    rastrum::recording rec = invented_recording();
    const std::string path = mat_file(rec, {}, [](H5::H5File& f) { doubles(f, "stimulus", {1, 2, 3}); });
    expect_mat_error(path, standard_names(), "stimulus", "4 labels", "3");
}

TEST(MatMalformed, NanLabelIsNamedTheMatlabWay) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) { doubles(f, "stimulus", {1, 2, NAN, 3}); });
    expect_mat_error(path, standard_names(), "stimulus(3)", "finite", "nan");
}

TEST(MatMalformed, LoneSurrogateInAChar) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) {
        variable(f, "/#refs#/bad", "char", std::vector<std::uint16_t>{'x', 0xd800}, H5::PredType::STD_U16LE,
                 H5::PredType::NATIVE_UINT16, 1, 2);
        hobj_ref_t refs[4];
        for (int i = 0; i < 4; ++i) f.reference(&refs[i], "/#refs#/bad");
        f.unlink("stimulus");
        const hsize_t dims[2] = {4, 1};
        const H5::DataSet ds = f.createDataSet("stimulus", H5::PredType::STD_REF_OBJ, H5::DataSpace(2, dims));
        ds.write(refs, H5::PredType::STD_REF_OBJ);
        matlab_class(ds, "cell");
    });
    expect_mat_error(path, standard_names(), "stimulus{1}(2)", "UTF-16", "55296");
}

TEST(MatMalformed, EmptyCellHasNoUnits) {
    rastrum::recording rec = invented_recording();
    rec.units.clear();
    expect_mat_error(mat_file(rec), standard_names(), "spikes", "at least one unit");
}

TEST(MatMalformed, TwoCellsSharingOneArray) {
    const std::string path = mat_file(invented_recording(), {}, [](H5::H5File& f) {
        hobj_ref_t refs[2];
        f.reference(&refs[0], "/#refs#/c0");
        f.reference(&refs[1], "/#refs#/c0");
        f.unlink("spikes");
        const hsize_t dims[2] = {2, 1};
        const H5::DataSet ds = f.createDataSet("spikes", H5::PredType::STD_REF_OBJ, H5::DataSpace(2, dims));
        ds.write(refs, H5::PredType::STD_REF_OBJ);
        matlab_class(ds, "cell");
    });
    expect_mat_error(path, standard_names(false), "spikes{2}", "of its own", "same array as spikes{1}");
}

TEST(MatMalformed, OverlongLabel) {
    rastrum::recording rec = invented_recording();
    rec.stimulus[1] = std::string(5000, 'x');
    expect_mat_error(mat_file(rec), standard_names(), "stimulus{2}", "at most 4096 characters", "char 1x5000");
}
