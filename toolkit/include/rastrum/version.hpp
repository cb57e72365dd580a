#pragma once

namespace rastrum {
/// The release, as "major.minor.patch"; set once in the top-level CMakeLists.txt.
const char* version();
}  // namespace rastrum
