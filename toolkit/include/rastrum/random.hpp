#pragma once
/// Seeded randomness that gives the same numbers on every platform and for any thread count.
/// Every random task derives its own stream from (seed, task tags) with `derive_seed`, so a
/// result never depends on which thread ran it or on what else was computed. The standard
/// library's distributions are not used: their algorithms differ between implementations.
#include <cstdint>
#include <initializer_list>
#include <string_view>
#include <vector>

namespace rastrum {

/// SplitMix64 finaliser: a bijective mixing of 64 bits (Steele, Lea & Flood 2014, OOPSLA).
std::uint64_t mix64(std::uint64_t x);

/// A stable 64-bit hash of text (FNV-1a), used to tag tasks by unit id.
std::uint64_t text_hash(std::string_view text);

/// A seed for one task, from the user's seed and tags naming the task (unit, bin width, ...).
std::uint64_t derive_seed(std::uint64_t seed, std::initializer_list<std::uint64_t> tags);

/// xoshiro256** (Blackman & Vigna 2021, ACM TOMS 47:36), seeded through SplitMix64.
class random_stream {
public:
    explicit random_stream(std::uint64_t seed);
    std::uint64_t next();
    /// Uniform on [0, 1) with 53 random bits.
    double uniform();
    /// Uniform integer on [0, n), unbiased (Lemire 2019, ACM TOMACS 29:3). Requires n > 0.
    std::uint64_t below(std::uint64_t n);
    /// Exponential with mean 1.
    double exponential();

private:
    std::uint64_t s_[4];
};

/// A standard normal variate by Box-Muller; the pair's second value is discarded so that a draw
/// never depends on what was drawn before.
double gaussian(random_stream& rng);

/// The logarithm of a Gamma(shape, 1) variate (Marsaglia & Tsang 2000, ACM TOMS 26:363, with their
/// boost G(a) = G(a + 1) U^(1/a) for a < 1), kept in logs so that tiny shapes do not underflow.
double log_gamma_variate(double shape, random_stream& rng);

/// Fisher-Yates shuffle driven by `rng`.
template <typename T>
void shuffle(std::vector<T>& v, random_stream& rng) {
    for (std::size_t i = v.size(); i > 1; --i) {
        std::size_t j = static_cast<std::size_t>(rng.below(i));
        std::swap(v[i - 1], v[j]);
    }
}

}  // namespace rastrum
