#pragma once
/// Words: L consecutive letters taken at every start position, coded as one integer.
#include <rastrum/binning.hpp>
#include <rastrum/types.hpp>

#include <cstddef>
#include <vector>

namespace rastrum {

/// The longest word whose codes fit in a word_code for letters in [0, alphabet): the largest L
/// with alphabet^L <= 2^64. Returns 64 for alphabet 2 and a very large number for alphabet 1.
int longest_codable_word(word_code alphabet);

/// Codes of the words of L letters at every start position of every trial, grown one letter at a
/// time: code(L) = code(L-1) * alphabet + letter(t + L - 1), so the first letter is the most
/// significant digit in base `alphabet`. Storage is position-major (`at_position(t)` gives the codes
/// of all trials at start t), updated in place, so growing L costs one pass and no allocation.
class word_codes {
public:
    /// Starts at L = 1. `alphabet` must exceed every letter (normally largest + 1; the caller may
    /// choose it larger, e.g. 2 for binary letters). Throws insufficient_data when words of
    /// `max_letters` would not fit in a word_code, naming the longest that would.
    word_codes(const letter_matrix& letters, word_code alphabet, int max_letters);

    /// Grows every word by one letter. Requires letters() < max_letters and positions() > 1.
    void grow();

    int letters() const { return letters_; }
    std::size_t trials() const { return trials_; }
    /// Start positions with a whole word: bins - L + 1.
    std::size_t positions() const { return positions_; }
    word_code alphabet() const { return alphabet_; }
    /// alphabet^L as a floating-point number (it may exceed 2^53 and lose precision there).
    double word_space() const;
    const word_code* at_position(std::size_t t) const { return codes_.data() + t * trials_; }
    const std::vector<word_code>& all() const { return codes_; }  // first positions() * trials() valid

private:
    const letter_matrix& source_;
    word_code alphabet_;
    int max_letters_;
    int letters_ = 1;
    std::size_t trials_;
    std::size_t positions_;
    std::vector<word_code> codes_;
};

}  // namespace rastrum
