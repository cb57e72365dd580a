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
    /// Fits the model to `letters` (at least 1 trial and 1 bin). Each bin's two distributions come
    /// from the trials' letter frequencies after a silent and after a spiking bin. Raw frequencies
    /// would vary more from bin to bin than the truth does (their sampling noise adds to it), and
    /// the posterior means of a Bayes model less (they shrink too far), so that the model carried
    /// more, or less, information than the data show, and surrogates drawn from it misjudged the
    /// estimator's bias. By default each bin's frequencies are therefore moved toward the state's
    /// distribution pooled over bins by the factor sqrt(t2 / (t2 + m (1 - m) / n)), which leaves
    /// the spike probabilities the variance across bins t2 that the data show beyond their binomial
    /// noise (a variance-matching, "constrained Bayes" estimate: Louis 1984, J. Am. Stat. Assoc.
    /// 79:393, from memory; notes/methods-calibration.md). With `pseudo_trials`, the frequencies are
    /// instead mixed with that many trials of the pooled distribution (0: the raw frequencies).
    explicit letter_chain(const sparse_letters& letters, std::optional<double> pseudo_trials = std::nullopt);

    /// t2 by the method of moments: the observed variance of the bins' spike frequencies about their
    /// pooled mean m, less the binomial part m (1 - m) mean(1/n); 0 when that is not positive.
    static double variance_beyond_noise(const std::vector<double>& spikes, const std::vector<double>& trials);

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
    std::vector<double> letter_entropy_;       // H(X_t), bits
    std::vector<double> conditional_entropy_;  // H(X_t | whether bin t - 1 spiked), bits
};

}  // namespace rastrum
