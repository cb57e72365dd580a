#include "hdf5_test_files.hpp"

#include <rastrum/recording_hdf5.hpp>

#include <gtest/gtest.h>

#include <filesystem>
#include <stdexcept>

namespace fs = std::filesystem;

namespace hdf5_test {

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

std::string scratch(const std::string& suffix) {
    const auto* info = ::testing::UnitTest::GetInstance()->current_test_info();
    const fs::path dir = fs::path(RASTRUM_TEST_TMP) / "recording_hdf5";
    fs::create_directories(dir);
    const fs::path file = dir / (std::string(info->test_suite_name()) + "." + info->name() + suffix);
    fs::remove(file);
    return file.string();
}

H5::LinkCreatPropList with_parents() {
    H5::LinkCreatPropList lcpl;
    lcpl.setCreateIntermediateGroup(true);
    return lcpl;
}

void put_f64(const H5::H5File& f, const std::string& path, const std::vector<double>& v) {
    const hsize_t n = v.size();
    const H5::DataSet ds = f.createDataSet(path, H5::PredType::IEEE_F64LE, H5::DataSpace(1, &n),
                                           H5::DSetCreatPropList::DEFAULT, H5::DSetAccPropList::DEFAULT,
                                           with_parents());
    if (n > 0) ds.write(v.data(), H5::PredType::NATIVE_DOUBLE);
}

void put_strings(const H5::H5File& f, const std::string& path, const std::vector<std::string>& v) {
    const hsize_t n = v.size();
    H5::StrType type(H5::PredType::C_S1, H5T_VARIABLE);
    type.setCset(H5T_CSET_UTF8);
    std::vector<const char*> pointers;
    for (const auto& s: v) pointers.push_back(s.c_str());
    const H5::DataSet ds = f.createDataSet(path, type, H5::DataSpace(1, &n), H5::DSetCreatPropList::DEFAULT,
                                           H5::DSetAccPropList::DEFAULT, with_parents());
    if (n > 0) ds.write(pointers.data(), type);
}

void put_fixed_strings(const H5::H5File& f, const std::string& path, const std::vector<std::string>& v,
                       std::size_t width, H5T_str_t pad) {
    const hsize_t n = v.size();
    H5::StrType type(H5::PredType::C_S1, width);
    type.setStrpad(pad);
    std::string buffer;
    for (const auto& s: v) {
        std::string cell = s;
        cell.resize(width, pad == H5T_STR_SPACEPAD ? ' ' : '\0');
        buffer += cell;
    }
    const H5::DataSet ds = f.createDataSet(path, type, H5::DataSpace(1, &n), H5::DSetCreatPropList::DEFAULT,
                                           H5::DSetAccPropList::DEFAULT, with_parents());
    ds.write(buffer.data(), type);
}

void put_string_attribute(const H5::H5File& f, const std::string& name, const std::string& value) {
    H5::StrType type(H5::PredType::C_S1, H5T_VARIABLE);
    type.setCset(H5T_CSET_UTF8);
    f.createAttribute(name, type, H5::DataSpace(H5S_SCALAR)).write(type, value);
}

void put_int_attribute(const H5::H5File& f, const std::string& name, std::int64_t value) {
    f.createAttribute(name, H5::PredType::STD_I64LE, H5::DataSpace(H5S_SCALAR)).write(H5::PredType::NATIVE_INT64, &value);
}

std::string write_file(const parts& p, const std::function<void(H5::H5File&)>& extra) {
    const std::string path = scratch();
    H5::H5File f(path, H5F_ACC_TRUNC);
    if (p.units_group) f.createGroup("/units");
    for (const auto& [id, times]: p.units) put_f64(f, "/units/" + id + "/spike_times", times);
    if (p.trials_group) f.createGroup("/trials");
    if (p.start) put_f64(f, "/trials/start_time", *p.start);
    if (p.stop) put_f64(f, "/trials/stop_time", *p.stop);
    if (p.stimulus) put_strings(f, "/trials/stimulus", *p.stimulus);
    if (extra) extra(f);
    f.close();
    return path;
}

rastrum::input_error load_error(const std::string& path) {
    try {
        rastrum::read_recording_hdf5(path);
    } catch (const rastrum::input_error& e) {
        return e;
    }
    throw std::runtime_error("expected an input_error reading " + path + ", none was thrown");
}

void expect_error(const std::string& path, const std::string& object, const std::string& expected_part,
                  const std::string& found_part) {
    const rastrum::input_error e = load_error(path);
    EXPECT_EQ(e.file, path);
    EXPECT_EQ(e.object, object) << e.what();
    EXPECT_TRUE(contains(e.expected, expected_part)) << e.what();
    EXPECT_TRUE(contains(e.found, found_part)) << e.what();
    EXPECT_TRUE(contains(e.what(), path)) << e.what();
}

rastrum::recording sample() {
    rastrum::recording rec;
    rec.units = {{"u1", {0.1, 1.0 / 3.0, 1.5, 2.0 - 1e-12}},
                 {"u2", {}},
                 {"u10", {1e-300, 0.7, 123456.789}}};
    rec.trial_start = {0.0, 1.0, 2.0};
    rec.trial_stop = {0.9, 2.0, 2.9};
    rec.stimulus = {"Grüße", "7", ""};
    return rec;
}

}  // namespace hdf5_test
