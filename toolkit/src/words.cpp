#include <rastrum/errors.hpp>
#include <rastrum/words.hpp>

#include <cmath>
#include <limits>
#include <string>

namespace rastrum {

int longest_codable_word(word_code alphabet) {
    if (alphabet < 2) return std::numeric_limits<int>::max();
    // alphabet^L <= 2^64 <=> alphabet^L - 1 <= max(word_code); grow while the next power fits.
    int length = 1;
    word_code power = alphabet;  // alphabet^length, exact while it fits
    while (power <= std::numeric_limits<word_code>::max() / alphabet) {
        power *= alphabet;
        ++length;
    }
    // power * alphabet overflows, but it may still equal 2^64 exactly (alphabet a power of two).
    if ((alphabet & (alphabet - 1)) == 0) {
        const int bits = static_cast<int>(std::log2(static_cast<double>(alphabet)) + 0.5);
        return 64 / bits;
    }
    return length;
}

word_codes::word_codes(const letter_matrix& letters, word_code alphabet, int max_letters):
    source_(letters), alphabet_(alphabet), max_letters_(max_letters),
    trials_(letters.trials), positions_(letters.bins) {
    if (alphabet_ <= letters.largest) throw internal_error("word_codes: alphabet smaller than a letter");
    if (max_letters_ < 1) throw internal_error("word_codes: max_letters must be at least 1");
    const int longest = longest_codable_word(alphabet_);
    if (max_letters_ > longest) {
        throw insufficient_data("words of " + std::to_string(max_letters_) + " letters over an alphabet of " +
                                std::to_string(alphabet_) + " letters (spike counts 0 to " +
                                std::to_string(alphabet_ - 1) + " per bin) do not fit in 64 bits; at most " +
                                std::to_string(longest) + " letters fit" + (alphabet_ > 2 ? " (or use binary letters)" : ""));
    }
    codes_.assign(letters.letters.begin(), letters.letters.end());
}

void word_codes::grow() {
    if (letters_ >= max_letters_ || positions_ <= 1) throw internal_error("word_codes::grow past its limit");
    // Position t's word gains the letter at bin t + L, where L is the current length.
    const std::size_t shift = static_cast<std::size_t>(letters_);
    --positions_;
    for (std::size_t t = 0; t < positions_; ++t) {
        word_code* code = codes_.data() + t * trials_;
        const letter* next = source_.bin_row(t + shift);
        for (std::size_t k = 0; k < trials_; ++k) code[k] = code[k] * alphabet_ + next[k];
    }
    ++letters_;
}

double word_codes::word_space() const { return std::pow(static_cast<double>(alphabet_), letters_); }

}  // namespace rastrum
