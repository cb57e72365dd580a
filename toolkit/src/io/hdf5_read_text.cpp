// Strings, labels and attributes of an HDF5 file, each checked to be UTF-8 and to fit in the file.
#include "hdf5_read_helpers.hpp"

#include <rastrum/format.hpp>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <functional>
#include <iterator>
#include <limits>
#include <optional>

namespace rastrum::hdf5 {

using namespace detail;

namespace {

// Strings read through a caller-supplied read call, so datasets and attributes share one decoder.
using raw_read = std::function<void(void* buffer, const H5::DataType& memory_type)>;

// How the pointers of variable-length strings are freed: by the allocator that made them.
using vlen_release = void (*)(void* pointer);

void library_free(void* pointer) { H5free_memory(pointer); }

// Variable-length strings come back as allocated pointers; this frees them on every path,
// including a read that failed half way (libhdf5 stores a pointer only once it is filled).
struct vlen_buffer {
    std::vector<char*> pointers;
    vlen_release release;
    vlen_buffer(std::size_t n, vlen_release how): pointers(n, nullptr), release(how) {}
    ~vlen_buffer() {
        for (char* p: pointers) {
            if (p != nullptr) release(p);
        }
    }
    vlen_buffer(const vlen_buffer&) = delete;
    vlen_buffer& operator=(const vlen_buffer&) = delete;
};

std::vector<std::string> decode_strings(const H5::DataType& file_type, std::size_t n, const raw_read& read,
                                        vlen_release release = library_free) {
    const hid_t tid = file_type.getId();
    const H5T_cset_t cset = H5Tget_cset(tid);
    std::vector<std::string> out;
    out.reserve(n);
    if (n == 0) return out;
    if (H5Tis_variable_str(tid) > 0) {
        // Same character set in memory as on disk: HDF5 does not convert between ASCII and UTF-8.
        H5::StrType memory(H5::PredType::C_S1, H5T_VARIABLE);
        memory.setCset(cset);
        vlen_buffer buffer(n, release);
        read(buffer.pointers.data(), memory);
        for (const char* p: buffer.pointers) out.emplace_back(p != nullptr ? p : "");
        return out;
    }
    const std::size_t width = H5Tget_size(tid);
    const H5T_str_t pad = H5Tget_strpad(tid);
    H5::StrType memory(H5::PredType::C_S1, width);
    memory.setCset(cset);
    memory.setStrpad(pad);
    std::vector<char> buffer(n * width);
    read(buffer.data(), memory);
    for (std::size_t i = 0; i < n; ++i) {
        std::string s(buffer.data() + i * width, width);
        if (pad == H5T_STR_SPACEPAD) {
            s.erase(s.find_last_not_of(' ') + 1);
        } else {
            const auto nul = s.find('\0');
            if (nul != std::string::npos) s.erase(nul);
        }
        out.push_back(std::move(s));
    }
    return out;
}

// Allocation of variable-length strings within a number of bytes; the first request beyond what
// remains is refused (the read then fails) and remembered for the message. The budget owns what it
// allocated and frees it when it goes: a read that fails part way leaves strings that libhdf5 had
// converted but not yet handed over (in its own conversion buffer, out of our reach).
struct string_budget {
    std::uint64_t remaining = 0;
    bool exceeded = false;
    std::uint64_t refused = 0;
    std::vector<void*> allocated;

    explicit string_budget(std::uint64_t bytes): remaining(bytes) {}
    ~string_budget() {
        for (void* p: allocated) std::free(p);
    }
    string_budget(const string_budget&) = delete;
    string_budget& operator=(const string_budget&) = delete;
};

void* budgeted_allocate(std::size_t size, void* info) {
    auto& budget = *static_cast<string_budget*>(info);
    if (size > budget.remaining) {
        budget.exceeded = true;
        budget.refused = size;
        return nullptr;
    }
    void* p = std::malloc(size);
    if (p == nullptr) return nullptr;
    budget.remaining -= size;
    budget.allocated.push_back(p);
    return p;
}

// libhdf5 gives back a string it allocated (while cleaning up a failed conversion) through this.
void budgeted_free(void* pointer, void* info) {
    auto& allocated = static_cast<string_budget*>(info)->allocated;
    const auto at = std::find(allocated.rbegin(), allocated.rend(), pointer);
    if (at == allocated.rend()) return;
    allocated.erase(std::next(at).base());
    std::free(pointer);
}

// The strings read into the caller's buffer stay the budget's until it goes.
void left_to_the_budget(void*) {}


// libhdf5 allocates, and zeroes, a buffer of each variable-length string's stated length before it
// reads the string, and HDF5 1.10 keeps no checksum of those lengths: a damaged one would have it
// fill up to 4 GiB before failing. Where the strings' descriptors lie contiguously in the file,
// their lengths are read here first, from the file itself, and the first one longer than the file
// is returned (its index and length). Each descriptor is a 4-byte little-endian length, then the
// global heap collection's address and the object's 4-byte index (The HDF Group, HDF5 File Format
// Specification version 3, "Variable-length" datatype, and the global heap ID); the stride is
// checked against real files in tests/test_recording_hdf5_damaged.cpp. Compact and chunked layouts are
// left to the library, and to the string budget.
std::optional<std::pair<std::size_t, std::uint64_t>> overlong_string(H5::H5File& file, const H5::DataSet& ds,
                                                                    std::size_t n, const std::string& path,
                                                                    std::uint64_t file_size) {
    const H5::DSetCreatPropList layout = ds.getCreatePlist();
    // Contiguous in this file only: external storage keeps the raw data in other files.
    if (layout.getLayout() != H5D_CONTIGUOUS || layout.getExternalCount() > 0) return std::nullopt;
    const haddr_t offset = H5Dget_offset(ds.getId());
    if (offset == HADDR_UNDEF || offset >= file_size) return std::nullopt;
    std::size_t address_size = 0;
    std::size_t length_size = 0;
    file.getCreatePlist().getSizes(address_size, length_size);
    const std::uint64_t stride = 4 + address_size + 4;
    if (n > (file_size - offset) / stride) return std::nullopt;  // the library will say what is wrong
    std::vector<unsigned char> raw(n * stride);
    std::ifstream in(path, std::ios::binary);
    in.seekg(static_cast<std::streamoff>(offset));
    if (!in.read(reinterpret_cast<char*>(raw.data()), static_cast<std::streamsize>(raw.size()))) return std::nullopt;
    for (std::size_t i = 0; i < n; ++i) {
        const unsigned char* d = raw.data() + i * stride;
        const std::uint64_t length = std::uint64_t{d[0]} | std::uint64_t{d[1]} << 8 | std::uint64_t{d[2]} << 16 |
                                     std::uint64_t{d[3]} << 24;
        if (length > file_size) return std::make_pair(i, length);
    }
    return std::nullopt;
}
}  // namespace

std::vector<std::string> source::read_string_elements(const H5::DataSet& ds, const H5::StrType& type,
                                                      std::size_t elements, const std::string& object) {
    // A damaged stated length is refused before libhdf5 sees it (overlong_string), and the strings
    // are allocated from a budget of the file's own size (no string of a file is longer than the
    // file, whatever elements share it): the read stops at the first string beyond it.
    if (H5Tis_variable_str(type.getId()) > 0) {
        if (const auto overlong = overlong_string(file_, ds, elements, path_, file_size_)) {
            throw input_error(path_, element_path(object, overlong->first),
                              "a string that fits in the file (" + bytes_text(file_size_) + ")",
                              "a stated length of " + bytes_text(overlong->second));
        }
    }
    string_budget budget(file_size_ + elements);  // + a terminating NUL per string
    H5::DSetMemXferPropList transfer;
    transfer.setVlenMemManager(budgeted_allocate, &budget, budgeted_free, &budget);
    std::vector<std::string> values;
    try {
        values = decode_strings(
            type, elements,
            [&](void* buffer, const H5::DataType& memory) {
                ds.read(buffer, memory, H5::DataSpace::ALL, H5::DataSpace::ALL, transfer);
            },
            left_to_the_budget);
    } catch (const H5::Exception&) {
        if (!budget.exceeded) throw;
        throw input_error(path_, object, "strings that fit in the file (" + bytes_text(file_size_) + ")",
                          "a string of " + bytes_text(budget.refused) + ", beyond what remains of it");
    }
    for (std::size_t i = 0; i < values.size(); ++i) {
        const std::size_t bad = invalid_utf8_offset(values[i]);
        if (bad != std::string::npos) {
            throw input_error(path_, element_path(object, i), "UTF-8 text",
                              "byte " + hex_byte(static_cast<unsigned char>(values[i][bad])) + " at offset " +
                                  std::to_string(bad) + ", which is not UTF-8");
        }
    }
    return values;
}

std::vector<std::string> source::read_strings(const std::string& object) {
    const std::string expected = "a 1-D string dataset (UTF-8, variable- or fixed-length)";
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] {
        const H5::DataType type = ds.getDataType();
        if (type.getClass() != H5T_STRING) throw input_error(path_, object, expected, of_type(type));
        return read_string_elements(ds, ds.getStrType(), checked_extent(ds, object, expected).elements, object);
    });
}

std::vector<std::string> source::read_labels(const std::string& object, label_types accepted, shape accepted_shape) {
    const bool floats = accepted == label_types::numbers_and_text;
    const std::string expected = std::string(accepted_shape == shape::one_dimensional ? "a 1-D dataset" : "a vector") +
                                 (floats ? " of numbers or strings" : " of integer or string labels");
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] {
        const H5::DataType type = ds.getDataType();
        const H5T_class_t kind = type.getClass();
        const bool enumeration = floats && kind == H5T_ENUM;
        if (kind != H5T_INTEGER && kind != H5T_STRING && !(floats && kind == H5T_FLOAT) && !enumeration) {
            throw input_error(path_, object, expected, of_type(type));
        }
        const std::size_t n = checked_extent(ds, object, expected, accepted_shape).elements;
        if (kind == H5T_STRING) return read_string_elements(ds, ds.getStrType(), n, object);
        if (enumeration) return read_enum_names(ds, n, object);
        std::vector<std::string> labels;
        labels.reserve(n);
        if (n == 0) return labels;
        if (kind == H5T_FLOAT) {
            std::vector<double> values(n);
            ds.read(values.data(), H5::PredType::NATIVE_DOUBLE);
            for (std::size_t i = 0; i < n; ++i) {
                if (!std::isfinite(values[i])) {
                    throw input_error(path_, element_path(object, i), "a finite number", exact_number(values[i]));
                }
                labels.push_back(exact_number(values[i]));
            }
            return labels;
        }
        require_integer_width(type, path_, object, expected);
        // Labels are text, so unsigned 64-bit values keep their exact decimal form.
        if (is_wide_unsigned(type)) {
            std::vector<std::uint64_t> raw(n);
            ds.read(raw.data(), H5::PredType::NATIVE_UINT64);
            for (const std::uint64_t v: raw) labels.push_back(std::to_string(v));
        } else {
            for (const std::int64_t v: read_integers(ds, n, path_, object)) labels.push_back(std::to_string(v));
        }
        return labels;
    });
}

std::vector<std::string> source::read_enum_names(const H5::DataSet& ds, std::size_t n, const std::string& object) {
    // Read in the enumeration's own (native-order) type and named member by member: HDF5 converts
    // enumerations only to enumerations, and the names are what the writer meant (TRUE, FALSE).
    const hid_t native = H5Tget_native_type(ds.getDataType().getId(), H5T_DIR_ASCEND);
    if (native < 0) throw input_error(path_, object, "a readable enumeration", "an HDF5 error: " + captured_message());
    const H5::EnumType type(native);
    H5Tclose(native);
    const std::size_t width = type.getSize();
    std::vector<unsigned char> raw(n * width);
    if (n > 0) ds.read(raw.data(), type);
    std::vector<std::string> labels;
    labels.reserve(n);
    for (std::size_t i = 0; i < n; ++i) {
        char name[256];
        if (H5Tenum_nameof(type.getId(), raw.data() + i * width, name, sizeof name) < 0) {
            throw input_error(path_, element_path(object, i), "a value that is a member of its enumeration",
                              "a value without a name");
        }
        labels.emplace_back(name);
    }
    return labels;
}

std::vector<std::string> source::read_reference_paths(const std::string& object, shape accepted) {
    const std::string expected = "a dataset of object references";
    const H5::DataSet ds = dataset(object, expected);
    return guard(object, expected, [&] {
        const H5::DataType type = ds.getDataType();
        if (type.getClass() != H5T_REFERENCE || !(type == H5::PredType::STD_REF_OBJ)) {
            throw input_error(path_, object, expected, of_type(type));
        }
        const std::size_t n = checked_extent(ds, object, expected, accepted).elements;
        std::vector<hobj_ref_t> refs(n);
        if (n > 0) ds.read(refs.data(), H5::PredType::STD_REF_OBJ);
        std::vector<std::string> paths;
        paths.reserve(n);
        for (std::size_t i = 0; i < n; ++i) {
            forget_library_message();
            const ssize_t length = H5Rget_name(file_.getId(), H5R_OBJECT, &refs[i], nullptr, 0);
            if (length <= 0) {
                throw input_error(path_, element_path(object, i), "a reference to a named object in this file",
                                  length < 0 ? "an HDF5 error: " + captured_message() : "an object without a name");
            }
            std::string name(static_cast<std::size_t>(length) + 1, '\0');
            H5Rget_name(file_.getId(), H5R_OBJECT, &refs[i], name.data(), name.size());
            name.resize(static_cast<std::size_t>(length));
            paths.push_back(std::move(name));
        }
        return paths;
    });
}

bool source::has_attribute(const std::string& object, const std::string& name) {
    const std::string where = attribute_path(object, name);
    if (kind(object) == object_kind::missing) return false;
    captured_message().clear();
    const htri_t found = H5Aexists_by_name(file_.getId(), object.c_str(), name.c_str(), H5P_DEFAULT);
    if (found < 0) throw input_error(path_, where, "a readable attribute", "an HDF5 error: " + captured_message());
    return found > 0;
}

namespace {
// An attribute holds one value when it is scalar or a one-element 1-D array.
void require_single_value(const H5::Attribute& a, const std::string& file, const std::string& where,
                          const std::string& expected) {
    const H5::DataSpace space = a.getSpace();
    if (space.getSimpleExtentType() == H5S_SCALAR) return;
    if (space.getSimpleExtentType() == H5S_SIMPLE && space.getSimpleExtentNpoints() == 1) return;
    throw input_error(file, where, expected + " (one value)",
                      std::to_string(space.getSimpleExtentNpoints()) + " values");
}

H5::Attribute open_attribute(H5::H5File& file, object_kind kind, const std::string& object, const std::string& name) {
    if (kind == object_kind::dataset) return file.openDataSet(object).openAttribute(name);
    return file.openGroup(object).openAttribute(name);
}
}  // namespace

std::string source::read_string_attribute(const std::string& object, const std::string& name) {
    const std::string where = attribute_path(object, name);
    const std::string expected = "a UTF-8 string attribute";
    const object_kind k = kind(object);
    return guard(where, expected, [&] {
        const H5::Attribute a = open_attribute(file_, k, object, name);
        const H5::DataType type = a.getDataType();
        if (type.getClass() != H5T_STRING) throw input_error(path_, where, expected, of_type(type));
        require_single_value(a, path_, where, expected);
        if (type.getSize() > file_size_) {
            throw input_error(path_, where, expected + " that fits in the file (" + bytes_text(file_size_) + ")",
                              "a declared width of " + bytes_text(type.getSize()));
        }
        std::string value =
            decode_strings(type, 1, [&](void* buffer, const H5::DataType& memory) { a.read(memory, buffer); })[0];
        const std::size_t bad = invalid_utf8_offset(value);
        if (bad != std::string::npos) {
            throw input_error(path_, where, expected, "byte " + hex_byte(static_cast<unsigned char>(value[bad])) +
                                                          " at offset " + std::to_string(bad) + ", not UTF-8");
        }
        return value;
    });
}

std::int64_t source::read_int64_attribute(const std::string& object, const std::string& name) {
    const std::string where = attribute_path(object, name);
    const std::string expected = "an integer attribute";
    const object_kind k = kind(object);
    return guard(where, expected, [&] {
        const H5::Attribute a = open_attribute(file_, k, object, name);
        const H5::DataType type = a.getDataType();
        if (type.getClass() != H5T_INTEGER) throw input_error(path_, where, expected, of_type(type));
        require_integer_width(type, path_, where, expected);
        require_single_value(a, path_, where, expected);
        if (is_wide_unsigned(type)) {
            std::uint64_t raw = 0;
            a.read(H5::PredType::NATIVE_UINT64, &raw);
            if (raw > static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max())) {
                throw input_error(path_, where, "an integer that fits in int64", std::to_string(raw));
            }
            return static_cast<std::int64_t>(raw);
        }
        std::int64_t value = 0;
        a.read(H5::PredType::NATIVE_INT64, &value);
        return value;
    });
}

}  // namespace rastrum::hdf5
