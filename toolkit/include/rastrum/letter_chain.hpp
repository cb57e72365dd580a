#pragma once
/// A frozen model of one record's letters, fitted to the record itself, from which the direct
/// method's calibration draws surrogate data sets with exactly known answers (a parametric
/// bootstrap: Efron & Tibshirani 1993, *An Introduction to the Bootstrap*, ch. 6 and 10).
///
/// The model: in bin t the letter (spike count) is drawn from one of two distributions, chosen by
/// whether the previous bin of the same trial held a spike: a first-order chain along the trial whose
/// transition probabilities change bin by bin and are the same on every trial (the frozen stimulus).
/// It keeps the record's time course of firing (its PSTH) and its bin-to-bin dependence (refractory
/// or bursty firing, and patterns that a stimulus sets bin by bin); it has no memory beyond one bin.
/// Its entropies of words of L letters, across trials at each start position (noise) and pooled
/// over start positions (total), are computed exactly (notes/methods.md, "Calibration").
#include <rastrum/sparse_letters.hpp>
#include <rastrum/types.hpp>

#include <cstddef>
#include <cstdint>
#include <optional>
#include <vector>

namespace rastrum {

class letter_chain {
public:
    /// Fits the model to `letters` (at least 1 trial and 1 bin). Each bin's two distributions are
    /// the trials' letter frequencies after a silent and after a spiking bin, drawn toward the same
    /// distribution pooled over all bins with the weight of `pseudo_trials` trials. By default that
    /// weight is estimated, per state, from the data (empirical Bayes, below), so that the model's
    /// bin-to-bin differences are those the data show beyond their sampling noise: a model of raw
    /// frequencies would carry more information than the truth, and surrogates drawn from it would
    /// misjudge the estimator's bias (notes/methods.md, "Calibration").
    explicit letter_chain(const sparse_letters& letters, std::optional<double> pseudo_trials = std::nullopt);

    /// The estimated weight: spike probabilities across bins taken as Beta-distributed with the pooled
    /// mean m, the method of moments gives their variance t2 as the observed variance of the bins'
    /// frequencies less the binomial part m (1 - m) mean(1/n), and the weight m (1 - m) / t2 - 1
    /// (a beta-binomial posterior mean; e.g. Casella 1985, Am. Stat. 39:83, from memory). No
    /// variance beyond the sampling noise gives an infinite weight: every bin takes the pooled
    /// distribution.
    static double empirical_weight(const std::vector<double>& spikes, const std::vector<double>& trials);

    std::size_t bins() const { return bins_; }
    std::size_t alphabet() const { return alphabet_; }

    /// Exact entropies (bits per word) of words of `letters_per_word` letters, for start positions
    /// 0 .. bins - L: the mean over positions of the entropy across trials (noise), and the entropy
    /// of the words pooled over positions (total). Requires 1 <= L <= bins and alphabet^L <=
    /// max_enumerated_words (the total is enumerated word by word).
    struct word_entropies {
        double total = 0;
        double noise = 0;
    };
    word_entropies entropies(int letters_per_word) const;
    static constexpr std::size_t max_enumerated_words = std::size_t{1} << 14;
    /// The longest word whose entropies can be computed (alphabet^L within the limit, L <= bins).
    int longest_enumerable() const;

    /// A surrogate data set of `trials` trials drawn from the model into `out` (buffers reused).
    void draw(std::size_t trials, std::uint64_t seed, sparse_letters& out) const;

private:
    // probability of letter a in bin t after state s (0: silent, 1: spiking): p_[(t * 2 + s) * A + a]
    const double* distribution(std::size_t t, int state) const { return p_.data() + (t * 2 + state) * alphabet_; }

    std::size_t bins_ = 0;
    std::size_t alphabet_ = 2;
    std::vector<double> p_;
    std::vector<double> spiking_;  // probability that bin t holds a spike, over trials
};

}  // namespace rastrum
