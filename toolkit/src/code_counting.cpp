#include <rastrum/code_counting.hpp>

#include <algorithm>
#include <cstdint>
#include <optional>
#include <utility>

namespace rastrum {

namespace {

/// A dense table pays for itself when it is not much larger than the data it counts (it is cleared
/// and scanned whole) and stays within the caches (four tables of 2^20 entries of 4 bytes at most).
bool dense_pays(word_code largest, std::size_t n) {
    constexpr word_code table_cap = word_code{1} << 20;
    return largest < table_cap && largest < 2 * static_cast<word_code>(n) + 1024 && n < (std::size_t{1} << 32);
}

/// Counts in a table of `size` entries; nothing when a code lies outside it.
std::optional<std::vector<count>> dense_counts(const std::vector<word_code>& codes, std::size_t size) {
    // In a small space equal codes follow each other often, and increments of one counter would
    // wait on each other: there, four tables side by side take the codes in turn. In a large space
    // one table, which fits the caches better. A code outside the table is counted in one entry
    // past its end (`size`), which must stay empty.
    const std::size_t ways = size <= 4096 ? 4 : 1;
    const word_code outside = size;
    std::vector<std::uint32_t> table(ways * (size + 1), 0);
    const std::size_t n = codes.size();
    if (ways == 4) {
        const std::size_t whole = n - n % 4;
        for (std::size_t i = 0; i < whole; i += 4) {
            for (std::size_t w = 0; w < 4; ++w) ++table[4 * static_cast<std::size_t>(std::min(codes[i + w], outside)) + w];
        }
        for (std::size_t i = whole; i < n; ++i) ++table[4 * static_cast<std::size_t>(std::min(codes[i], outside))];
    } else {
        for (const word_code c: codes) ++table[static_cast<std::size_t>(std::min(c, outside))];
    }
    for (std::size_t w = 0; w < ways; ++w) {
        if (table[ways * size + w] != 0) return std::nullopt;
    }
    std::vector<count> counts;
    counts.reserve(std::min(size, n));
    for (std::size_t c = 0; c < size; ++c) {
        count k = 0;
        for (std::size_t w = 0; w < ways; ++w) k += table[ways * c + w];
        if (k != 0) counts.push_back(k);
    }
    return counts;
}

std::vector<count> sorted_counts(const std::vector<word_code>& codes) {
    std::vector<word_code> sorted = codes;
    std::sort(sorted.begin(), sorted.end());
    std::vector<count> counts;
    for (std::size_t i = 0; i < sorted.size();) {
        std::size_t j = i + 1;
        while (j < sorted.size() && sorted[j] == sorted[i]) ++j;
        counts.push_back(j - i);
        i = j;
    }
    return counts;
}

}  // namespace

std::vector<count> counts_of_codes(const std::vector<word_code>& codes, word_code space) {
    if (codes.empty()) return {};
    // A known small space saves the pass that finds the largest code.
    if (space != 0 && dense_pays(space - 1, codes.size())) {
        if (auto counts = dense_counts(codes, static_cast<std::size_t>(space))) return std::move(*counts);
    }
    const word_code largest = *std::max_element(codes.begin(), codes.end());
    if (dense_pays(largest, codes.size())) return *dense_counts(codes, static_cast<std::size_t>(largest) + 1);
    return sorted_counts(codes);
}

}  // namespace rastrum
