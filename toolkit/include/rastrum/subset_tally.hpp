#pragma once
/// Counting words in all 15 nested subsets of trials of several random splits at once.
///
/// What the entropy estimators need from a histogram is its count of counts: how many distinct
/// words were seen n times, for each n (count_summary). The tally keeps exactly that per subset, in
/// integers, so summing histograms (the noise entropy's mean over start positions) is exact and
/// independent of order, and n log n is evaluated once per value of n at the end, not per word.
/// Words seen once in a subset need no counting at all: they add 0 to the sums of n log n, and the
/// number of distinct words follows from the sample size (every trial holds the same number of
/// words) minus the repeats of the words seen more often.
///
/// A word is given as its occurrences (their trials). A few occurrences are placed in subsets from
/// their trials' blocks; many are summed as vectors of byte lanes, one lane per eighth of each split,
/// so one vector add per occurrence counts it in every eighth; quarters, halves and the whole set
/// are sums of eighths.
#include <rastrum/entropy.hpp>
#include <rastrum/sparse_words.hpp>
#include <rastrum/trial_partition.hpp>
#include <rastrum/types.hpp>

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <vector>

namespace rastrum {

class subset_tally {
public:
    /// Counts up to `dense_limit` are tallied in a table; larger ones (rare) are summed directly.
    /// `splits` must outlive the tally's use (until the next reset).
    subset_tally(const std::vector<nested_split>& splits, std::size_t trials, count dense_limit) {
        reset(splits, trials, dense_limit);
    }
    subset_tally() = default;

    /// Starts again on other splits (or trials), reusing the buffers: forgets every word and histogram.
    void reset(const std::vector<nested_split>& splits, std::size_t trials, count dense_limit);

    /// Forgets every word and histogram.
    void clear();

    /// Adds one histogram in which every trial holds `per_trial` words: the listed occurrences
    /// [first, last), sorted by code (each run of equal codes is one word, seen once at each of its
    /// entries' trials), and the all-zero word, which is not listed, for the rest. Several
    /// histograms are summed (the noise entropy's positions).
    void add_histogram(const sparse_words::entry* first, const sparse_words::entry* last, count per_trial);

    /// The same histogram given as each trial's count of each listed word: counts[(w - 1) * trials + k]
    /// for the listed words w = 1 .. words in code order (absent ones have zeros), the all-zero word
    /// taking the rest of each trial's `per_trial`. Counts the same as add_histogram of the
    /// occurrences (the 1-letter words pooled over positions need no list of occurrences this way).
    void add_trial_counts(const std::uint32_t* counts, std::size_t words, count per_trial);

    /// Summary of the summed histograms of subset `subset_index(level, block)` of split `split`.
    count_summary summary(std::size_t split, int subset);
    /// The same for every subset of every split at once (out[split * 15 + subset]), in one pass over
    /// the table: the same numbers, bit for bit, as summary() of each.
    void summaries(std::vector<count_summary>& out);

private:
    /// Every run of equal codes as a word; with `by_trial`, listed_ counts the entries of each trial.
    template <bool by_trial>
    void add_runs(const sparse_words::entry* first, const sparse_words::entry* last);
    /// One distinct word, occurring once at each of the entries' trials.
    void add_word(const sparse_words::entry* first, const sparse_words::entry* last);
    /// Occurrences per eighth of every split, in eighths_ (split * 8 + block).
    void count_eighths(const sparse_words::entry* first, const sparse_words::entry* last);
    template <std::size_t fixed_lanes>
    void add_byte_lanes(const sparse_words::entry* first, const sparse_words::entry* last);
    /// Tallies one word whose occurrences per eighth are in `eighths`.
    void tally(const std::uint32_t* eighths);
    /// Tallies one word of a few occurrences straight from their trials' blocks.
    void tally_few(const sparse_words::entry* first, const sparse_words::entry* last);
    /// One more word seen n times in `cell` (rows n = 0 and 1 are written but never read).
    void bump(std::size_t cell, count n) {
        if (n > dense_limit_) {
            beyond_[cell].add(n);
            return;
        }
        ++frequency_[n * cells_ + cell];
        largest_ = std::max(largest_, n);
        if (n > wide_row_) mark_row(n);
    }
    template <bool wide>
    void tally_rows(const std::uint32_t* eighths);
    /// Rows above wide_row_ are used by few words; they are listed when first used, so that summaries
    /// and clearing visit those rows only, not every row up to the largest count.
    void mark_row(count n) {
        if (row_marked_[n]) return;
        row_marked_[n] = 1;
        marked_rows_.push_back(n);
    }
    /// Adds row n of the table to the summaries of every cell (with the repeats of its words).
    void add_row(count n, count_summary* out, count* repeats) const;
    /// The rows in use in ascending order: every row from 2 to wide_row_, then the marked ones.
    template <typename Visit>
    void for_each_row(Visit&& visit) const;
    static constexpr std::ptrdiff_t few_occurrences = 3;
    /// Histograms of one word per trial that list at most this many words count their all-zero word
    /// by its differences from "once in every trial" (add_zero_word_few); more are counted per eighth.
    static constexpr std::size_t few_listed = 2;
    void add_zero_word_few(const sparse_words::entry* first, const sparse_words::entry* last);
    /// Adds to the table what add_zero_word_few left pending. Before any summary.
    void settle();

    const std::vector<nested_split>* splits_ = nullptr;
    std::size_t splits_count_ = 0;
    std::size_t trials_ = 0;
    std::size_t lanes_ = 0;                 // splits * 8
    count dense_limit_ = 2;
    std::size_t rows_ = 0;                  // dense_limit + 1
    std::size_t cells_ = 0;                 // splits * 15
    std::vector<std::uint8_t> lane_of_;     // trials x lanes_: 1 in lane split * 8 + block of the trial
    std::vector<std::uint32_t> lane_index_; // trials x splits: the lane of the trial in each split
    std::vector<count> eighth_size_;        // lanes_: trials in each eighth
    std::vector<count> cell_size_;          // trials in each subset (split * 15 + subset)
    std::vector<double> n_log2_n_;          // f(n) = n log2 n up to dense_limit
    std::vector<double> leave_one_out_;     // n (f(n) - f(n - 1))
    // rows_ x cells_: words seen n times in each cell. Rows of n, not of cells: the few small n that
    // most words have are then a few adjacent cache lines for all cells; rows of cells put every
    // cell's start a near multiple of 4 KiB apart, onto a few cache sets (7x slower at 2^16 words).
    std::vector<std::uint32_t> frequency_;
    count largest_ = 0;                     // the largest tabulated n of any cell
    count wide_row_ = 0;                    // rows above this are marked when used
    std::vector<std::uint8_t> row_marked_;  // rows_
    std::vector<count> marked_rows_;
    mutable std::vector<count> sorted_rows_;
    mutable std::vector<count> repeats_;    // per cell, while summarising
    count zero_full_ = 0;                   // histograms whose all-zero word is pending in every cell
    std::vector<std::uint32_t> zero_less_one_;  // per trial: of those, the ones listing only that trial
    std::vector<count_summary> beyond_;     // per cell, words seen more than dense_limit times
    count per_trial_ = 0;                   // words per trial, over the closed histograms
    std::vector<std::uint32_t> eighths_;    // lanes_
    std::vector<std::uint8_t> partial_;     // lanes_, byte sums of fewer than 256 occurrences
    std::vector<std::uint32_t> listed_;     // per trial, listed words of the histogram being closed
};

}  // namespace rastrum
