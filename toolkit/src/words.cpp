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

void check_codable_words(word_code alphabet, letter largest, int max_letters) {
    if (alphabet <= largest) throw internal_error("words: alphabet smaller than a letter");
    if (max_letters < 1) throw internal_error("words: max_letters must be at least 1");
    const int longest = longest_codable_word(alphabet);
    if (max_letters > longest) {
        throw insufficient_data("words of " + std::to_string(max_letters) + " letters over an alphabet of " +
                                std::to_string(alphabet) + " letters (spike counts 0 to " +
                                std::to_string(alphabet - 1) + " per bin) do not fit in 64 bits; at most " +
                                std::to_string(longest) + " letters fit" + (alphabet > 2 ? " (or use binary letters)" : ""));
    }
}

}  // namespace rastrum
