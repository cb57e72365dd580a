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
#include <rastrum/sparse_letters.hpp>
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

    sparse_words() = default;
    sparse_words(const sparse_letters& letters, word_code alphabet, int max_letters) { start(letters, alphabet, max_letters); }

    /// Starts at L = 1 over `letters`, which must stay alive and unchanged until the next start; the
    /// buffers of earlier words are reused. `alphabet` must exceed every letter. Throws
    /// insufficient_data when words of `max_letters` would not fit in a word_code (naming the longest
    /// that would) or when there are 2^32 words or more.
    void start(const sparse_letters& letters, word_code alphabet, int max_letters);

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
    /// At one letter: each trial's count of each non-zero letter over the bins, counts[(v - 1) * trials + k]
    /// for v = 1 .. alphabet - 1 (the 1-letter words pooled over positions, as subset_tally::add_trial_counts
    /// takes them). A rotation of the trials leaves these unchanged.
    void letter_counts_per_trial(std::vector<std::uint32_t>& counts) const;

    /// Every word that holds a spike, at every position and in every trial, sorted by code. Made from
    /// the positions' lists when first asked for at one letter.
    const std::vector<entry>& pooled() const {
        if (!pooled_ready_) make_pooled();
        return pooled_;
    }

private:
    static constexpr std::uint32_t no_previous = 0xffffffffu;

    /// Words of the current length that were all-zero one letter ago and end on a spike at bin b:
    /// those starting at t = b - L + 1, when that trial has no spike in [t, b). `previous` is the
    /// trial's spike bin before b.
    static bool starts_fresh(std::uint32_t previous, std::size_t t) { return previous == no_previous || previous < t; }
    /// The letter of `trial` in bin b: from a bit per bin and trial (which bins hold spikes), made at the
    /// first growth; the value from the bin's non-zero letters when letters exceed 1.
    letter letter_at(std::size_t b, std::uint32_t trial) const {
        const std::uint64_t bits = occupied_[b * row_words_ + trial / 64];
        if (((bits >> (trial % 64)) & 1u) == 0) return 0;
        return letters_of_->largest <= 1 ? 1 : letters_of_->at(b, trial);
    }
    void mark_occupied();
    void make_pooled() const;

    const sparse_letters* letters_of_ = nullptr;
    word_code alphabet_ = 2;
    int max_letters_ = 1;
    int letters_ = 1;
    std::size_t trials_ = 0;
    std::size_t positions_ = 0;
    std::vector<std::uint32_t> previous_;   // per non-zero letter: the previous bin of its trial with one
    std::size_t row_words_ = 0;             // 64-bit words per bin in occupied_
    std::vector<std::uint64_t> occupied_;   // bin-major bits: trial k of bin b holds a spike
    std::vector<std::size_t> position_start_;
    std::vector<entry> by_position_;
    mutable std::vector<entry> pooled_;
    mutable bool pooled_ready_ = false;
    // Reused between lengths and starts so that growing allocates nothing once the lists stop growing.
    std::vector<std::uint32_t> last_spike_;
    std::vector<std::size_t> next_start_;
    std::vector<entry> next_by_position_;
    std::vector<entry> next_pooled_;
    std::vector<entry> fresh_;
    mutable std::vector<entry> scratch_;
    mutable std::vector<std::size_t> bucket_;
};

}  // namespace rastrum
