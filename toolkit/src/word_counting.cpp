#include <rastrum/word_counting.hpp>

#include <algorithm>
#include <array>

namespace rastrum {

void sort_by_code(std::vector<word_occurrence>& words) {
    std::sort(words.begin(), words.end(),
              [](const word_occurrence& a, const word_occurrence& b) { return a.code < b.code; });
}

subset_counter::subset_counter(const std::vector<nested_split>& splits):
    splits_(splits), summaries_(splits.size() * nested_subsets) {}

void subset_counter::count_sorted(const std::vector<word_occurrence>& words) {
    std::fill(summaries_.begin(), summaries_.end(), count_summary{});
    const std::size_t n = words.size();
    std::array<count, nested_blocks> in_block{};
    for (std::size_t s = 0; s < splits_.size(); ++s) {
        const std::uint8_t* block_of = splits_[s].block_of.data();
        count_summary* out = summaries_.data() + s * nested_subsets;
        std::size_t i = 0;
        while (i < n) {
            const word_code code = words[i].code;
            in_block.fill(0);
            for (; i < n && words[i].code == code; ++i) ++in_block[block_of[words[i].trial]];
            // One run of equal words: its count in each eighth, then in the unions above them.
            count quarters[4], halves[2];
            for (int b = 0; b < 8; ++b) out[subset_index(3, b)].add(in_block[b]);
            for (int q = 0; q < 4; ++q) {
                quarters[q] = in_block[2 * q] + in_block[2 * q + 1];
                out[subset_index(2, q)].add(quarters[q]);
            }
            for (int h = 0; h < 2; ++h) {
                halves[h] = quarters[2 * h] + quarters[2 * h + 1];
                out[subset_index(1, h)].add(halves[h]);
            }
            out[subset_index(0, 0)].add(halves[0] + halves[1]);
        }
    }
}

}  // namespace rastrum
