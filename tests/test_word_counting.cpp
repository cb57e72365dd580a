// Counting words in nested subsets of trials in one pass, against counting each subset directly.
#include <rastrum/random.hpp>
#include <rastrum/trial_partition.hpp>
#include <rastrum/word_counting.hpp>

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

TEST(word_counting, one_pass_equals_direct_counts_in_every_subset) {
    random_stream rng(99);
    const std::size_t trials = 37;
    const auto splits = make_nested_splits(trials, 4, 1);
    std::vector<word_occurrence> words;
    for (int i = 0; i < 3000; ++i) {
        words.push_back({rng.below(1 + rng.below(50)), static_cast<std::uint32_t>(rng.below(trials))});
    }
    sort_by_code(words);
    subset_counter counter(splits);
    counter.count_sorted(words);
    for (std::size_t s = 0; s < splits.size(); ++s) {
        for (int level = 0; level < nested_levels; ++level) {
            for (int b = 0; b < (1 << level); ++b) {
                std::map<word_code, count> direct;
                for (const auto& w: words) {
                    const int block = splits[s].block_of[w.trial] >> (nested_levels - 1 - level);
                    if (block == b) ++direct[w.code];
                }
                count_summary expected;
                for (const auto& [code, n]: direct) expected.add(n);
                const auto& got = counter.summary(s, subset_index(level, b));
                EXPECT_EQ(got.samples, expected.samples);
                EXPECT_EQ(got.distinct, expected.distinct);
                EXPECT_NEAR(got.sum_n_log2_n, expected.sum_n_log2_n, 1e-9);
                EXPECT_NEAR(got.sum_leave_one_out, expected.sum_leave_one_out, 1e-9);
            }
        }
    }
}
