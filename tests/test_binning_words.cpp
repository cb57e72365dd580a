// Binning spike times into letters and letters into word codes.
#include <rastrum/binning.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/random.hpp>
#include <rastrum/sparse_words.hpp>
#include <rastrum/words.hpp>

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <set>
#include <tuple>

using namespace rastrum;

TEST(binning, whole_bins_tolerates_rounding) {
    EXPECT_EQ(whole_bins(8.0, 0.002), 4000u);   // the ratio may round just below a whole number
    EXPECT_EQ(whole_bins(1.0, 0.3), 3u);
    EXPECT_EQ(whole_bins(0.0, 0.001), 0u);
}

TEST(binning, half_open_bins_and_counts) {
    // Bin k holds [k dt, (k+1) dt): a spike at exactly 0.002 s belongs to bin 1 at dt = 2 ms.
    const std::vector<std::vector<seconds>> trials{{0.0, 0.0005, 0.002, 0.0059, 0.0061}, {0.0039}};
    const auto m = bin_spikes(trials, 0.002, 3, false);
    EXPECT_EQ(m.trials, 2u);
    EXPECT_EQ(m.bins, 3u);
    EXPECT_EQ(m.at(0, 0), 2u);
    EXPECT_EQ(m.at(1, 0), 1u);
    EXPECT_EQ(m.at(2, 0), 1u);   // 0.0061 is past the last bin and is dropped
    EXPECT_EQ(m.at(1, 1), 1u);
    EXPECT_EQ(m.largest, 2u);
    EXPECT_EQ(m.spikes, 5u);
    const auto b = bin_spikes(trials, 0.002, 3, true);
    EXPECT_EQ(b.at(0, 0), 1u);
    EXPECT_EQ(b.largest, 1u);
    EXPECT_EQ(b.spikes, 4u);
}

// Base-A positional notation is common practice: alphabet^L <= 2^64 bounds the codable length.
TEST(words, longest_codable_word) {
    EXPECT_EQ(longest_codable_word(2), 64);
    EXPECT_EQ(longest_codable_word(4), 32);
    EXPECT_EQ(longest_codable_word(3), 40);   // 3^40 = 1.2e19 < 2^64 = 1.8e19 < 3^41
    EXPECT_EQ(longest_codable_word(10), 19);  // 10^19 < 2^64 < 10^20
    EXPECT_EQ(longest_codable_word(256), 8);
}

TEST(words, too_long_words_are_refused_with_the_longest_that_fits) {
    letter_matrix m;
    m.trials = 1;
    m.bins = 30;
    m.letters.assign(30, 0);
    m.letters[3] = 9;
    m.largest = 9;
    try {
        sparse_words words(m, 10, 20);
        FAIL() << "expected insufficient_data";
    } catch (const insufficient_data& e) {
        EXPECT_NE(std::string(e.what()).find("at most 19 letters"), std::string::npos) << e.what();
    }
}

namespace {

letter_matrix random_letters(std::size_t trials, std::size_t bins, double spike_probability, letter largest,
                             std::uint64_t seed) {
    random_stream rng(seed);
    letter_matrix m;
    m.trials = trials;
    m.bins = bins;
    m.letters.assign(trials * bins, 0);
    for (auto& l: m.letters) {
        if (rng.uniform() < spike_probability) l = 1 + static_cast<letter>(rng.below(largest));
        m.largest = std::max(m.largest, l);
    }
    return m;
}

}  // namespace

// The listed words must be exactly the words holding a spike, with the codes of the definition
// above, and both lists sorted by code (what the counting relies on).
TEST(sparse_words, lists_exactly_the_words_holding_a_spike_sorted_by_code) {
    struct scenario {
        double p;
        letter largest;
        int max_letters;
    };
    for (const scenario sc: {scenario{0.02, 1, 16}, scenario{0.3, 1, 12}, scenario{0.1, 3, 9}, scenario{0.6, 5, 6}}) {
        const auto m = random_letters(23, 60, sc.p, sc.largest, 11 + static_cast<std::uint64_t>(sc.max_letters));
        const word_code alphabet = std::max<word_code>(2, m.largest + 1);
        sparse_words words(m, alphabet, sc.max_letters);
        for (int L = 1; L <= sc.max_letters; ++L) {
            if (L > 1) words.grow();
            ASSERT_EQ(words.positions(), m.bins - static_cast<std::size_t>(L) + 1);
            std::multiset<std::tuple<word_code, std::uint32_t, std::uint32_t>> expected, pooled;
            for (std::size_t t = 0; t < words.positions(); ++t) {
                std::multiset<std::tuple<word_code, std::uint32_t, std::uint32_t>> here, listed;
                for (std::size_t k = 0; k < m.trials; ++k) {
                    word_code code = 0;
                    for (int j = 0; j < L; ++j) code = code * alphabet + m.at(t + static_cast<std::size_t>(j), k);
                    if (code != 0) here.insert({code, static_cast<std::uint32_t>(k), static_cast<std::uint32_t>(t)});
                }
                for (const auto* e = words.begin_at(t); e < words.end_at(t); ++e) {
                    listed.insert({e->code, e->trial, e->position});
                    if (e + 1 < words.end_at(t)) {
                        ASSERT_LE(e->code, (e + 1)->code) << "L " << L << " t " << t;
                    }
                }
                ASSERT_EQ(listed, here) << "L " << L << " t " << t;
                expected.insert(here.begin(), here.end());
            }
            const auto& all = words.pooled();
            for (std::size_t i = 0; i < all.size(); ++i) {
                pooled.insert({all[i].code, all[i].trial, all[i].position});
                if (i + 1 < all.size()) {
                    ASSERT_LE(all[i].code, all[i + 1].code) << "L " << L;
                }
            }
            ASSERT_EQ(pooled, expected) << "L " << L;
        }
    }
}
