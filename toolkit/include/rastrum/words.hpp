#pragma once
/// Words: L consecutive letters taken at every start position, coded as one integer in base
/// `alphabet` with the first letter most significant: code(L) = code(L-1) * alphabet + letter(t + L - 1).
/// sparse_words.hpp holds the words themselves.
#include <rastrum/binning.hpp>
#include <rastrum/types.hpp>

#include <cstddef>
#include <vector>

namespace rastrum {

/// The longest word whose codes fit in a word_code for letters in [0, alphabet): the largest L
/// with alphabet^L <= 2^64. Returns 64 for alphabet 2 and a very large number for alphabet 1.
int longest_codable_word(word_code alphabet);

/// Throws internal_error unless alphabet > largest and max_letters >= 1, and insufficient_data
/// when words of `max_letters` letters would not fit in a word_code (naming the longest that would).
void check_codable_words(word_code alphabet, letter largest, int max_letters);

}  // namespace rastrum
