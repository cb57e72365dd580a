#pragma once
/// What one thread keeps between direct-method estimates (units, bin widths, rotations), so that an
/// estimate allocates nothing once the buffers have grown to the largest words seen: the words, the
/// subset tallies, the rotated letters. Private to the toolkit (direct_method.cpp, direct_null.cpp).
#include <rastrum/direct_method.hpp>
#include <rastrum/entropy.hpp>
#include <rastrum/sparse_letters.hpp>
#include <rastrum/sparse_words.hpp>
#include <rastrum/subset_tally.hpp>
#include <rastrum/trial_partition.hpp>

#include <array>
#include <cstddef>
#include <memory>
#include <vector>

namespace rastrum {

/// Entropies of every subset of every split at one word length, by each subset estimator.
struct subset_entropies {
    std::array<std::vector<double>, subset_estimator_count> total;  // [estimator][split * 15 + subset]
    std::array<std::vector<double>, subset_estimator_count> noise;  // averaged over start positions
    count samples = 0;
    count distinct = 0;
};

/// Counts the words of one length in every subset and estimates the subsets' entropies.
class length_measurer {
public:
    /// Starts on new splits (which must outlive the use); keeps the buffers.
    void reset(const std::vector<nested_split>& splits, std::size_t trials) {
        cells_ = splits.size() * nested_subsets;
        noise_.reset(splits, trials, trials);
        total_.reset(splits, trials, pooled_dense_limit);
    }

    /// The entropies of the current words (valid until the next call).
    const subset_entropies& measure(const sparse_words& words) {
        measure_noise(words, e_);
        measure_total(words, e_);
        return e_;
    }

private:
    // Counts up to this are tabulated for the pooled words; larger ones are rare and summed directly.
    static constexpr count pooled_dense_limit = 4096;
    // One-letter words are counted per trial (a table of letters x trials) up to this alphabet.
    static constexpr word_code letters_counted_per_trial = 64;

    void estimate_cells(std::array<std::vector<double>, subset_estimator_count>& out, subset_tally& tally,
                        double histograms);
    void measure_noise(const sparse_words& words, subset_entropies& e);
    void measure_total(const sparse_words& words, subset_entropies& e);

    std::size_t cells_ = 0;
    subset_tally noise_;
    subset_tally total_;
    subset_entropies e_;
    std::vector<count_summary> summaries_;     // of every cell, while estimating
    std::vector<std::uint32_t> trial_counts_;  // letters x trials, for one-letter totals
};

struct direct_workspace::parts {
    sparse_words words;
    length_measurer measurer;
    std::vector<nested_split> splits;
    // For the rotated-trial null.
    trial_rotator rotator;
    sparse_letters rotated;
    std::vector<std::size_t> offsets;
    // For the calibration: each surrogate's letters and buffers.
    struct surrogate_parts {
        sparse_letters letters;
        std::unique_ptr<direct_workspace> workspace = std::make_unique<direct_workspace>();
    };
    std::vector<surrogate_parts> surrogates;
};

}  // namespace rastrum
