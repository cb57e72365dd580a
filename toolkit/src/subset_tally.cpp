#include <rastrum/errors.hpp>
#include <rastrum/subset_tally.hpp>

#include <algorithm>
#include <cmath>
#include <cstring>

namespace rastrum {

namespace {

using entry = sparse_words::entry;

/// 16 byte lanes added at once (a GCC and Clang vector extension; SSE2 on x86-64).
typedef std::uint8_t byte_vector __attribute__((vector_size(16)));

/// Counts of the 15 nested subsets from the counts of the 8 eighths, in subset_index order.
template <typename T>
[[gnu::always_inline]] inline void compose(const T* eighths, T* subsets) {
    T* out = subsets;
    for (int b = 0; b < 8; ++b) out[subset_index(3, b)] = eighths[b];
    for (int q = 0; q < 4; ++q) out[subset_index(2, q)] = eighths[2 * q] + eighths[2 * q + 1];
    for (int h = 0; h < 2; ++h) out[subset_index(1, h)] = out[subset_index(2, 2 * h)] + out[subset_index(2, 2 * h + 1)];
    out[subset_index(0, 0)] = out[subset_index(1, 0)] + out[subset_index(1, 1)];
}

}  // namespace

void subset_tally::reset(const std::vector<nested_split>& splits, std::size_t trials, count dense_limit) {
    // The table of the same shape is kept: only its rows written since the last clear are zeroed.
    const bool same_table = !frequency_.empty() && std::max<count>(dense_limit, 2) == dense_limit_ &&
                            splits.size() * nested_subsets == cells_;
    if (same_table) clear();
    splits_ = &splits;
    splits_count_ = splits.size();
    trials_ = trials;
    lanes_ = splits.size() * nested_blocks;
    dense_limit_ = std::max<count>(dense_limit, 2);
    rows_ = static_cast<std::size_t>(dense_limit_) + 1;
    cells_ = splits.size() * nested_subsets;
    const std::size_t cells = cells_;
    lane_of_.assign(trials_ * lanes_, 0);
    lane_index_.assign(trials_ * splits.size(), 0);
    eighth_size_.assign(lanes_, 0);
    cell_size_.assign(cells, 0);
    for (std::size_t s = 0; s < splits.size(); ++s) {
        if (splits[s].block_of.size() != trials_) throw internal_error("subset_tally: split of another trial count");
        for (std::size_t k = 0; k < trials_; ++k) {
            const std::size_t lane = s * nested_blocks + splits[s].block_of[k];
            lane_of_[k * lanes_ + lane] = 1;
            lane_index_[k * splits.size() + s] = static_cast<std::uint32_t>(lane);
            ++eighth_size_[lane];
        }
        compose(eighth_size_.data() + s * nested_blocks, cell_size_.data() + s * nested_subsets);
    }
    if (n_log2_n_.size() != rows_) {
        n_log2_n_.resize(rows_);
        leave_one_out_.resize(rows_);
        for (count n = 0; n <= dense_limit_; ++n) {
            n_log2_n_[n] = n_log2_n(n);
            leave_one_out_[n] = static_cast<double>(n) * n_log2_n_step(static_cast<double>(n));
        }
    }
    if (!same_table) {
        frequency_.assign(rows_ * cells_, 0);
        row_marked_.assign(rows_, 0);
        marked_rows_.clear();
    }
    // Counts above the trial count (and 64) are few: a word pooled over positions that often.
    wide_row_ = std::min<count>(dense_limit_, std::max<count>(trials_, 64));
    largest_ = 0;
    beyond_.assign(cells, count_summary{});
    per_trial_ = 0;
    eighths_.assign(lanes_, 0);
    partial_.assign(lanes_, 0);
    zero_full_ = 0;
    zero_less_one_.assign(trials_, 0);
}

void subset_tally::clear() {
    std::fill_n(frequency_.begin(), (std::min(largest_, wide_row_) + 1) * cells_, 0u);
    for (const count n: marked_rows_) {
        std::fill_n(frequency_.begin() + static_cast<std::ptrdiff_t>(n * cells_), cells_, 0u);
        row_marked_[n] = 0;
    }
    marked_rows_.clear();
    zero_full_ = 0;
    std::fill(zero_less_one_.begin(), zero_less_one_.end(), 0u);
    largest_ = 0;
    std::fill(beyond_.begin(), beyond_.end(), count_summary{});
    per_trial_ = 0;
}

void subset_tally::count_eighths(const entry* first, const entry* last) {
    std::fill(eighths_.begin(), eighths_.end(), 0u);
    const std::size_t lanes = lanes_;
    if (last - first <= 12) {  // lane by lane; more by adding each trial's byte lanes
        const std::size_t splits = splits_count_;
        for (; first < last; ++first) {
            const std::uint32_t* lane = lane_index_.data() + first->trial * splits;
            for (std::size_t s = 0; s < splits; ++s) ++eighths_[lane[s]];
        }
        return;
    }
    if (lanes == 64) {
        add_byte_lanes<64>(first, last);  // the default 8 splits: a fixed width the compiler unrolls
    } else {
        add_byte_lanes<0>(first, last);
    }
}

template <std::size_t fixed_lanes>
void subset_tally::add_byte_lanes(const entry* first, const entry* last) {
    const std::size_t lanes = fixed_lanes == 0 ? lanes_ : fixed_lanes;
    const std::uint8_t* lane_of = lane_of_.data();
    while (first < last) {
        // Byte lanes hold at most 255 occurrences; widen them before they could overflow.
        const entry* stop = first + std::min<std::ptrdiff_t>(255, last - first);
        if constexpr (fixed_lanes > 0) {
            // Sums in vector variables stay in registers; a byte array is stored and reloaded at every
            // occurrence (a chain of store-to-load latencies, 3x slower when measured).
            constexpr std::size_t vectors = fixed_lanes / sizeof(byte_vector);
            byte_vector partial[vectors] = {};
            for (; first < stop; ++first) {
                const std::uint8_t* lane = lane_of + first->trial * fixed_lanes;
                for (std::size_t v = 0; v < vectors; ++v) {
                    byte_vector add;
                    std::memcpy(&add, lane + v * sizeof(byte_vector), sizeof(byte_vector));
                    partial[v] += add;
                }
            }
            for (std::size_t i = 0; i < fixed_lanes; ++i) eighths_[i] += partial[i / sizeof(byte_vector)][i % sizeof(byte_vector)];
        } else {
            std::uint8_t* partial = partial_.data();
            std::fill_n(partial, lanes, std::uint8_t{0});
            for (; first < stop; ++first) {
                const std::uint8_t* __restrict lane = lane_of + first->trial * lanes;
                for (std::size_t i = 0; i < lanes; ++i) partial[i] = static_cast<std::uint8_t>(partial[i] + lane[i]);
            }
            for (std::size_t i = 0; i < lanes; ++i) eighths_[i] += partial[i];
        }
    }
}

void subset_tally::tally(const std::uint32_t* eighths) {
    // No subset holds a word more often than the whole set: only a word seen more than wide_row_
    // times can use a row that must be marked.
    count whole = 0;
    for (int b = 0; b < nested_blocks; ++b) whole += eighths[b];
    if (std::min(whole, dense_limit_) > wide_row_) {
        tally_rows<true>(eighths);
    } else {
        tally_rows<false>(eighths);
    }
}

template <bool wide>
void subset_tally::tally_rows(const std::uint32_t* eighths) {
    // Members in locals: after a store through a member's array the compiler must otherwise reload
    // the members, a chain of store-to-load latencies (measured: 20% of the time at 2^16 words).
    std::uint32_t* const frequency = frequency_.data();
    const count limit = dense_limit_;
    const std::size_t cells = cells_;
    std::uint32_t subsets[nested_subsets];
    for (std::size_t s = 0; s < splits_count_; ++s) {
        compose(eighths + s * nested_blocks, subsets);
        // No subset holds a word more often than the whole set does.
        if (s == 0) largest_ = std::max(largest_, std::min<count>(subsets[0], limit));
        // The whole set is the same in every split: it is kept in split 0 only.
        // Without a test for n >= 2: words seen 0 or 1 times land in rows 0 and 1 of the table, which
        // summary() does not read. Whether an eighth holds two occurrences is a coin toss for the branch
        // predictor; measured, the branch cost more than the stores it saved.
        for (int i = s == 0 ? 0 : 1; i < nested_subsets; ++i) {
            const std::size_t cell = s * nested_subsets + static_cast<std::size_t>(i);
            const count n = subsets[i];
            if (n > limit) {
                beyond_[cell].add(n);
                continue;
            }
            ++frequency[n * cells + cell];
            if constexpr (wide) {
                if (n > wide_row_) mark_row(n);
            }
        }
    }
}

void subset_tally::tally_few(const entry* first, const entry* last) {
    const auto r = static_cast<std::size_t>(last - first);
    bump(0, r);  // the whole set, kept in split 0
    // Each trial's block in every split from one row of lane_index_ (split * 8 + block).
    const std::size_t splits = splits_count_;
    const std::uint32_t* lanes[few_occurrences];
    for (std::size_t j = 0; j < r; ++j) lanes[j] = lane_index_.data() + first[j].trial * splits;
    if (r == 2) {
        // Two occurrences share the subsets of every level above the highest bit where their blocks
        // differ. n = 2 is below every limit: straight into the table.
        std::uint32_t* const frequency = frequency_.data() + 2 * cells_;
        for (std::size_t s = 0; s < splits; ++s) {
            const std::size_t cells = s * nested_subsets;
            const int b = static_cast<int>(lanes[0][s] & 7u);
            const int apart = b ^ static_cast<int>(lanes[1][s] & 7u);
            if (apart < 4) ++frequency[cells + static_cast<std::size_t>(subset_index(1, b >> 2))];
            if (apart < 2) ++frequency[cells + static_cast<std::size_t>(subset_index(2, b >> 1))];
            if (apart == 0) ++frequency[cells + static_cast<std::size_t>(subset_index(3, b))];
        }
        return;
    }
    int block[few_occurrences];
    for (std::size_t s = 0; s < splits; ++s) {
        const std::size_t cells = s * nested_subsets;
        for (std::size_t j = 0; j < r; ++j) block[j] = static_cast<int>(lanes[j][s] & 7u);
        for (int level = 1; level < nested_levels; ++level) {
            const int shift = nested_levels - 1 - level;
            // Each subset holding two or more of the occurrences, with how many it holds.
            for (std::size_t j = 0; j + 1 < r; ++j) {
                const int b = block[j] >> shift;
                bool seen = false;
                for (std::size_t i = 0; i < j && !seen; ++i) seen = (block[i] >> shift) == b;
                if (seen) continue;
                count n = 1;
                for (std::size_t i = j + 1; i < r; ++i) n += (block[i] >> shift) == b;
                if (n >= 2) bump(cells + static_cast<std::size_t>(subset_index(level, b)), n);
            }
        }
    }
}

void subset_tally::add_word(const entry* first, const entry* last) {
    const std::ptrdiff_t r = last - first;
    if (r <= 1) return;  // seen once in every subset holding it: found from the sample sizes
    if (r <= few_occurrences) {
        tally_few(first, last);
    } else {
        count_eighths(first, last);
        tally(eighths_.data());
    }
}

template <bool by_trial>
void subset_tally::add_runs(const entry* first, const entry* last) {
    while (first < last) {
        const entry* end = first + 1;
        if constexpr (by_trial) ++listed_[first->trial];
        while (end < last && end->code == first->code) {
            if constexpr (by_trial) ++listed_[end->trial];
            ++end;
        }
        add_word(first, end);
        first = end;
    }
}

void subset_tally::add_zero_word_few(const entry* first, const entry* last) {
    const auto listed = static_cast<std::size_t>(last - first);
    ++zero_full_;  // every cell holds the all-zero word once per trial, less the listed words below
    if (listed == 0) return;
    if (listed == 1) {  // the cells holding this trial, one less: settled per trial
        ++zero_less_one_[first->trial];
        return;
    }
    // Cell by cell: the all-zero word is seen |cell| - g times where the cell holds g listed words,
    // instead of |cell| times.
    std::uint32_t* const frequency = frequency_.data();
    const std::size_t cells = cells_;
    auto fewer = [&](std::size_t cell, count g) {
        ++frequency[(cell_size_[cell] - g) * cells + cell];
        --frequency[cell_size_[cell] * cells + cell];  // wraps below 0 until settled; unsigned arithmetic is exact
    };
    fewer(0, listed);  // the whole set, kept in split 0
    int block[few_listed];
    const std::size_t splits = splits_count_;
    for (std::size_t s = 0; s < splits; ++s) {
        for (std::size_t j = 0; j < listed; ++j) block[j] = static_cast<int>(lane_index_[first[j].trial * splits + s] & 7u);
        for (int level = 1; level < nested_levels; ++level) {
            const int shift = nested_levels - 1 - level;
            for (std::size_t j = 0; j < listed; ++j) {
                const int b = block[j] >> shift;
                bool seen = false;
                for (std::size_t i = 0; i < j && !seen; ++i) seen = (block[i] >> shift) == b;
                if (seen) continue;
                count g = 1;
                for (std::size_t i = j + 1; i < listed; ++i) g += (block[i] >> shift) == b;
                fewer(s * nested_subsets + static_cast<std::size_t>(subset_index(level, b)), g);
            }
        }
    }
}

void subset_tally::settle() {
    if (zero_full_ == 0) return;
    std::uint32_t* const frequency = frequency_.data();
    const std::size_t cells = cells_;
    const auto full = static_cast<std::uint32_t>(zero_full_);
    for (std::size_t cell = 0; cell < cells; ++cell) {
        // The whole set is kept in split 0 only.
        if (cell >= nested_subsets && cell % nested_subsets == 0) continue;
        frequency[cell_size_[cell] * cells + cell] += full;
    }
    for (std::size_t k = 0; k < trials_; ++k) {
        const std::uint32_t times = zero_less_one_[k];
        if (times == 0) continue;
        auto fewer = [&](std::size_t cell) {
            frequency[(cell_size_[cell] - 1) * cells + cell] += times;
            frequency[cell_size_[cell] * cells + cell] -= times;
        };
        fewer(0);
        for (std::size_t s = 0; s < splits_count_; ++s) {
            const int b = (*splits_)[s].block_of[k];
            for (int level = 1; level < nested_levels; ++level) {
                fewer(s * nested_subsets + static_cast<std::size_t>(subset_index(level, b >> (nested_levels - 1 - level))));
            }
        }
        zero_less_one_[k] = 0;
    }
    zero_full_ = 0;
}

void subset_tally::add_histogram(const entry* first, const entry* last, count per_trial) {
    // A word at one position across the trials (the noise entropy's histograms) lists few words at
    // fine bins: the all-zero word then differs from "every trial" in a few cells only, and is
    // counted by those differences (add_zero_word_few).
    if (per_trial == 1 && static_cast<std::size_t>(last - first) <= few_listed) {
        add_runs<false>(first, last);
        add_zero_word_few(first, last);
        largest_ = std::max<count>(largest_, trials_);
        per_trial_ += 1;
        return;
    }
    // The all-zero word takes what the listed words leave of each eighth. Many listed words are
    // counted per trial in the same pass that finds the runs (one pass over memory), then per eighth.
    if (static_cast<std::size_t>(last - first) > 4 * trials_) {
        listed_.assign(trials_, 0);
        add_runs<true>(first, last);
        std::fill(eighths_.begin(), eighths_.end(), 0u);
        const std::size_t splits = splits_count_;
        for (std::size_t k = 0; k < trials_; ++k) {
            for (std::size_t s = 0; s < splits; ++s) eighths_[lane_index_[k * splits + s]] += listed_[k];
        }
    } else {
        add_runs<false>(first, last);
        count_eighths(first, last);
    }
    for (std::size_t i = 0; i < lanes_; ++i) {
        eighths_[i] = static_cast<std::uint32_t>(per_trial * eighth_size_[i] - eighths_[i]);
    }
    tally(eighths_.data());
    per_trial_ += per_trial;
}

void subset_tally::add_trial_counts(const std::uint32_t* counts, std::size_t words, count per_trial) {
    const std::size_t splits = splits_count_;
    listed_.assign(trials_, 0);
    // Per eighth of every split, from each trial's counts.
    auto eighths_of = [&](const std::uint32_t* per_trial_counts) {
        std::fill(eighths_.begin(), eighths_.end(), 0u);
        for (std::size_t k = 0; k < trials_; ++k) {
            const std::uint32_t c = per_trial_counts[k];
            if (c == 0) continue;
            for (std::size_t s = 0; s < splits; ++s) eighths_[lane_index_[k * splits + s]] += c;
        }
    };
    // Words in code order, as add_histogram meets them (words seen more than the table holds are
    // summed in that order).
    for (std::size_t w = 0; w < words; ++w) {
        const std::uint32_t* c = counts + w * trials_;
        count occurrences = 0;
        for (std::size_t k = 0; k < trials_; ++k) {
            occurrences += c[k];
            listed_[k] += c[k];
        }
        if (occurrences <= 1) continue;  // seen once in every subset holding it: found from the sample sizes
        if (occurrences <= static_cast<count>(few_occurrences)) {
            entry few[few_occurrences];
            std::size_t n = 0;
            for (std::size_t k = 0; k < trials_ && n < occurrences; ++k) {
                for (std::uint32_t j = 0; j < c[k]; ++j) few[n++] = {w + 1, static_cast<std::uint32_t>(k), 0};
            }
            tally_few(few, few + n);
            continue;
        }
        eighths_of(c);
        tally(eighths_.data());
    }
    eighths_of(listed_.data());
    for (std::size_t i = 0; i < lanes_; ++i) {
        eighths_[i] = static_cast<std::uint32_t>(per_trial * eighth_size_[i] - eighths_[i]);
    }
    tally(eighths_.data());
    per_trial_ += per_trial;
}

template <typename Visit>
void subset_tally::for_each_row(Visit&& visit) const {
    const count dense_end = std::min(largest_, wide_row_);
    for (count n = 2; n <= dense_end; ++n) visit(n);
    sorted_rows_.assign(marked_rows_.begin(), marked_rows_.end());
    std::sort(sorted_rows_.begin(), sorted_rows_.end());
    for (const count n: sorted_rows_) visit(n);
}

void subset_tally::add_row(count n, count_summary* out, count* repeats) const {
    const std::uint32_t* row = frequency_.data() + n * cells_;
    for (std::size_t cell = 0; cell < cells_; ++cell) {
        const count words = row[cell];
        if (words == 0) continue;
        repeats[cell] += words * (n - 1);
        out[cell].sum_n_log2_n += static_cast<double>(words) * n_log2_n_[n];
        out[cell].sum_leave_one_out += static_cast<double>(words) * leave_one_out_[n];
    }
}

// Words seen once in a subset add only to its samples and distinct words, and those follow from the
// samples: distinct = samples - sum over words seen n >= 2 times of (n - 1). Each cell's sums are
// added up in ascending n, beyond_ first, whether one cell or all are summarised.
void subset_tally::summaries(std::vector<count_summary>& out) {
    settle();
    out.assign(beyond_.begin(), beyond_.end());
    repeats_.resize(cells_);
    for (std::size_t cell = 0; cell < cells_; ++cell) repeats_[cell] = out[cell].samples - out[cell].distinct;
    for_each_row([&](count n) { add_row(n, out.data(), repeats_.data()); });
    for (std::size_t cell = 0; cell < cells_; ++cell) {
        // The whole set is the same in every split: it is kept in split 0 only.
        const std::size_t kept = cell % nested_subsets == static_cast<std::size_t>(subset_index(0, 0)) ? 0 : cell;
        if (kept != cell) {
            out[cell] = out[kept];
            continue;
        }
        out[cell].samples = per_trial_ * cell_size_[cell];
        out[cell].distinct = out[cell].samples - repeats_[cell];
    }
}

count_summary subset_tally::summary(std::size_t split, int subset) {
    settle();
    if (subset == subset_index(0, 0)) split = 0;
    const std::size_t cell = split * nested_subsets + static_cast<std::size_t>(subset);
    count_summary s = beyond_[cell];
    count repeats = s.samples - s.distinct;  // occurrences beyond the first of each word seen twice or more
    for_each_row([&](count n) {
        const count words = frequency_[n * cells_ + cell];
        if (words == 0) return;
        repeats += words * (n - 1);
        s.sum_n_log2_n += static_cast<double>(words) * n_log2_n_[n];
        s.sum_leave_one_out += static_cast<double>(words) * leave_one_out_[n];
    });
    s.samples = per_trial_ * cell_size_[cell];
    s.distinct = s.samples - repeats;
    return s;
}

}  // namespace rastrum
