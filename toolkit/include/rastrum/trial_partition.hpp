#pragma once
/// Random nested splits of trials, for estimates on fractions of the data.
#include <cstddef>
#include <cstdint>
#include <vector>

namespace rastrum {

/// One random split of T trials into `nested_blocks` (8) near-equal blocks of a random order;
/// block pairs (0,1), (2,3), ... form quarters and quarter pairs form halves, so each split gives
/// the full set, 2 halves, 4 quarters and 8 eighths, nested in one another.
struct nested_split {
    std::vector<std::uint8_t> block_of;  // block of each trial, 0..7
};

inline constexpr int nested_levels = 4;   // full, halves, quarters, eighths
inline constexpr int nested_blocks = 8;   // 2^(nested_levels - 1)
inline constexpr int nested_subsets = 15; // 1 + 2 + 4 + 8

/// Index of block `b` of `level` (0 = full) among the 15 subsets: (2^level - 1) + b.
constexpr int subset_index(int level, int block) { return (1 << level) - 1 + block; }

/// `splits` independent random splits of `trials` trials, seeded. Requires trials >= 8.
std::vector<nested_split> make_nested_splits(std::size_t trials, unsigned splits, std::uint64_t seed);

/// Number of trials in each of the 15 subsets of `split`.
std::vector<std::size_t> subset_sizes(const nested_split& split);

}  // namespace rastrum
