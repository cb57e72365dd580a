#pragma once
/// Histograms of response codes: how often each distinct code occurs.
#include <rastrum/types.hpp>

#include <vector>

namespace rastrum {

/// The count of each distinct code in `codes`, in increasing order of code. Small code spaces
/// (the largest code not far above the number of codes) are counted in a dense table, larger ones by
/// sorting; both give the same counts in the same order, so results do not depend on the choice.
/// `space`, when not 0, is a bound every code is expected to lie below (the code's alphabet); it only
/// saves a pass, and a code at or above it is still counted right.
std::vector<count> counts_of_codes(const std::vector<word_code>& codes, word_code space = 0);

}  // namespace rastrum
