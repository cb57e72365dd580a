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

namespace {

/// The counting pass shared by both inputs: `code_of(i)` and `trial_of(i)` describe the i-th word
/// of a sequence sorted by code. Each word is read once; its trial's block in every split is counted.
template <typename CodeOf, typename TrialOf>
void count_runs(const std::vector<nested_split>& splits, std::vector<count_summary>& summaries, std::size_t n,
                CodeOf code_of, TrialOf trial_of) {
    std::fill(summaries.begin(), summaries.end(), count_summary{});
    const std::size_t n_splits = splits.size();
    std::vector<const std::uint8_t*> block_of(n_splits);
    for (std::size_t s = 0; s < n_splits; ++s) block_of[s] = splits[s].block_of.data();
    std::vector<std::array<count, nested_blocks>> in_block(n_splits);
    std::size_t i = 0;
    while (i < n) {
        const word_code code = code_of(i);
        const std::size_t run_start = i;
        for (auto& b: in_block) b.fill(0);
        for (; i < n && code_of(i) == code; ++i) {
            const std::uint32_t trial = trial_of(i);
            for (std::size_t s = 0; s < n_splits; ++s) ++in_block[s][block_of[s][trial]];
        }
        if (i - run_start == 1) {
            // A word seen once adds 1 to the four nested subsets holding its trial in each split.
            for (std::size_t s = 0; s < n_splits; ++s) {
                count_summary* out = summaries.data() + s * nested_subsets;
                const int b = block_of[s][trial_of(run_start)];
                out[subset_index(3, b)].add_single();
                out[subset_index(2, b / 2)].add_single();
                out[subset_index(1, b / 4)].add_single();
                out[subset_index(0, 0)].add_single();
            }
            continue;
        }
        // A run of equal words: its count in each eighth, then in the unions above them.
        for (std::size_t s = 0; s < n_splits; ++s) {
            count_summary* out = summaries.data() + s * nested_subsets;
            const auto& eighths = in_block[s];
            count quarters[4], halves[2];
            for (int b = 0; b < 8; ++b) out[subset_index(3, b)].add(eighths[static_cast<std::size_t>(b)]);
            for (int q = 0; q < 4; ++q) {
                quarters[q] = eighths[static_cast<std::size_t>(2 * q)] + eighths[static_cast<std::size_t>(2 * q + 1)];
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

}  // namespace

void subset_counter::count_sorted(const std::vector<word_occurrence>& words) {
    count_runs(splits_, summaries_, words.size(), [&](std::size_t i) { return words[i].code; },
               [&](std::size_t i) { return words[i].trial; });
}

void subset_counter::count_sorted(const word_code* codes, const std::uint32_t* index, std::size_t n,
                                  std::uint32_t trials) {
    count_runs(splits_, summaries_, n, [&](std::size_t i) { return codes[index[i]]; },
               [&](std::size_t i) { return index[i] % trials; });
}

}  // namespace rastrum
