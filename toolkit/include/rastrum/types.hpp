#pragma once
/// Vocabulary shared by the whole toolkit. Times are seconds unless a name says otherwise
/// (`_ms` for milliseconds); entropies and information are bits unless a name says otherwise.
#include <cstdint>

namespace rastrum {

using seconds = double;            // [s] on the session clock or, after alignment, since trial start
using letter = std::uint32_t;      // spike count in one bin (0/1 when binary)
using word_code = std::uint64_t;   // a word of L letters in base `alphabet`, first letter most significant
using count = std::uint64_t;       // occurrences of something

}  // namespace rastrum
