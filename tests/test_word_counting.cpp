// Counting words in nested subsets of trials in one pass, against counting each subset directly.
#include <rastrum/code_counting.hpp>
#include <rastrum/random.hpp>
#include <rastrum/trial_partition.hpp>
#include <rastrum/subset_tally.hpp>

#include <algorithm>

#include <gtest/gtest.h>

#include <map>

using namespace rastrum;

TEST(trial_partition, blocks_are_near_equal_and_nested) {
    const auto splits = make_nested_splits(150, 3, 42);
    ASSERT_EQ(splits.size(), 3u);
    for (const auto& s: splits) {
        const auto size = subset_sizes(s);
        EXPECT_EQ(size[subset_index(0, 0)], 150u);
        EXPECT_EQ(size[subset_index(1, 0)] + size[subset_index(1, 1)], 150u);
        for (int b = 0; b < 8; ++b) {
            EXPECT_GE(size[subset_index(3, b)], 18u);
            EXPECT_LE(size[subset_index(3, b)], 19u);
        }
    }
    EXPECT_NE(splits[0].block_of, splits[1].block_of);
    EXPECT_EQ(make_nested_splits(150, 3, 42)[2].block_of, splits[2].block_of);  // seeded
}

// The tally must give, for every subset, the summary of the histograms counted directly (common
// practice: count each subset's words in a map, then sum the summaries of the histograms), for words
// seen once, a few times, more often than the 255 a byte lane holds and more often than the table
// holds, and for the unlisted all-zero word; with 4 splits (byte lanes of any width) and 8 (the
// default, a fixed width of vector lanes), and for histograms listing many words (counted per
// trial) and few (counted lane by lane).
class subset_tally_splits: public ::testing::TestWithParam<unsigned> {};

TEST_P(subset_tally_splits, equals_direct_counts_in_every_subset) {
    random_stream rng(99);
    const std::size_t trials = 37;
    const auto splits = make_nested_splits(trials, GetParam(), 1);
    struct histogram {
        std::vector<sparse_words::entry> words;
        count per_trial;
    };
    std::vector<histogram> histograms(3);
    histograms[0].per_trial = 400;
    histograms[1].per_trial = 150;
    histograms[2].per_trial = 3;
    for (std::size_t index = 0; index < histograms.size(); ++index) {
        auto& h = histograms[index];
        const int scale = index == 2 ? 40 : 1;  // the last lists fewer words than 4 per trial
        for (int i = 0; i < 2000 / scale; ++i) {
            h.words.push_back({1 + rng.below(1 + rng.below(50)), static_cast<std::uint32_t>(rng.below(trials)), 0});
        }
        for (int i = 0; i < 1200 / scale; ++i) h.words.push_back({100 + rng.below(900), static_cast<std::uint32_t>(rng.below(trials)), 0});
        for (int i = 0; i < 700 / scale; ++i) h.words.push_back({77, static_cast<std::uint32_t>(rng.below(trials)), 0});
        std::sort(h.words.begin(), h.words.end(), [](const auto& a, const auto& b) { return a.code < b.code; });
        // At most per_trial words per trial, as in a real histogram.
        std::vector<count> in_trial(trials, 0);
        std::vector<sparse_words::entry> kept;
        for (const auto& w: h.words) {
            if (in_trial[w.trial]++ < h.per_trial) kept.push_back(w);
        }
        h.words = kept;
    }
    const auto other_splits = make_nested_splits(trials, GetParam(), 2);
    for (const count dense_limit: {count{5}, count{4096}}) {
        subset_tally tally(splits, trials, dense_limit);
        for (int repeat = 0; repeat < 3; ++repeat) {  // clear() and reset() must forget everything
            if (repeat == 1) {
                tally.reset(other_splits, trials, dense_limit);
                for (const auto& h: histograms) tally.add_histogram(h.words.data(), h.words.data() + h.words.size(), h.per_trial);
                tally.reset(splits, trials, dense_limit);
            }
            tally.clear();
            for (const auto& h: histograms) tally.add_histogram(h.words.data(), h.words.data() + h.words.size(), h.per_trial);
            std::vector<count_summary> all;
            tally.summaries(all);
            ASSERT_EQ(all.size(), splits.size() * nested_subsets);
            for (std::size_t s = 0; s < splits.size(); ++s) {
                for (int level = 0; level < nested_levels; ++level) {
                    for (int b = 0; b < (1 << level); ++b) {
                        count_summary expected;
                        for (const auto& h: histograms) {
                            std::map<word_code, count> direct;
                            count in_subset = 0;
                            for (std::size_t k = 0; k < trials; ++k) {
                                if ((splits[s].block_of[k] >> (nested_levels - 1 - level)) == b) ++in_subset;
                            }
                            direct[0] = h.per_trial * in_subset;
                            for (const auto& w: h.words) {
                                if ((splits[s].block_of[w.trial] >> (nested_levels - 1 - level)) == b) {
                                    ++direct[w.code];
                                    --direct[0];
                                }
                            }
                            count_summary one;
                            for (const auto& [code, n]: direct) one.add(n);
                            expected.merge(one);
                        }
                        const auto got = tally.summary(s, subset_index(level, b));
                        const auto& at_once = all[s * nested_subsets + static_cast<std::size_t>(subset_index(level, b))];
                        EXPECT_EQ(at_once.samples, got.samples);
                        EXPECT_EQ(at_once.distinct, got.distinct);
                        EXPECT_EQ(at_once.sum_n_log2_n, got.sum_n_log2_n);  // the same sums in the same order
                        EXPECT_EQ(at_once.sum_leave_one_out, got.sum_leave_one_out);
                        EXPECT_EQ(got.samples, expected.samples);
                        EXPECT_EQ(got.distinct, expected.distinct);
                        EXPECT_NEAR(got.sum_n_log2_n, expected.sum_n_log2_n, 1e-9 * expected.sum_n_log2_n);
                        EXPECT_NEAR(got.sum_leave_one_out, expected.sum_leave_one_out, 1e-9 * expected.sum_leave_one_out);
                    }
                }
            }
        }
    }
}

INSTANTIATE_TEST_SUITE_P(split_counts, subset_tally_splits, ::testing::Values(4u, 8u));

// Histograms of one word per trial (the noise entropy's, one per start position) that list 0 to 6
// words of distinct trials, summed: against a map per subset (common practice), so that the all-zero
// word counted by its differences from "in every trial" (few listed words) and per eighth (more)
// agree with counting it directly.
TEST(subset_tally, one_word_per_trial_with_few_listed_words) {
    random_stream rng(7);
    const std::size_t trials = 45;
    const auto splits = make_nested_splits(trials, 8, 3);
    std::vector<std::vector<sparse_words::entry>> histograms;
    for (int h = 0; h < 400; ++h) {
        const std::size_t listed = static_cast<std::size_t>(rng.below(7));
        std::vector<std::size_t> order(trials);
        for (std::size_t k = 0; k < trials; ++k) order[k] = k;
        shuffle(order, rng);
        std::vector<sparse_words::entry> words;
        for (std::size_t j = 0; j < listed; ++j) {
            words.push_back({1 + rng.below(2), static_cast<std::uint32_t>(order[j]), 0});
        }
        std::sort(words.begin(), words.end(), [](const auto& a, const auto& b) { return a.code < b.code; });
        histograms.push_back(words);
    }
    subset_tally tally(splits, trials, trials);
    for (int repeat = 0; repeat < 2; ++repeat) {  // clear() must forget the pending all-zero words too
        tally.clear();
        if (repeat == 1) {
            for (const auto& h: histograms) tally.add_histogram(h.data(), h.data() + h.size(), 1);
            tally.clear();
        }
        for (const auto& h: histograms) tally.add_histogram(h.data(), h.data() + h.size(), 1);
        std::vector<count_summary> all;
        tally.summaries(all);
        for (std::size_t s = 0; s < splits.size(); ++s) {
            for (int level = 0; level < nested_levels; ++level) {
                for (int b = 0; b < (1 << level); ++b) {
                    count_summary expected;
                    for (const auto& h: histograms) {
                        std::map<word_code, count> direct;
                        for (std::size_t k = 0; k < trials; ++k) {
                            if ((splits[s].block_of[k] >> (nested_levels - 1 - level)) == b) ++direct[0];
                        }
                        for (const auto& w: h) {
                            if ((splits[s].block_of[w.trial] >> (nested_levels - 1 - level)) == b) {
                                ++direct[w.code];
                                --direct[0];
                            }
                        }
                        for (const auto& [code, n]: direct) expected.add(n);
                    }
                    const auto& got = all[s * nested_subsets + static_cast<std::size_t>(subset_index(level, b))];
                    EXPECT_EQ(got.samples, expected.samples);
                    EXPECT_EQ(got.distinct, expected.distinct);
                    EXPECT_NEAR(got.sum_n_log2_n, expected.sum_n_log2_n, 1e-9 * expected.sum_n_log2_n);
                    EXPECT_NEAR(got.sum_leave_one_out, expected.sum_leave_one_out, 1e-9 * expected.sum_leave_one_out);
                }
            }
        }
    }
}

// One histogram given as each trial's count of each word (the 1-letter words pooled over positions)
// must count exactly as its list of occurrences sorted by code: words seen 0, 1, 2, 3 and many times,
// with a table limit that sends large counts to the direct sums, bit for bit (the same sums in the
// same order; add_histogram itself is checked against maps above).
TEST(subset_tally, per_trial_counts_equal_the_list_of_occurrences) {
    random_stream rng(12);
    const std::size_t trials = 40;
    const auto splits = make_nested_splits(trials, 8, 4);
    const std::size_t words = 7;
    const std::vector<count> totals{0, 1, 2, 3, 60, 900, 5};
    std::vector<std::uint32_t> counts(words * trials, 0);
    for (std::size_t w = 0; w < words; ++w) {
        for (count i = 0; i < totals[w]; ++i) ++counts[w * trials + rng.below(trials)];
    }
    const count per_trial = 50;
    std::vector<sparse_words::entry> occurrences;
    for (std::size_t w = 0; w < words; ++w) {
        for (std::size_t k = 0; k < trials; ++k) {
            for (std::uint32_t j = 0; j < counts[w * trials + k]; ++j) {
                occurrences.push_back({w + 1, static_cast<std::uint32_t>(k), 0});
            }
        }
    }
    for (const count dense_limit: {count{5}, count{4096}}) {
        subset_tally listed(splits, trials, dense_limit), per_trial_counts(splits, trials, dense_limit);
        listed.add_histogram(occurrences.data(), occurrences.data() + occurrences.size(), per_trial);
        per_trial_counts.add_trial_counts(counts.data(), words, per_trial);
        std::vector<count_summary> a, b;
        listed.summaries(a);
        per_trial_counts.summaries(b);
        ASSERT_EQ(a.size(), b.size());
        for (std::size_t c = 0; c < a.size(); ++c) {
            EXPECT_EQ(a[c].samples, b[c].samples) << c;
            EXPECT_EQ(a[c].distinct, b[c].distinct) << c;
            EXPECT_EQ(a[c].sum_n_log2_n, b[c].sum_n_log2_n) << c;
            EXPECT_EQ(a[c].sum_leave_one_out, b[c].sum_leave_one_out) << c;
        }
    }
}

// Counts of codes against a map of each code to its count (common practice), in the map's order, for
// small spaces (the dense table), large and extreme ones (sorting), one code and none.
TEST(counts_of_codes, equal_a_map_in_code_order) {
    random_stream rng(17);
    std::vector<std::vector<word_code>> cases{{}, {0}, {~word_code{0}, 0, ~word_code{0}}};
    for (const word_code space: {word_code{1}, word_code{7}, word_code{1000}, word_code{1} << 20, word_code{1} << 40}) {
        for (const std::size_t n: {std::size_t{1}, std::size_t{50}, std::size_t{5000}}) {
            std::vector<word_code> codes(n);
            for (auto& c: codes) c = rng.below(space);
            cases.push_back(codes);
        }
    }
    for (const auto& codes: cases) {
        std::map<word_code, count> direct;
        for (const word_code c: codes) ++direct[c];
        std::vector<count> expected;
        for (const auto& [code, n]: direct) expected.push_back(n);
        EXPECT_EQ(counts_of_codes(codes), expected) << codes.size() << " codes";
        // A bound on the codes only saves a pass; a wrong one (codes at or above it) changes nothing.
        for (const word_code space: {word_code{1}, word_code{8}, word_code{1000}, word_code{1} << 20}) {
            EXPECT_EQ(counts_of_codes(codes, space), expected) << codes.size() << " codes below " << space;
        }
    }
}
