// Binning spike times into letters and letters into word codes.
#include <rastrum/binning.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/random.hpp>
#include <rastrum/words.hpp>

#include <gtest/gtest.h>

#include <cmath>

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

TEST(words, codes_are_base_alphabet_digits_first_letter_most_significant) {
    random_stream rng(3);
    std::vector<std::vector<seconds>> trials(5);
    for (auto& t: trials) {
        for (double x = rng.exponential() * 0.01; x < 0.1; x += rng.exponential() * 0.01) t.push_back(x);
    }
    const auto m = bin_spikes(trials, 0.004, 25, false);
    const word_code alphabet = m.largest + 1;
    const int max_letters = 7;
    word_codes words(m, alphabet, max_letters);
    for (int L = 1; L <= max_letters; ++L) {
        if (L > 1) words.grow();
        ASSERT_EQ(words.positions(), m.bins - static_cast<std::size_t>(L) + 1);
        for (std::size_t t = 0; t < words.positions(); ++t) {
            for (std::size_t k = 0; k < m.trials; ++k) {
                word_code expected = 0;
                for (int j = 0; j < L; ++j) expected = expected * alphabet + m.at(t + static_cast<std::size_t>(j), k);
                ASSERT_EQ(words.at_position(t)[k], expected) << "L " << L << " t " << t << " k " << k;
            }
        }
    }
    EXPECT_NEAR(words.word_space(), std::pow(static_cast<double>(alphabet), max_letters), 1e-6);
}

TEST(words, too_long_words_are_refused_with_the_longest_that_fits) {
    letter_matrix m;
    m.trials = 1;
    m.bins = 30;
    m.letters.assign(30, 0);
    m.letters[3] = 9;
    m.largest = 9;
    try {
        word_codes words(m, 10, 20);
        FAIL() << "expected insufficient_data";
    } catch (const insufficient_data& e) {
        EXPECT_NE(std::string(e.what()).find("at most 19 letters"), std::string::npos) << e.what();
    }
}
