#pragma once
/// Counting words in every subset of trials of several nested splits at once. Words are sorted by
/// code once; a single pass over the sorted words then counts each run of equal words in all 15
/// subsets of every split, so no subset is ever recounted from scratch.
#include <rastrum/entropy.hpp>
#include <rastrum/trial_partition.hpp>
#include <rastrum/types.hpp>

#include <cstdint>
#include <utility>
#include <vector>

namespace rastrum {

/// A word occurrence: its code and the trial it came from.
struct word_occurrence {
    word_code code;
    std::uint32_t trial;
};

/// Sorts occurrences by code (ties in any order: counts do not depend on it).
void sort_by_code(std::vector<word_occurrence>& words);

class subset_counter {
public:
    explicit subset_counter(const std::vector<nested_split>& splits);

    /// Counts `words` (sorted by code) into fresh summaries, replacing the previous ones.
    void count_sorted(const std::vector<word_occurrence>& words);

    /// The same for words given by position in an array: word i of the sorted sequence has code
    /// codes[index[i]] and comes from trial index[i] % trials.
    void count_sorted(const word_code* codes, const std::uint32_t* index, std::size_t n, std::uint32_t trials);

    /// Summary of the histogram of subset `subset_index(level, block)` of split `split`.
    const count_summary& summary(std::size_t split, int subset) const {
        return summaries_[split * nested_subsets + static_cast<std::size_t>(subset)];
    }

private:
    const std::vector<nested_split>& splits_;
    std::vector<count_summary> summaries_;
};

}  // namespace rastrum
