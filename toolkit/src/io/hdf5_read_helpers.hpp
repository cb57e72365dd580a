#pragma once
/// Checked reading of HDF5 files for every loader (native layout, NWB): each failure becomes an
/// input_error naming the file, the HDF5 path (with element index or "@attribute"), what was
/// expected and what was found. Nothing is allocated for a dataset before its declared size has
/// been compared with what the file could hold.
#include <rastrum/errors.hpp>

#include <H5Cpp.h>

#include <cstddef>
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

namespace rastrum::hdf5 {

/// Stops the HDF5 library printing its error stack to stderr. Idempotent.
void quiet_library();

/// While one is alive, the innermost message of each HDF5 failure is kept for library_message
/// instead of printed; when the last one goes, the library is left silent. Scoped rather than
/// installed for good because HDF5 1.10 fails to shut down at exit ("infinite loop closing
/// library") when an application error handler is still set after it met a corrupt file.
class error_capture {
public:
    error_capture();
    ~error_capture();
    error_capture(const error_capture&) = delete;
    error_capture& operator=(const error_capture&) = delete;
};

/// What the HDF5 library said about the failure behind `e`: the innermost message of its error
/// stack when an error_capture kept one, else the exception's own text.
std::string library_message(const H5::Exception& e);
/// The same for a failed write to the file `written` (a temporary): the system's reason when the
/// library quotes one ("No space left on device"), else its message with `written` left out, so
/// that the user is never shown a temporary's name.
std::string write_failure(const H5::Exception& e, const std::string& written);
/// Drops a captured message, so a later exception is not explained by an earlier failure.
void forget_library_message();

/// "/units/u3/spike_times[17]"
std::string element_path(const std::string& object, std::size_t index);
/// "/@layout", "/trials@units": an attribute named like the object it hangs on.
std::string attribute_path(const std::string& object, const std::string& name);

/// Byte offset of the first byte that does not start a valid UTF-8 sequence (overlong forms,
/// surrogates and code points above U+10FFFF are invalid), or std::string::npos.
std::size_t invalid_utf8_offset(const std::string& text);

/// For messages: "64-bit float", "32-bit signed integer", "variable-length string", "compound", ...
std::string describe_type(const H5::DataType& type);

/// Whether the file carries the HDF5 signature (at offset 0 or after a user block of 512, 1024, ...
/// bytes). Throws input_error when the library cannot tell.
bool has_signature(const std::string& path);

/// What an HDF5 path names.
enum class object_kind { missing, group, dataset, other };

/// A dataset's shape, checked to be one of the shapes a reader accepts.
struct extent_1d {
    std::size_t elements = 0;
};

/// The shapes a reader accepts for a list of values.
enum class shape {
    one_dimensional,  // [n]
    matlab_vector,    // MATLAB's 1xn or nx1, stored as HDF5 [n, 1] or [1, n] (column-major); [n] too
};

/// What a label dataset may hold.
enum class label_types {
    integers_and_text,  // the native layout: a float label is more likely a mistake than a condition
    numbers_and_text,   // NWB and MAT-files, where conditions are often floats (a contrast, an angle)
};

/// Largest element count any helper reads: beyond this a declared size is taken as corrupt.
constexpr std::uint64_t max_elements = std::uint64_t{1} << 31;

/// One HDF5 file opened read-only for a loader.
class source {
public:
    /// Throws input_error when `path` does not exist, is not a regular readable file, is not HDF5,
    /// or HDF5 cannot open it (a truncated file, for example).
    explicit source(std::string path);

    const std::string& path() const { return path_; }
    H5::H5File& file() { return file_; }
    /// Bytes on disk, the bound for every declared dataset size.
    std::uint64_t file_size() const { return file_size_; }

    /// Runs `f`, turning an H5::Exception into input_error{path, object, expected, library message}.
    template <class F>
    auto guard(const std::string& object, const std::string& expected, F&& f) -> decltype(f()) {
        try {
            forget_library_message();
            return f();
        } catch (const H5::Exception& e) {
            throw input_error(path_, object, expected, "an HDF5 error: " + library_message(e));
        }
    }

    /// Walks `object` ("/a/b/c") link by link, so a missing or non-group ancestor is told apart
    /// from a missing final name. Absolute paths only.
    object_kind kind(const std::string& object);
    bool exists(const std::string& object) { return kind(object) != object_kind::missing; }

    /// The group at `object`; `expected` describes it for the message when it is missing or is
    /// something else. A missing ancestor is reported at the ancestor's path.
    H5::Group group(const std::string& object, const std::string& expected);
    /// The dataset at `object`, as above.
    H5::DataSet dataset(const std::string& object, const std::string& expected);

    /// Names of the links in a group, in HDF5's name order (byte order), each checked to be UTF-8.
    std::vector<std::string> member_names(const std::string& group_path);

    /// A dataset of any float class, converted to double.
    std::vector<double> read_float64(const std::string& object, shape accepted = shape::one_dimensional);
    /// How many elements read_float64 would read, with every check it makes, reading none of them.
    std::size_t float64_count(const std::string& object, shape accepted = shape::one_dimensional);
    /// Elements [first, first + count) of a 1-D dataset of any float class (a hyperslab), as double.
    std::vector<double> read_float64_range(const std::string& object, std::size_t first, std::size_t count);
    /// A dataset of any integer class that fits in int64.
    std::vector<std::int64_t> read_int64(const std::string& object, shape accepted = shape::one_dimensional);
    /// A one-dimensional dataset of strings, variable- or fixed-length, each checked to be UTF-8.
    std::vector<std::string> read_strings(const std::string& object);
    /// Labels: integers (any width, as decimal text), strings, and with numbers_and_text also
    /// finite floats (as the shortest decimal that reads back as the same value: 0.25, 3) and
    /// enumerations (as their members' names: NWB's booleans read FALSE and TRUE).
    std::vector<std::string> read_labels(const std::string& object, label_types accepted = label_types::integers_and_text,
                                         shape accepted_shape = shape::one_dimensional);
    /// Object references (H5T_STD_REF_OBJ), as the paths of the objects they point to.
    std::vector<std::string> read_reference_paths(const std::string& object, shape accepted = shape::one_dimensional);
    /// The HDF5 dimensions of a dataset, as stored (C order), for readers that check shapes
    /// themselves; every dimension checked as checked_extent does.
    std::vector<std::uint64_t> dimensions(const std::string& object);

    bool has_attribute(const std::string& object, const std::string& name);
    /// A scalar (or one-element) string attribute.
    std::string read_string_attribute(const std::string& object, const std::string& name);
    /// A scalar (or one-element) integer attribute that fits in int64.
    std::int64_t read_int64_attribute(const std::string& object, const std::string& name);

private:
    // Checks the shape and that `elements` x `stored_bytes_per_element` could be in this file.
    extent_1d checked_extent(const H5::DataSet& dataset, const std::string& object, const std::string& expected,
                             shape accepted = shape::one_dimensional);
    // Checks that the declared dimensions could be in this file (at most 2^31 elements, and no
    // more bytes than the file holds, or 1032 times that when filtered).
    std::vector<std::uint64_t> checked_dimensions(const H5::DataSet& dataset, const std::string& object,
                                                  const std::string& expected);
    // The element count of a float dataset, its class and shape checked.
    std::size_t float_extent(const H5::DataSet& ds, const std::string& object, shape accepted);
    std::vector<std::string> read_enum_names(const H5::DataSet& dataset, std::size_t elements, const std::string& object);
    std::vector<std::string> read_string_elements(const H5::DataSet& dataset, const H5::StrType& type,
                                                  std::size_t elements, const std::string& object);

    std::string path_;
    error_capture capture_;  // declared before file_, so it outlives the file's closing
    H5::H5File file_;
    std::uint64_t file_size_ = 0;
};

/// Shared by this reader's own sources (hdf5_read_helpers.cpp for structure and numbers,
/// hdf5_read_text.cpp for strings, labels and attributes); not for loaders.
namespace detail {
/// The innermost message of the last failed library call, kept while an error_capture lives.
std::string& captured_message();
std::string bytes_text(std::uint64_t bytes);
std::string hex_byte(unsigned char byte);
/// "elements of type 32-bit float", for messages.
std::string of_type(const H5::DataType& type);
/// Unsigned integers of 64 bits hold values int64 cannot.
bool is_wide_unsigned(const H5::DataType& type);
/// Integers of any width and sign as int64; uint64 values beyond int64 are an error at their index.
std::vector<std::int64_t> read_integers(const H5::DataSet& dataset, std::size_t n, const std::string& file,
                                        const std::string& object);
/// Refuses integer types wider than 64 bits.
void require_integer_width(const H5::DataType& type, const std::string& file, const std::string& object,
                           const std::string& expected);
}  // namespace detail

}  // namespace rastrum::hdf5
