// Exact answers of binary letters forming a Markov chain with frozen, bin-by-bin transition
// probabilities (synthetic_chain.hpp).
//
// Why these formulas (Cover & Thomas 2006, Elements of Information Theory, 2nd ed.: the chain rule,
// theorem 2.5.1, and the entropy rate of a stationary Markov chain, theorem 4.2.4, from memory):
//
// Noise entropy. Given the stimulus (the frozen probabilities), the letters of one trial are a Markov
// chain, so by the chain rule the word of L letters starting at bin t has entropy
//     H(X_t) + sum_{j=1}^{L-1} H(X_{t+j} | X_{t+j-1}),
// and the noise entropy of L-letter words is its average over start positions. Per letter it tends,
// as L grows, to the average of H(X_t | X_{t-1}) over bins: the noise entropy rate.
//
// Total entropy. Pooled over start positions (the stimulus unknown), a word's distribution is the
// mixture over t of the chain's word distributions at t, enumerated word by word for finite L. For
// the rate: when each bin's pair of transition probabilities is drawn independently of earlier bins'
// (as both generators do), the next letter depends on the past letters, with the position unknown,
// only through the previous letter, with the transition probabilities averaged over positions
// (weighting each position by the probability of the previous letter there). The pooled process is
// then a Markov chain over {silence, spike} and its entropy rate (theorem 4.2.4) is
//     sum_i mu_i H(P(next | i)),
// with mu the share of positions after silence or after a spike. Information rate = total - noise.
#include "synthetic_chain.hpp"

#include <array>
#include <cmath>
#include <cstdio>

namespace rastrum {

binary_chain::binary_chain(std::vector<double> after_silence_, std::vector<double> after_spike_, double spike_before_)
    : after_silence(std::move(after_silence_)), after_spike(std::move(after_spike_)), spike_before(spike_before_),
      q(after_silence.size()) {
    double previous = spike_before;
    for (std::size_t t = 0; t < bins(); ++t) {
        q[t] = previous * after_spike[t] + (1 - previous) * after_silence[t];
        previous = q[t];
    }
}

double binary_chain::conditional_entropy(std::size_t t) const {
    const double previous = t == 0 ? spike_before : q[t - 1];
    return previous * binary_entropy(after_spike[t]) + (1 - previous) * binary_entropy(after_silence[t]);
}

double chain_noise_word_entropy(const binary_chain& c, int L) {
    const std::size_t positions = c.bins() - static_cast<std::size_t>(L) + 1;
    double h = 0;
    for (std::size_t t = 0; t < positions; ++t) {
        h += binary_entropy(c.q[t]);
        for (int j = 1; j < L; ++j) h += c.conditional_entropy(t + static_cast<std::size_t>(j));
    }
    return h / static_cast<double>(positions);
}

double chain_pooled_word_entropy(const binary_chain& c, int L) {
    const std::size_t positions = c.bins() - static_cast<std::size_t>(L) + 1;
    const std::size_t words = std::size_t{1} << L;
    std::vector<double> prob(words, 0.0), one(words);
    for (std::size_t t = 0; t < positions; ++t) {
        // Grow words letter by letter; word w's last letter is its lowest bit.
        one[0] = 1 - c.q[t];
        one[1] = c.q[t];
        std::size_t filled = 2;
        for (int j = 1; j < L; ++j) {
            const std::size_t bin = t + static_cast<std::size_t>(j);
            for (std::size_t w = filled; w-- > 0;) {
                const double fire = (w & 1) ? c.after_spike[bin] : c.after_silence[bin];
                one[2 * w + 1] = one[w] * fire;
                one[2 * w] = one[w] * (1 - fire);
            }
            filled *= 2;
        }
        for (std::size_t w = 0; w < words; ++w) prob[w] += one[w];
    }
    double h = 0;
    for (double x: prob) {
        const double q = x / static_cast<double>(positions);
        if (q > 0) h -= q * std::log2(q);
    }
    return h;
}

double chain_pooled_entropy_rate(const binary_chain& c) {
    double spikes = 0, silences = 0, fire_after_spike = 0, fire_after_silence = 0;
    for (std::size_t t = 1; t < c.bins(); ++t) {
        spikes += c.q[t - 1];
        silences += 1 - c.q[t - 1];
        fire_after_spike += c.q[t - 1] * c.after_spike[t];
        fire_after_silence += (1 - c.q[t - 1]) * c.after_silence[t];
    }
    const double n = spikes + silences;
    return (spikes > 0 ? spikes / n * binary_entropy(fire_after_spike / spikes) : 0.0) +
           (silences > 0 ? silences / n * binary_entropy(fire_after_silence / silences) : 0.0);
}

double chain_noise_entropy_rate(const binary_chain& c) {
    double noise = 0;
    for (std::size_t t = 1; t < c.bins(); ++t) noise += c.conditional_entropy(t);
    return noise / static_cast<double>(c.bins() - 1);
}

double chain_coarse_letter_information(const binary_chain& c, std::size_t k) {
    const std::size_t letters = c.bins() / k;
    std::vector<double> pooled(k + 1, 0.0);
    double noise = 0;
    for (std::size_t i = 0; i < letters; ++i) {
        // by_count[n][s]: probability of n spikes so far with the last bin's letter s.
        std::vector<std::array<double, 2>> by_count(k + 1, {0.0, 0.0});
        const std::size_t t0 = i * k;
        by_count[0][0] = 1 - c.q[t0];
        by_count[1][1] = c.q[t0];
        for (std::size_t t = t0 + 1; t < t0 + k; ++t) {
            std::vector<std::array<double, 2>> next(k + 1, {0.0, 0.0});
            for (std::size_t n = 0; n < k; ++n) {
                for (int s = 0; s < 2; ++s) {
                    const double fire = s ? c.after_spike[t] : c.after_silence[t];
                    next[n + 1][1] += by_count[n][s] * fire;
                    next[n][0] += by_count[n][s] * (1 - fire);
                }
            }
            by_count = std::move(next);
        }
        for (std::size_t n = 0; n <= k; ++n) {
            const double p = by_count[n][0] + by_count[n][1];
            pooled[n] += p / static_cast<double>(letters);
            if (p > 0) noise -= p * std::log2(p) / static_cast<double>(letters);
        }
    }
    double total = 0;
    for (double p: pooled) {
        if (p > 0) total -= p * std::log2(p);
    }
    return total - noise;
}

void sample_chain(const binary_chain& c, seconds dt, const std::vector<seconds>& trial_start, random_stream& rng,
                  std::vector<seconds>& spikes) {
    for (const seconds start: trial_start) {
        // No draw when no spike can precede the trial, so kinds without one keep their random stream.
        bool fired = c.spike_before > 0 && rng.uniform() < c.spike_before;
        for (std::size_t b = 0; b < c.bins(); ++b) {
            fired = rng.uniform() < (fired ? c.after_spike[b] : c.after_silence[b]);
            if (fired) {
                // Keep the spike clear of the bin edges so rounding cannot move it to a neighbour.
                const double within = 0.05 + 0.9 * rng.uniform();
                spikes.push_back(start + (static_cast<double>(b) + within) * dt);
            }
        }
    }
}

unit_truth chain_truth(const binary_chain& c, double bin_ms, int max_letters) {
    const seconds dt = bin_ms / 1000;
    unit_truth truth;
    double mean_q = 0;
    for (double x: c.q) mean_q += x;
    mean_q /= static_cast<double>(c.bins());
    const double total = chain_pooled_entropy_rate(c), noise = chain_noise_entropy_rate(c);
    truth.values["bin_ms"] = bin_ms;
    truth.values["mean_rate_hz"] = mean_q / dt;
    truth.values["total_entropy_rate_bits_per_s"] = total / dt;
    truth.values["noise_entropy_rate_bits_per_s"] = noise / dt;
    truth.values["info_rate_bits_per_s"] = (total - noise) / dt;
    truth.values["bits_per_spike"] = (total - noise) / mean_q;
    for (const std::size_t k: {1, 2, 4}) {
        if (k > c.bins()) continue;
        const double bits = chain_coarse_letter_information(c, k);
        char key[64];
        std::snprintf(key, sizeof key, "letter_info_bits_at_%gms", bin_ms * static_cast<double>(k));
        truth.values[key] = bits;
        std::snprintf(key, sizeof key, "letter_info_rate_bits_per_s_at_%gms", bin_ms * static_cast<double>(k));
        truth.values[key] = bits / (dt * static_cast<double>(k));
    }
    for (int L = 1; L <= max_letters && static_cast<std::size_t>(L) < c.bins(); ++L) {
        const double total_L = chain_pooled_word_entropy(c, L);
        const double noise_L = chain_noise_word_entropy(c, L);
        truth.by_letters["total_entropy_bits"].push_back(total_L);
        truth.by_letters["noise_entropy_bits"].push_back(noise_L);
        truth.by_letters["info_bits"].push_back(total_L - noise_L);
        truth.by_letters["info_bits_per_letter"].push_back((total_L - noise_L) / L);
        truth.by_letters["info_rate_bits_per_s"].push_back((total_L - noise_L) / (L * dt));
    }
    return truth;
}

}  // namespace rastrum
