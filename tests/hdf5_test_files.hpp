#pragma once
// Files for the native layout's loader tests, written with the HDF5 C++ API directly (never through
// rastrum's writer), so each test states in HDF5 terms what is wrong with its file.
#include <rastrum/errors.hpp>
#include <rastrum/recording.hpp>

#include <H5Cpp.h>

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace hdf5_test {

bool contains(const std::string& text, const std::string& part);

/// One file per test, named after it, in the build tree's scratch directory.
std::string scratch(const std::string& suffix = ".h5");

H5::LinkCreatPropList with_parents();

void put_f64(const H5::H5File& f, const std::string& path, const std::vector<double>& v);

template <class T>
void put_ints(const H5::H5File& f, const std::string& path, const std::vector<T>& v, const H5::PredType& file_type,
              const H5::PredType& memory_type) {
    const hsize_t n = v.size();
    const H5::DataSet ds = f.createDataSet(path, file_type, H5::DataSpace(1, &n), H5::DSetCreatPropList::DEFAULT,
                                           H5::DSetAccPropList::DEFAULT, with_parents());
    if (n > 0) ds.write(v.data(), memory_type);
}

/// Variable-length UTF-8 strings.
void put_strings(const H5::H5File& f, const std::string& path, const std::vector<std::string>& v);
void put_fixed_strings(const H5::H5File& f, const std::string& path, const std::vector<std::string>& v,
                       std::size_t width, H5T_str_t pad);
void put_string_attribute(const H5::H5File& f, const std::string& name, const std::string& value);
void put_int_attribute(const H5::H5File& f, const std::string& name, std::int64_t value);

/// A valid recording, any part of which a test can drop before adding its own malformed version.
struct parts {
    std::vector<std::pair<std::string, std::vector<double>>> units = {{"u1", {0.125, 0.5, 1.25, 2.5}},
                                                                      {"u2", {1.75, 2.25}}};
    std::optional<std::vector<double>> start = std::vector<double>{0.0, 1.0, 2.0};
    std::optional<std::vector<double>> stop = std::vector<double>{0.75, 1.875, 2.75};
    std::optional<std::vector<std::string>> stimulus = std::vector<std::string>{"a", "b", "a"};
    bool units_group = true;
    bool trials_group = true;
};

std::string write_file(const parts& p, const std::function<void(H5::H5File&)>& extra = {});

/// The input_error reading `path` throws (a test failure when there is none).
rastrum::input_error load_error(const std::string& path);

/// The three things every malformed-file message must carry: file, HDF5 path, what was expected.
void expect_error(const std::string& path, const std::string& object, const std::string& expected_part,
                  const std::string& found_part = "");

/// A recording with awkward values (a third, an empty unit, non-ASCII and empty labels).
rastrum::recording sample();

}  // namespace hdf5_test
