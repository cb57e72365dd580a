#include "hdf5_read_helpers.hpp"
#include "loader_steps.hpp"

#include <rastrum/format.hpp>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <functional>
#include <optional>
#include <regex>
#include <limits>

namespace rastrum::hdf5 {

namespace detail {

// The innermost message of the last failed library call. HDF5 clears its error stack at the next
// API call, which may happen while an exception unwinds (closing an identifier), so the message is
// copied out when the failure happens rather than read from the stack later.
std::string& captured_message() {
    static thread_local std::string message;
    return message;
}

}  // namespace detail

using namespace detail;

namespace {

herr_t keep_innermost(unsigned n, const H5E_error2_t* entry, void* out) {
    if (n == 0 && entry != nullptr && entry->desc != nullptr) *static_cast<std::string*>(out) = entry->desc;
    return 0;
}

herr_t capture_instead_of_printing(hid_t stack, void*) {
    std::string innermost;
    H5Ewalk2(stack, H5E_WALK_UPWARD, keep_innermost, &innermost);  // upward: the innermost comes first
    captured_message() = innermost;
    return 0;
}

// Deflate, the one filter every HDF5 build has, cannot shrink data by more than about 1032:1, so a
// filtered dataset declaring more than this many times the file size cannot be real data.
constexpr std::uint64_t max_compression_ratio = 1032;


// A name that may hold invalid UTF-8, made safe to print: bytes above 0x7f as \xNN.
std::string printable(const std::string& text) {
    std::string out;
    for (const char c: text) {
        const auto byte = static_cast<unsigned char>(c);
        if (byte < 0x80) {
            out += c;
        } else {
            out += "\\x" + hex_byte(byte).substr(2);
        }
    }
    return out;
}

std::string kind_name(object_kind kind) {
    switch (kind) {
    case object_kind::missing: return "nothing";
    case object_kind::group: return "a group";
    case object_kind::dataset: return "a dataset";
    case object_kind::other: return "an object that is neither group nor dataset";
    }
    return "an unknown object";
}

object_kind kind_of(H5O_type_t type) {
    switch (type) {
    case H5O_TYPE_GROUP: return object_kind::group;
    case H5O_TYPE_DATASET: return object_kind::dataset;
    default: return object_kind::other;
    }
}

}  // namespace

namespace detail {

std::string bytes_text(std::uint64_t bytes) { return std::to_string(bytes) + " bytes"; }

std::string hex_byte(unsigned char byte) {
    static const char digits[] = "0123456789abcdef";
    return std::string("0x") + digits[byte >> 4] + digits[byte & 15];
}

std::string of_type(const H5::DataType& type) { return "elements of type " + describe_type(type); }

}  // namespace detail

void quiet_library() { H5::Exception::dontPrint(); }

namespace {
// Per thread: a thread-safe HDF5 keeps one error stack, and one automatic handler, per thread, and
// units read on demand may be read from any worker thread (one at a time).
thread_local int captures_alive = 0;
}  // namespace

error_capture::error_capture() {
    // Set each time the first one starts, not once: other code may have reset the handler since.
    if (captures_alive++ == 0) H5Eset_auto2(H5E_DEFAULT, capture_instead_of_printing, nullptr);
}

error_capture::~error_capture() {
    if (--captures_alive == 0) quiet_library();
}

void forget_library_message() { captured_message().clear(); }

std::string library_message(const H5::Exception& e) {
    std::string message = std::move(captured_message());
    captured_message().clear();
    if (message.empty()) message = e.getDetailMsg();
    // The library's words for a file cut short name its internals; say it in the user's terms.
    static const std::regex truncated(R"(truncated file: eof = (\d+), sblock->base_addr = \d+, stored_eof = (\d+))");
    std::smatch m;
    if (std::regex_search(message, m, truncated)) {
        return "truncated file: it holds " + m[1].str() + " bytes of the " + m[2].str() +
               " its header declares (an interrupted copy or download?)";
    }
    return message;
}

std::string write_failure(const H5::Exception& e, const std::string& written) {
    std::string message = library_message(e);
    // "file write failed: time = ..., filename = '...', ..., errno = 28, error message = 'No space left on device', ..."
    static const std::regex system_reason(R"(error message = '([^']*)')");
    std::smatch m;
    if (std::regex_search(message, m, system_reason)) return m[1].str();
    for (auto at = message.find(written); !written.empty() && at != std::string::npos; at = message.find(written)) {
        message.replace(at, written.size(), "the file");
    }
    return message;
}

std::string element_path(const std::string& object, std::size_t index) {
    return object + "[" + std::to_string(index) + "]";
}

std::string attribute_path(const std::string& object, const std::string& name) { return object + "@" + name; }

std::size_t invalid_utf8_offset(const std::string& text) {
    const auto* s = reinterpret_cast<const unsigned char*>(text.data());
    const std::size_t n = text.size();
    std::size_t i = 0;
    while (i < n) {
        const unsigned char c = s[i];
        std::size_t length = 0;
        std::uint32_t code = 0;
        std::uint32_t smallest = 0;  // below this the sequence is an overlong form
        if (c < 0x80) {
            ++i;
            continue;
        } else if ((c & 0xe0) == 0xc0) {
            length = 2, code = c & 0x1fu, smallest = 0x80;
        } else if ((c & 0xf0) == 0xe0) {
            length = 3, code = c & 0x0fu, smallest = 0x800;
        } else if ((c & 0xf8) == 0xf0) {
            length = 4, code = c & 0x07u, smallest = 0x10000;
        } else {
            return i;
        }
        if (i + length > n) return i;
        for (std::size_t k = 1; k < length; ++k) {
            if ((s[i + k] & 0xc0) != 0x80) return i;
            code = (code << 6) | (s[i + k] & 0x3fu);
        }
        if (code < smallest || code > 0x10ffff || (code >= 0xd800 && code <= 0xdfff)) return i;
        i += length;
    }
    return std::string::npos;
}

std::string describe_type(const H5::DataType& type) {
    const hid_t tid = type.getId();
    const std::string bits = std::to_string(8 * H5Tget_size(tid)) + "-bit ";
    switch (H5Tget_class(tid)) {
    case H5T_INTEGER: return bits + (H5Tget_sign(tid) == H5T_SGN_NONE ? "unsigned" : "signed") + " integer";
    case H5T_FLOAT: return bits + "float";
    case H5T_STRING:
        return H5Tis_variable_str(tid) > 0 ? "variable-length string"
                                           : "fixed-length string of " + std::to_string(H5Tget_size(tid)) + " bytes";
    case H5T_COMPOUND: return "compound (record)";
    case H5T_ENUM: return "enumeration";
    case H5T_ARRAY: return "array";
    case H5T_VLEN: return "variable-length sequence";
    case H5T_REFERENCE: return "reference";
    case H5T_OPAQUE: return "opaque";
    case H5T_BITFIELD: return "bitfield";
    case H5T_TIME: return "time";
    default: return "unknown type";
    }
}

bool has_signature(const std::string& path) {
    const error_capture capture;
    try {
        forget_library_message();
        return H5::H5File::isHdf5(path);
    } catch (const H5::Exception& e) {
        throw input_error(path, "", "an HDF5 file", "an HDF5 error: " + library_message(e));
    }
}

source::source(std::string path): path_(std::move(path)) {
    require_readable_file(path_, "HDF5 file", "an");
    if (!has_signature(path_)) throw input_error(path_, "", "an HDF5 file", "a file without the HDF5 signature");
    guard("", "an HDF5 file that the HDF5 library can open", [&] { file_.openFile(path_, H5F_ACC_RDONLY); });
    file_size_ = guard("", "an HDF5 file of known size", [&] { return file_.getFileSize(); });
}

namespace {
// Where a path stops resolving: the object itself, or the first ancestor that is missing or not
// a group (then `kind` is what that ancestor is).
struct resolution {
    object_kind kind;
    std::string at;
    std::string link;  // what a link that leads nowhere is, for messages; empty otherwise
};

// The target of the soft link at `path`, made printable and short.
std::string soft_link_target(hid_t loc, const std::string& path, std::size_t size) {
    std::string target(std::min<std::size_t>(size, 4096) + 1, '\0');
    if (H5Lget_val(loc, path.c_str(), target.data(), target.size(), H5P_DEFAULT) < 0) return "?";
    target.resize(std::strlen(target.c_str()));
    return printable(target.substr(0, 200));
}

resolution resolve(H5::H5File& file, const std::string& file_path, const std::string& object) {
    if (object.empty() || object[0] != '/') throw internal_error("HDF5 path not absolute: " + object);
    if (object == "/") return {object_kind::group, object, ""};
    const hid_t loc = file.getId();
    std::size_t from = 1;
    while (true) {
        const std::size_t slash = object.find('/', from);
        const std::string prefix = object.substr(0, slash);
        captured_message().clear();
        const htri_t link = H5Lexists(loc, prefix.c_str(), H5P_DEFAULT);
        if (link < 0) {
            throw input_error(file_path, prefix, "a readable link", "an HDF5 error: " + captured_message());
        }
        if (link == 0) return {object_kind::missing, prefix, ""};
        // An external link is not followed: the recording is this one file, and opening whatever a
        // link names (a missing file, a device, a pipe that blocks) is not a loader's business.
        H5L_info_t info{};
        if (H5Lget_info(loc, prefix.c_str(), &info, H5P_DEFAULT) >= 0 && info.type == H5L_TYPE_EXTERNAL) {
            return {object_kind::missing, prefix, "an external link to another file (rastrum reads one file and does not follow it)"};
        }
        // A soft link may name nothing, or loop back on itself (HDF5 stops after a fixed number of
        // hops); either is as missing as no link, and the message says which link it was.
        if (H5Oexists_by_name(loc, prefix.c_str(), H5P_DEFAULT) <= 0) {
            const std::string target = info.type == H5L_TYPE_SOFT ? soft_link_target(loc, prefix, info.u.val_size) : "";
            return {object_kind::missing, prefix,
                    "a soft link to " + target + " that leads to no object (dangling, or a cycle of soft links)"};
        }
        H5O_type_t type = H5O_TYPE_UNKNOWN;
        try {
            type = file.childObjType(prefix);
        } catch (const H5::Exception& e) {
            throw input_error(file_path, prefix, "an intact, readable HDF5 object", "an HDF5 error: " + library_message(e));
        }
        const object_kind kind = kind_of(type);
        if (slash == std::string::npos || kind != object_kind::group) return {kind, prefix, ""};
        from = slash + 1;
    }
}
}  // namespace

object_kind source::kind(const std::string& object) {
    const resolution r = resolve(file_, path_, object);
    return r.at == object ? r.kind : object_kind::missing;
}

namespace {
void require_kind(const std::string& file, const std::string& object, const resolution& r, object_kind wanted,
                  const std::string& expected) {
    const std::string found = r.link.empty() ? kind_name(r.kind) : r.link;
    if (r.at != object) throw input_error(file, r.at, "a group (on the way to " + object + ")", found);
    if (r.kind != wanted) throw input_error(file, object, expected, found);
}
}  // namespace

H5::Group source::group(const std::string& object, const std::string& expected) {
    require_kind(path_, object, resolve(file_, path_, object), object_kind::group, expected);
    return guard(object, expected, [&] { return file_.openGroup(object); });
}

H5::DataSet source::dataset(const std::string& object, const std::string& expected) {
    require_kind(path_, object, resolve(file_, path_, object), object_kind::dataset, expected);
    return guard(object, expected, [&] { return file_.openDataSet(object); });
}

namespace {
/// H5Literate's callback: appends each link's name (nothing may be thrown through the library).
herr_t append_link_name(hid_t, const char* name, const H5L_info_t*, void* names) {
    try {
        static_cast<std::vector<std::string>*>(names)->emplace_back(name);
        return 0;
    } catch (...) {
        return -1;
    }
}
}  // namespace

std::vector<std::string> source::member_names(const std::string& group_path) {
    H5::Group g = group(group_path, "a group");
    const std::string base = group_path == "/" ? "/" : group_path + "/";
    std::vector<std::string> names = guard(group_path, "a group whose members can be listed", [&] {
        // One pass over the links in name order, the order getObjnameByIdx numbers them in: asking
        // name by name made the library rebuild and sort the group's table for every name, quadratic
        // in the members (most of the time of opening a 1,000-unit recording).
        std::vector<std::string> listed;
        listed.reserve(g.getNumObjs());
        if (H5Literate(g.getId(), H5_INDEX_NAME, H5_ITER_INC, nullptr, append_link_name, &listed) < 0) {
            throw H5::GroupIException("H5Literate", "the group's links could not be listed");
        }
        return listed;
    });
    for (const auto& name: names) {
        const std::size_t bad = invalid_utf8_offset(name);
        if (bad != std::string::npos) {
            throw input_error(path_, base + printable(name), "a member name in UTF-8",
                              "byte " + hex_byte(static_cast<unsigned char>(name[bad])) + " at offset " +
                                  std::to_string(bad));
        }
    }
    return names;
}

namespace {
std::string shape_text(const std::vector<hsize_t>& dims) {
    std::string shape;
    for (const hsize_t d: dims) shape += (shape.empty() ? "" : " x ") + std::to_string(d);
    return "a " + std::to_string(dims.size()) + "-D dataset [" + shape + "]";
}

// The element count when `dims` has an accepted shape.
std::optional<hsize_t> elements_in(const std::vector<hsize_t>& dims, shape accepted) {
    if (dims.size() == 1) return dims[0];
    if (accepted == shape::matlab_vector && dims.size() == 2 && (dims[0] <= 1 || dims[1] <= 1)) {
        return dims[0] * dims[1];  // each at most max_elements, checked before
    }
    return std::nullopt;
}
}  // namespace

std::vector<std::uint64_t> source::checked_dimensions(const H5::DataSet& dataset, const std::string& object,
                                                      const std::string& expected) {
    const H5::DataSpace space = dataset.getSpace();
    switch (space.getSimpleExtentType()) {
    case H5S_NULL: throw input_error(path_, object, expected, "a dataset with a null dataspace (no shape)");
    case H5S_SCALAR: throw input_error(path_, object, expected, "a scalar (rank 0)");
    default: break;
    }
    const int rank = space.getSimpleExtentNdims();
    std::vector<hsize_t> dims(static_cast<std::size_t>(std::max(rank, 0)));
    space.getSimpleExtentDims(dims.data());
    hsize_t n = 1;
    for (const hsize_t d: dims) {
        if (d > max_elements || n * d > max_elements) {
            throw input_error(path_, object, expected + " of at most 2^31 elements",
                              "a declared size of " + std::to_string(dims.size() == 1 ? d : n * d) + " elements" +
                                  (dims.size() == 1 ? "" : " (" + shape_text(dims) + ")"));
        }
        n *= d;
    }
    // Compare the declared size with the file before anything is allocated: a corrupt or hostile
    // header can claim any size, and unwritten chunks read back as fill values.
    const std::uint64_t stored_each = dataset.getDataType().getSize();
    const bool filtered = dataset.getCreatePlist().getNfilters() > 0;
    const std::uint64_t room = filtered && file_size_ <= std::numeric_limits<std::uint64_t>::max() / max_compression_ratio
                                   ? file_size_ * max_compression_ratio
                                   : file_size_;
    if (stored_each > 0 && n > room / stored_each) {
        throw input_error(path_, object,
                          expected + " that fits in the file (" + bytes_text(file_size_) + ")",
                          "a declared size of " + std::to_string(n) + " elements of " + bytes_text(stored_each) +
                              " (" + bytes_text(n * stored_each) + ")");
    }
    return std::vector<std::uint64_t>(dims.begin(), dims.end());
}

extent_1d source::checked_extent(const H5::DataSet& dataset, const std::string& object, const std::string& expected,
                                 shape accepted) {
    const std::vector<std::uint64_t> stored = checked_dimensions(dataset, object, expected);
    const std::vector<hsize_t> dims(stored.begin(), stored.end());
    const std::optional<hsize_t> n = elements_in(dims, accepted);
    if (!n) throw input_error(path_, object, expected, shape_text(dims));
    return extent_1d{static_cast<std::size_t>(*n)};
}

std::vector<std::uint64_t> source::dimensions(const std::string& object) {
    const std::string expected = "a dataset";
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] { return checked_dimensions(ds, object, expected); });
}

namespace {
std::string float_expected(shape accepted) {
    return accepted == shape::one_dimensional ? "a 1-D float64 dataset (any float type)" : "a vector of floats";
}
}  // namespace

std::size_t source::float_extent(const H5::DataSet& ds, const std::string& object, shape accepted) {
    const std::string expected = float_expected(accepted);
    const H5::DataType type = ds.getDataType();
    if (type.getClass() != H5T_FLOAT) throw input_error(path_, object, expected, of_type(type));
    return checked_extent(ds, object, expected, accepted).elements;
}

std::size_t source::float64_count(const std::string& object, shape accepted) {
    const std::string expected = float_expected(accepted);
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] { return float_extent(ds, object, accepted); });
}

std::vector<double> source::read_float64(const std::string& object, shape accepted) {
    const std::string expected = float_expected(accepted);
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] {
        std::vector<double> values(float_extent(ds, object, accepted));
        if (!values.empty()) ds.read(values.data(), H5::PredType::NATIVE_DOUBLE);
        return values;
    });
}

std::vector<double> source::read_float64_range(const std::string& object, std::size_t first, std::size_t count) {
    const std::string expected = float_expected(shape::one_dimensional);
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] {
        const std::size_t n = float_extent(ds, object, shape::one_dimensional);
        if (first > n || count > n - first) {
            throw internal_error("read_float64_range: elements " + std::to_string(first) + " + " + std::to_string(count) +
                                 " of " + object + ", which has " + std::to_string(n));
        }
        std::vector<double> values(count);
        if (count == 0) return values;
        const hsize_t start[1] = {first}, size[1] = {count};
        H5::DataSpace in_file = ds.getSpace();
        in_file.selectHyperslab(H5S_SELECT_SET, size, start);
        const H5::DataSpace in_memory(1, size);
        ds.read(values.data(), H5::PredType::NATIVE_DOUBLE, in_memory, in_file);
        return values;
    });
}

namespace detail {
// Unsigned integers of 64 bits hold values int64 cannot.
bool is_wide_unsigned(const H5::DataType& type) {
    return H5Tget_sign(type.getId()) == H5T_SGN_NONE && type.getSize() >= 8;
}

// Integers of any width and sign read as int64; uint64 values beyond int64 are an error at their index.
std::vector<std::int64_t> read_integers(const H5::DataSet& ds, std::size_t n, const std::string& file,
                                        const std::string& object) {
    std::vector<std::int64_t> values(n);
    if (n == 0) return values;
    if (is_wide_unsigned(ds.getDataType())) {
        std::vector<std::uint64_t> raw(n);
        ds.read(raw.data(), H5::PredType::NATIVE_UINT64);
        for (std::size_t i = 0; i < n; ++i) {
            if (raw[i] > static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max())) {
                throw input_error(file, element_path(object, i), "an integer that fits in int64",
                                  std::to_string(raw[i]));
            }
            values[i] = static_cast<std::int64_t>(raw[i]);
        }
    } else {
        ds.read(values.data(), H5::PredType::NATIVE_INT64);
    }
    return values;
}

void require_integer_width(const H5::DataType& type, const std::string& file, const std::string& object,
                           const std::string& expected) {
    if (type.getSize() > 8) throw input_error(file, object, expected + " of at most 64 bits", of_type(type));
}
}  // namespace detail

std::vector<std::int64_t> source::read_int64(const std::string& object, shape accepted) {
    const std::string expected = accepted == shape::one_dimensional ? "a 1-D integer dataset" : "a vector of integers";
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] {
        const H5::DataType type = ds.getDataType();
        if (type.getClass() != H5T_INTEGER) throw input_error(path_, object, expected, of_type(type));
        require_integer_width(type, path_, object, expected);
        return read_integers(ds, checked_extent(ds, object, expected, accepted).elements, path_, object);
    });
}

}  // namespace rastrum::hdf5
