#pragma once
/// The words that hold a spike, kept sorted by code as they grow. At fine bin widths most words are
/// all-zero (at 0.5 ms and 20 Hz, five in six words of 16 letters hold no spike), so the direct method
/// lists only the others and counts the all-zero word from what is missing: the work follows
/// spikes x letters, not bins x trials.
///
/// Growing a word appends a least-significant digit (code(L+1) = code(L) * alphabet + next letter), so
/// a list sorted by the old codes stays sorted except within runs of equal old codes, which are
/// re-sorted by the new letter; words that held no spike and gain one get codes below the alphabet,
/// smaller than every old word's new code, and go first. Nothing is sorted from scratch.
#include <rastrum/binning.hpp>
#include <rastrum/types.hpp>

#include <cstddef>
#include <cstdint>
#include <vector>

namespace rastrum {

class sparse_words {
public:
    /// A word holding a spike: its code, its trial and its start position (bin).
    struct entry {
        word_code code;
        std::uint32_t trial;
        std::uint32_t position;
    };

    /// Starts at L = 1. `alphabet` must exceed every letter. Throws insufficient_data when words of
    /// `max_letters` would not fit in a word_code (naming the longest that would) or when there are
    /// 2^32 words or more.
    sparse_words(const letter_matrix& letters, word_code alphabet, int max_letters);

    /// Grows every word by one letter and drops the last start position, which no longer holds a
    /// whole word. Requires letters() < max_letters and positions() > 1.
    void grow();

    int letters() const { return letters_; }
    std::size_t trials() const { return trials_; }
    /// Start positions with a whole word: bins - L + 1.
    std::size_t positions() const { return positions_; }
    word_code alphabet() const { return alphabet_; }

    /// The words at start position t that hold a spike, sorted by code.
    const entry* begin_at(std::size_t t) const { return by_position_.data() + position_start_[t]; }
    const entry* end_at(std::size_t t) const { return by_position_.data() + position_start_[t + 1]; }
    /// Every word that holds a spike, at every position and in every trial, sorted by code.
    const std::vector<entry>& pooled() const { return pooled_; }

private:
    /// A non-zero letter: its trial, value and the previous bin of that trial with a non-zero letter.
    struct spike_bin {
        std::uint32_t trial;
        letter value;
        std::uint32_t previous;  // no_previous when none
    };
    static constexpr std::uint32_t no_previous = 0xffffffffu;

    /// Words of the current length that were all-zero one letter ago and end on a spike at bin b:
    /// those starting at t = b - L + 1, when that trial has no spike in [t, b).
    bool starts_fresh(const spike_bin& s, std::size_t t) const { return s.previous == no_previous || s.previous < t; }
    void sort_runs_by_last_letter(entry* first, entry* last);

    const letter_matrix& letters_of_;
    word_code alphabet_;
    int max_letters_;
    int letters_ = 1;
    std::size_t trials_;
    std::size_t positions_;
    std::vector<std::size_t> bin_start_;  // spike_bins_ of bin b: [bin_start_[b], bin_start_[b + 1])
    std::vector<spike_bin> spike_bins_;
    std::vector<std::size_t> position_start_;
    std::vector<entry> by_position_;
    std::vector<entry> pooled_;
    // Reused between lengths so that growing allocates nothing once the lists stop growing.
    std::vector<std::size_t> next_start_;
    std::vector<entry> next_by_position_;
    std::vector<entry> next_pooled_;
    std::vector<entry> fresh_;
    std::vector<entry> scratch_;
    std::vector<std::size_t> bucket_;
};

}  // namespace rastrum
