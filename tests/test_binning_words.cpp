// Binning spike times into letters and letters into word codes.
#include <rastrum/binning.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/random.hpp>
#include <rastrum/sparse_letters.hpp>
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
        sparse_words words(sparse_of(m), 10, 20);
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
    // One object started again for each scenario (its buffers are reused); 23 and 130 trials (a bin's
    // bits of which trials hold spikes span one 64-bit word or three).
    sparse_words words;
    for (const scenario sc: {scenario{0.02, 1, 16}, scenario{0.3, 1, 12}, scenario{0.1, 3, 9}, scenario{0.6, 5, 6},
                             scenario{0.05, 2, 10}, scenario{0.4, 1, 7}}) {
        const std::size_t trials = sc.max_letters == 10 || sc.max_letters == 7 ? 130 : 23;
        const auto m = random_letters(trials, 60, sc.p, sc.largest, 11 + static_cast<std::uint64_t>(sc.max_letters));
        const word_code alphabet = std::max<word_code>(2, m.largest + 1);
        const sparse_letters sparse = sparse_of(m);
        words.start(sparse, alphabet, sc.max_letters);
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

// The non-zero letters, bin by bin in trial order, are those of the letter matrix binned the dense
// way (bin_spikes, checked by hand above), for counts and binary letters, spikes past the last bin
// and trials without spikes; at() reads any letter back.
TEST(sparse_letters, binning_gives_the_non_zero_letters_of_the_matrix) {
    random_stream rng(5);
    std::vector<std::vector<seconds>> trials(70);
    for (auto& t: trials) {
        const std::size_t n = static_cast<std::size_t>(rng.below(40));
        for (std::size_t i = 0; i < n; ++i) t.push_back(0.105 * rng.uniform());  // some past 0.1 s
        std::sort(t.begin(), t.end());
    }
    trials[3].clear();
    sparse_letters sparse;
    for (bool binary: {false, true}) {
        const letter_matrix dense = bin_spikes(trials, 0.002, 50, binary);
        bin_spikes_sparse(trials, 0.002, 50, binary, sparse);
        const sparse_letters expected = sparse_of(dense);
        EXPECT_EQ(sparse.trials, 70u);
        EXPECT_EQ(sparse.bins, 50u);
        EXPECT_EQ(sparse.largest, dense.largest);
        EXPECT_EQ(sparse.spikes, dense.spikes);
        EXPECT_EQ(sparse.bin_start, expected.bin_start);
        ASSERT_EQ(sparse.nonzero.size(), expected.nonzero.size());
        for (std::size_t i = 0; i < sparse.nonzero.size(); ++i) {
            EXPECT_EQ(sparse.nonzero[i].trial, expected.nonzero[i].trial);
            EXPECT_EQ(sparse.nonzero[i].value, expected.nonzero[i].value);
        }
        for (std::size_t b = 0; b < 50; ++b) {
            for (std::size_t k = 0; k < 70; ++k) ASSERT_EQ(sparse.at(b, k), dense.at(b, k)) << b << " " << k;
        }
    }
}

// Rotation of trial k by o_k: new bin b holds old bin (b + o_k) mod bins (the definition in
// notes/methods.md 4.6), checked letter by letter against the matrix, for offsets of 0, within and
// beyond the trial, on one rotator used for several rotations.
TEST(sparse_letters, rotating_trials_moves_each_trials_letters) {
    const letter_matrix m = random_letters(70, 40, 0.2, 3, 8);
    const sparse_letters sparse = sparse_of(m);
    trial_rotator rotator;
    rotator.start(sparse);
    sparse_letters rotated;
    random_stream rng(9);
    for (int round = 0; round < 3; ++round) {
        std::vector<std::size_t> offsets(70);
        for (auto& o: offsets) o = static_cast<std::size_t>(rng.below(90));
        offsets[0] = 0;
        rotator.rotate(offsets, rotated);
        EXPECT_EQ(rotated.spikes, sparse.spikes);
        EXPECT_EQ(rotated.largest, sparse.largest);
        for (std::size_t b = 0; b < 40; ++b) {
            for (std::uint32_t i = rotated.bin_start[b]; i + 1 < rotated.bin_start[b + 1]; ++i) {
                ASSERT_LT(rotated.nonzero[i].trial, rotated.nonzero[i + 1].trial) << "trial order within a bin";
            }
            for (std::size_t k = 0; k < 70; ++k) {
                ASSERT_EQ(rotated.at(b, k), m.at((b + offsets[k]) % 40, k)) << round << " " << b << " " << k;
            }
        }
    }
    // A hand-made case: trial 0 holds 1 2 3 4 and is moved by 1, trial 1 holds 5 6 7 8 moved by 3.
    letter_matrix small;
    small.trials = 2;
    small.bins = 4;
    small.letters = {1, 5, 2, 6, 3, 7, 4, 8};  // bin-major
    small.largest = 8;
    const sparse_letters s = sparse_of(small);
    rotator.start(s);
    rotator.rotate({1, 3}, rotated);
    std::vector<letter> got;
    for (std::size_t b = 0; b < 4; ++b) {
        for (std::size_t k = 0; k < 2; ++k) got.push_back(rotated.at(b, k));
    }
    EXPECT_EQ(got, (std::vector<letter>{2, 8, 3, 5, 4, 6, 1, 7}));
}
