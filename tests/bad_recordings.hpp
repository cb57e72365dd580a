#pragma once
// Small malformed recordings in the native layout, written with the HDF5 C++ API, for tests of
// what the command says about them.
#include <string>
#include <vector>

namespace rastrum::testing {

struct bad_recording {
    std::string path;
    std::string names;  // the HDF5 path the error message must name
};

/// Writes the malformed files into `folder` and returns them with the object each error concerns.
std::vector<bad_recording> write_bad_recordings(const std::string& folder);

}  // namespace rastrum::testing
