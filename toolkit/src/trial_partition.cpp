#include <rastrum/errors.hpp>
#include <rastrum/random.hpp>
#include <rastrum/trial_partition.hpp>

#include <numeric>

namespace rastrum {

std::vector<nested_split> make_nested_splits(std::size_t trials, unsigned splits, std::uint64_t seed) {
    if (trials < static_cast<std::size_t>(nested_blocks)) {
        throw internal_error("nested splits need at least 8 trials");
    }
    std::vector<nested_split> result(splits);
    std::vector<std::size_t> order(trials);
    for (unsigned s = 0; s < splits; ++s) {
        random_stream rng(derive_seed(seed, {0x5b117ULL, s}));
        std::iota(order.begin(), order.end(), std::size_t{0});
        shuffle(order, rng);
        auto& block_of = result[s].block_of;
        block_of.assign(trials, 0);
        for (std::size_t i = 0; i < trials; ++i) {
            block_of[order[i]] = static_cast<std::uint8_t>(i * nested_blocks / trials);
        }
    }
    return result;
}

std::vector<std::size_t> subset_sizes(const nested_split& split) {
    std::vector<std::size_t> size(nested_subsets, 0);
    for (std::uint8_t b: split.block_of) {
        for (int level = 0; level < nested_levels; ++level) {
            const int block = b >> (nested_levels - 1 - level);
            ++size[subset_index(level, block)];
        }
    }
    return size;
}

}  // namespace rastrum
