#pragma once
/// Which recording format a file holds, from its content alone (never its name).
#include <rastrum/recording_source.hpp>

#include <string>

namespace rastrum {

struct detected_format {
    recording_format format;
    std::string detail;  // for survey and messages: "an NWB 2.7.0 file", "a MAT-file (MATLAB 7.3 MAT-file, ...)"
};

/// HDF5 (signature at offset 0, or after a user block at 512, 1024, ...): a MAT-file when the user
/// block starts with "MATLAB 7.3 MAT-file"; NWB when the root carries neurodata_type = "NWBFile" or
/// nwb_version; otherwise the native layout. Not HDF5: text when the first line is a CSV header
/// naming the columns unit and time_s. Throws input_error for a missing or unreadable file and for
/// content that is none of these.
detected_format detect_format(const std::string& path);

/// The format `source` asks for (`--format`), or else the one detected.
detected_format source_format(const recording_source& source);

}  // namespace rastrum
