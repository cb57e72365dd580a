#pragma once
// Binary letters that form a first-order Markov chain along each trial, with transition
// probabilities frozen bin by bin (the same on every trial): the process behind `synth frozen-bins`
// (refractory or independent bins) and `synth patterns` (bursty or refractory bins at one marginal
// rate). Sampling and the exact answers live here once, so every kind built on the chain gets the
// same per-length enumeration and entropy-rate limit.
#include <rastrum/random.hpp>
#include <rastrum/synthetic.hpp>

#include <cstddef>
#include <vector>

namespace rastrum {

/// Spike probability of bin t after no spike (`after_silence[t]`) and after a spike
/// (`after_spike[t]`); before the first bin there was a spike with probability `spike_before`.
struct binary_chain {
    std::vector<double> after_silence;
    std::vector<double> after_spike;
    double spike_before = 0;
    std::vector<double> q;  // probability of a spike in bin t across trials (filled by the constructor)

    binary_chain(std::vector<double> after_silence_, std::vector<double> after_spike_, double spike_before_ = 0);
    std::size_t bins() const { return after_silence.size(); }
    /// Entropy (bits) of letter t given letter t-1, averaged over trials; letter 0 given the state before it.
    double conditional_entropy(std::size_t t) const;
};

/// Entropy (bits) of the words of L letters at each start position across trials (given the stimulus),
/// averaged over positions.
double chain_noise_word_entropy(const binary_chain& c, int L);

/// Entropy (bits) of the words of L letters pooled over start positions, enumerated word by word.
double chain_pooled_word_entropy(const binary_chain& c, int L);

/// The pooled letters' entropy rate (bits per letter): the Markov chain with the transition
/// probabilities averaged over positions (valid when each bin's probabilities are drawn
/// independently of earlier bins; derivation in synthetic_chain.cpp).
double chain_pooled_entropy_rate(const binary_chain& c);

/// The stimulus-conditional entropy rate (bits per letter): the average of H(X_t | X_t-1) over t >= 1.
double chain_noise_entropy_rate(const binary_chain& c);

/// Information (bits) of one letter made of k consecutive bins (its spike count, 0..k), the letters
/// tiling the trial from bin 0 and a last partial letter dropped: the pooled count distribution
/// against each position's, each enumerated along the chain. With independent bins the pooled
/// coarse letters are independent too, so this is also the infinite-length rate at k bins per letter.
double chain_coarse_letter_information(const binary_chain& c, std::size_t k);

/// Draws `trials` trials of the chain; a spike in bin b of trial k lands at
/// trial_start[k] + (b + u) dt with u in [0.05, 0.95), clear of the bin edges.
void sample_chain(const binary_chain& c, seconds dt, const std::vector<seconds>& trial_start, random_stream& rng,
                  std::vector<seconds>& spikes);

/// The exact answers of the chain at bins of `bin_ms`: the entropy and information rates at infinite word
/// length, the mean rate and bits per spike, and for L = 1..max_letters (fewer if the trial has fewer
/// bins) the pooled and noise word entropies and the information per word, per letter and per second;
/// and the single-letter information at letters of 1, 2 and 4 bins (`letter_info_bits_at_Xms`, as
/// the poisson kind writes it).
unit_truth chain_truth(const binary_chain& c, double bin_ms, int max_letters);

}  // namespace rastrum
