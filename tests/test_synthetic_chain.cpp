// The exact answers of Markov-chain letters (frozen-bins --refractory, patterns) against independent
// computations: brute-force enumeration of every trial on a short chain, and the entropy rate of a
// Markov chain written from its transition matrix.
#include "synthetic_chain.hpp"

#include <rastrum/synthetic.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <map>

using namespace rastrum;

namespace {

double entropy_of(const std::map<unsigned, double>& dist) {
    double h = 0;
    for (const auto& [word, p]: dist) {
        if (p > 0) h -= p * std::log2(p);
    }
    return h;
}

double h2(double p) { return p <= 0 || p >= 1 ? 0.0 : -p * std::log2(p) - (1 - p) * std::log2(1 - p); }

// A short chain with hand-chosen probabilities, bursty and refractory bins mixed, and a spike
// before the trial with probability 0.3.
const std::vector<double> after_silence{0.2, 0.05, 0.4, 0.1, 0.3, 0.02, 0.25};
const std::vector<double> after_spike{0.9, 0.0, 0.6, 0.1, 0.7, 0.5, 0.0};
constexpr double spike_before = 0.3;

}  // namespace

// Every one of the 2^7 trials with its probability (product of the transitions, analytic); the word
// of L letters at position t is read off each trial. Noise entropy: the average over t of H(word at t);
// total: H of the word distribution pooled over t (the definitions of the direct method: Strong,
// Koberle, de Ruyter van Steveninck & Bialek 1998, Phys. Rev. Lett. 80:197).
TEST(synthetic_chain, word_entropies_match_brute_force_enumeration) {
    const binary_chain chain(after_silence, after_spike, spike_before);
    const std::size_t bins = after_silence.size();
    std::vector<double> trial_p(std::size_t{1} << bins);
    for (unsigned trial = 0; trial < trial_p.size(); ++trial) {
        double p = 0;
        for (int before: {0, 1}) {
            // Sum over the hidden letter before the trial.
            double q = before ? spike_before : 1 - spike_before;
            int previous = before;
            for (std::size_t t = 0; t < bins; ++t) {
                const int x = (trial >> t) & 1;
                const double fire = previous ? after_spike[t] : after_silence[t];
                q *= x ? fire : 1 - fire;
                previous = x;
            }
            p += q;
        }
        trial_p[trial] = p;
    }
    double total_p = 0;
    for (double p: trial_p) total_p += p;
    ASSERT_NEAR(total_p, 1.0, 1e-12);
    for (int L = 1; L <= 5; ++L) {
        const std::size_t positions = bins - static_cast<std::size_t>(L) + 1;
        std::map<unsigned, double> pooled;
        double noise = 0;
        for (std::size_t t = 0; t < positions; ++t) {
            std::map<unsigned, double> at_t;
            for (unsigned trial = 0; trial < trial_p.size(); ++trial) {
                const unsigned word = (trial >> t) & ((1u << L) - 1);
                at_t[word] += trial_p[trial];
                pooled[word] += trial_p[trial] / static_cast<double>(positions);
            }
            noise += entropy_of(at_t) / static_cast<double>(positions);
        }
        EXPECT_NEAR(chain_noise_word_entropy(chain, L), noise, 1e-12) << L;
        EXPECT_NEAR(chain_pooled_word_entropy(chain, L), entropy_of(pooled), 1e-12) << L;
    }
    // Letters of k bins hold the spike count of bins ik..ik+k-1 (a last partial letter dropped).
    for (std::size_t k: {1u, 2u, 3u}) {
        const std::size_t letters = bins / k;
        std::map<unsigned, double> pooled;
        double noise = 0;
        for (std::size_t i = 0; i < letters; ++i) {
            std::map<unsigned, double> at_i;
            for (unsigned trial = 0; trial < trial_p.size(); ++trial) {
                unsigned n = 0;
                for (std::size_t t = i * k; t < (i + 1) * k; ++t) n += (trial >> t) & 1;
                at_i[n] += trial_p[trial];
                pooled[n] += trial_p[trial] / static_cast<double>(letters);
            }
            noise += entropy_of(at_i) / static_cast<double>(letters);
        }
        EXPECT_NEAR(chain_coarse_letter_information(chain, k), entropy_of(pooled) - noise, 1e-12) << k;
    }
    // The spike probability of each bin, by the same enumeration.
    for (std::size_t t = 0; t < bins; ++t) {
        double q = 0;
        for (unsigned trial = 0; trial < trial_p.size(); ++trial) q += ((trial >> t) & 1) * trial_p[trial];
        EXPECT_NEAR(chain.q[t], q, 1e-12) << t;
    }
}

// The pattern unit's marginal is p in every bin, so single letters carry exactly no information; the
// per-letter and per-second keys are the information per word divided by L and by L dt.
TEST(synthetic_chain, pattern_unit_has_no_single_letter_information) {
    patterns_spec spec;
    spec.session.trials = 1;
    spec.session.duration = 4;
    const auto synth = make_patterns(spec);
    ASSERT_EQ(synth.truth.size(), 1u);
    const auto& t = synth.truth[0];
    EXPECT_NEAR(t.values.at("mean_rate_hz"), 25.0, 1e-9);
    const auto& info = t.by_letters.at("info_bits");
    ASSERT_EQ(info.size(), static_cast<std::size_t>(patterns_spec::answer_letters));
    EXPECT_NEAR(info[0], 0.0, 1e-12);
    for (std::size_t i = 1; i < info.size(); ++i) {
        EXPECT_GT(info[i], info[i - 1]) << "longer words see more of the patterns";
        const double L = static_cast<double>(i + 1);
        EXPECT_NEAR(t.by_letters.at("info_bits_per_letter")[i], info[i] / L, 1e-15);
        EXPECT_NEAR(t.by_letters.at("info_rate_bits_per_s")[i], info[i] / (L * 0.002), 1e-12);
    }
}

// Infinite word length. With bin types drawn independently (bursty with probability f), the pooled
// letters are the Markov chain with averaged transitions a = f a_B + (1 - f) a_R after a spike and
// b = p (1 - a) / (1 - p) after silence, stationary at P(spike) = p, whose entropy rate is
// p H2(a) + (1 - p) H2(b) (Cover & Thomas 2006, Elements of Information Theory, theorem 4.2.4); the
// noise rate is the same average taken inside each bin type. On a long trial the realised share of
// bursty bins is f within about 0.3%, so the answers must match these within 2%; and the increments of
// the enumerated pooled word entropy, H(L) - H(L - 1), must approach the total rate (theorem 4.2.1).
TEST(synthetic_chain, pattern_unit_rates_match_the_markov_chain_entropy_rate) {
    patterns_spec spec;
    spec.session.trials = 1;
    spec.session.duration = 200;  // 100000 bins
    spec.seed = 7;
    const auto t = make_patterns(spec).truth.at(0);
    const double p = 0.05, f = 0.5, aB = 0.5, aR = 0.0, dt = 0.002;
    const auto after_silence_of = [&](double a) { return p * (1 - a) / (1 - p); };
    const double a = f * aB + (1 - f) * aR;
    const double total = p * h2(a) + (1 - p) * h2(after_silence_of(a));
    const double noise = f * (p * h2(aB) + (1 - p) * h2(after_silence_of(aB))) +
                         (1 - f) * (p * h2(aR) + (1 - p) * h2(after_silence_of(aR)));
    EXPECT_NEAR(t.values.at("total_entropy_rate_bits_per_s"), total / dt, 0.005 * total / dt);
    EXPECT_NEAR(t.values.at("noise_entropy_rate_bits_per_s"), noise / dt, 0.005 * noise / dt);
    EXPECT_NEAR(t.values.at("info_rate_bits_per_s"), (total - noise) / dt, 0.02 * (total - noise) / dt);
    const auto& pooled = t.by_letters.at("total_entropy_bits");
    const auto& noise_words = t.by_letters.at("noise_entropy_bits");
    for (std::size_t i = 2; i < 8; ++i) {
        EXPECT_NEAR((pooled[i] - pooled[i - 1]) / dt, t.values.at("total_entropy_rate_bits_per_s"), 0.5) << i + 1;
        EXPECT_NEAR((noise_words[i] - noise_words[i - 1]) / dt, t.values.at("noise_entropy_rate_bits_per_s"), 0.5) << i + 1;
    }
    // Information per letter rises towards the rate from below (the 1/L approach of a Markov source).
    const auto& per_second = t.by_letters.at("info_rate_bits_per_s");
    EXPECT_LT(per_second.back(), t.values.at("info_rate_bits_per_s"));
    EXPECT_GT(per_second.back(), 0.8 * t.values.at("info_rate_bits_per_s"));
}

// The spikes drawn follow the chain: across trials every bin fires with probability p, and pooled
// over bins a spike follows a spike with the averaged probability a = 0.25 (binomial spreads; the
// bounds are about 4 standard errors, the second widened by the spread of the realised share of
// bursty bins, which moves a by 0.5 sqrt(0.25 / 2000) = 0.0056 per standard deviation).
TEST(synthetic_chain, pattern_unit_spikes_follow_the_chain) {
    patterns_spec spec;
    spec.session.trials = 400;
    spec.session.duration = 4;
    spec.session.background_hz = 0;
    const auto synth = make_patterns(spec);
    const std::size_t bins = 2000;
    std::vector<std::vector<char>> letters(spec.session.trials, std::vector<char>(bins, 0));
    for (const double time: synth.rec.units[0].spike_times) {
        const auto k = static_cast<std::size_t>(time / (spec.session.duration + spec.session.gap));
        const double within = time - synth.rec.trial_start.at(k);
        letters[k][static_cast<std::size_t>(within / 0.002)] = 1;
    }
    double spikes = 0, pairs = 0;
    for (const auto& trial: letters) {
        for (std::size_t b = 0; b < bins; ++b) {
            spikes += trial[b];
            if (b > 0) pairs += trial[b] && trial[b - 1];
        }
    }
    const double n = static_cast<double>(spec.session.trials * bins);
    EXPECT_NEAR(spikes / n, 0.05, 4 * std::sqrt(0.05 * 0.95 / n));
    EXPECT_NEAR(pairs / spikes, 0.25, 4 * std::sqrt(0.25 * 0.75 / spikes + 0.5 * 0.5 * 0.25 / bins));
}
