#include "hdf5_read_helpers.hpp"
#include "loader_steps.hpp"
#include "csv_reader.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/format_detection.hpp>

#include <algorithm>
#include <fstream>

namespace rastrum {

namespace {

// The user block MATLAB writes before the HDF5 superblock starts with this text (and so do the
// MAT-files of version 5 and 7, which are not HDF5).
constexpr const char* mat_header = "MATLAB ";
constexpr const char* mat73_header = "MATLAB 7.3 MAT-file";

std::string head_of(const std::string& path, std::size_t bytes) {
    std::ifstream in(path, std::ios::binary);
    std::string head(bytes, '\0');
    in.read(head.data(), static_cast<std::streamsize>(bytes));
    head.resize(static_cast<std::size_t>(in.gcount()));
    return head;
}

bool starts_with(const std::string& text, const std::string& prefix) { return text.compare(0, prefix.size(), prefix) == 0; }

// "MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: ..." -> "MATLAB 7.3 MAT-file, Platform: GLNXA64"
std::string mat_description(const std::string& head) {
    std::string text = head.substr(0, std::min<std::size_t>(head.size(), 116));
    const auto end = text.find(", Created on");
    if (end != std::string::npos) text.erase(end);
    text.erase(std::find_if(text.begin(), text.end(), [](char c) { return c < 0x20 || c > 0x7e; }), text.end());
    while (!text.empty() && text.back() == ' ') text.pop_back();
    return text;
}

detected_format detect_hdf5(const std::string& path, const std::string& head) {
    if (starts_with(head, mat73_header)) return {recording_format::mat, "a MAT-file (" + mat_description(head) + ")"};
    hdf5::source src(path);
    if (src.has_attribute("/", "neurodata_type") || src.has_attribute("/", "nwb_version")) {
        std::string version;
        if (src.has_attribute("/", "nwb_version")) version = " " + src.read_string_attribute("/", "nwb_version");
        return {recording_format::nwb, "an NWB" + version + " file"};
    }
    // NWB 1.x kept its version in a root dataset; the NWB reader says why it refuses it.
    if (src.kind("/nwb_version") == hdf5::object_kind::dataset) return {recording_format::nwb, "an NWB 1.x file"};
    return {recording_format::native, "an HDF5 file in the native layout"};
}

}  // namespace

detected_format detect_format(const std::string& path) {
    require_readable_file(path, "recording file", "a");
    const std::string head = head_of(path, 4096);
    if (head.empty()) {
        throw input_error(path, "", "a recording: HDF5 (native layout, NWB 2.x or MATLAB 7.3 MAT-file) or a spikes CSV",
                          "an empty file (0 bytes)");
    }
    if (hdf5::has_signature(path)) return detect_hdf5(path, head);
    if (starts_with(head, mat73_header)) {
        throw input_error(path, "", "a MATLAB 7.3 MAT-file: its header followed by HDF5 data",
                          "the header without HDF5 data after it (a truncated or damaged file)");
    }
    if (starts_with(head, mat_header) && head.find("MAT-file") != std::string::npos) {
        throw input_error(path, "", "a MATLAB MAT-file of version 7.3 (HDF5), saved with save(..., '-v7.3')",
                          "\"" + mat_description(head) + "\", an older MAT-file version that is not HDF5");
    }
    if (looks_like_spikes_header(head)) return {recording_format::text, "a spikes CSV (unit,time_s)"};
    throw input_error(path, "",
                      "a recording: HDF5 (native layout, NWB 2.x or MATLAB 7.3 MAT-file) or a spikes CSV whose "
                      "header line names the columns unit and time_s",
                      "a file that is neither (no HDF5 signature, and the first line is not such a header)");
}

detected_format source_format(const recording_source& source) {
    if (source.format) return {*source.format, "read as --format " + format_name(*source.format)};
    return detect_format(source.path);
}

}  // namespace rastrum
