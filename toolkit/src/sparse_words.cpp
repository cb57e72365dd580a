#include <rastrum/errors.hpp>
#include <rastrum/sparse_words.hpp>
#include <rastrum/words.hpp>

#include <algorithm>
#include <limits>

namespace rastrum {

namespace {

using entry = sparse_words::entry;

/// Runs this short are re-sorted by insertion; longer ones by a counting sort on the last letter.
constexpr std::size_t short_run = 24;

void insertion_sort_by_code(entry* first, entry* last) {
    if (last - first < 2) return;
    for (entry* i = first + 1; i < last; ++i) {
        const entry e = *i;
        entry* j = i;
        for (; j > first && (j - 1)->code > e.code; --j) *j = *(j - 1);
        *j = e;
    }
}

/// Stable counting sort of [first, last) by key(e) in [0, buckets).
template <typename Key>
void counting_sort(entry* first, entry* last, word_code buckets, Key key, std::vector<entry>& scratch,
                   std::vector<std::size_t>& bucket) {
    const auto n = static_cast<std::size_t>(last - first);
    bucket.assign(static_cast<std::size_t>(buckets) + 1, 0);
    for (entry* e = first; e < last; ++e) ++bucket[static_cast<std::size_t>(key(*e)) + 1];
    for (std::size_t b = 1; b < bucket.size(); ++b) bucket[b] += bucket[b - 1];
    scratch.resize(std::max(scratch.size(), n));
    for (entry* e = first; e < last; ++e) scratch[bucket[static_cast<std::size_t>(key(*e))]++] = *e;
    std::copy(scratch.begin(), scratch.begin() + static_cast<std::ptrdiff_t>(n), first);
}

}  // namespace

sparse_words::sparse_words(const letter_matrix& letters, word_code alphabet, int max_letters):
    letters_of_(letters), alphabet_(alphabet), max_letters_(max_letters), trials_(letters.trials),
    positions_(letters.bins) {
    check_codable_words(alphabet_, letters.largest, max_letters_);
    if (static_cast<double>(letters.bins) * static_cast<double>(letters.trials) >=
        static_cast<double>(std::numeric_limits<std::uint32_t>::max())) {
        throw insufficient_data("2^32 words or more per word length: use a wider bin or fewer trials");
    }
    // The non-zero letters by bin, each knowing the previous spike bin of its trial.
    std::vector<std::uint32_t> last_spike(trials_, no_previous);
    bin_start_.assign(letters.bins + 1, 0);
    for (std::size_t b = 0; b < letters.bins; ++b) {
        bin_start_[b] = spike_bins_.size();
        const letter* row = letters.bin_row(b);
        for (std::size_t k = 0; k < trials_; ++k) {
            if (row[k] == 0) continue;
            spike_bins_.push_back({static_cast<std::uint32_t>(k), row[k], last_spike[k]});
            last_spike[k] = static_cast<std::uint32_t>(b);
        }
    }
    bin_start_[letters.bins] = spike_bins_.size();

    // One letter: the words holding a spike are the non-zero letters, sorted by value.
    position_start_.assign(positions_ + 1, 0);
    by_position_.reserve(spike_bins_.size());
    for (std::size_t t = 0; t < positions_; ++t) {
        position_start_[t] = by_position_.size();
        for (std::size_t i = bin_start_[t]; i < bin_start_[t + 1]; ++i) {
            by_position_.push_back({spike_bins_[i].value, spike_bins_[i].trial, static_cast<std::uint32_t>(t)});
        }
        insertion_sort_by_code(by_position_.data() + position_start_[t], by_position_.data() + by_position_.size());
    }
    position_start_[positions_] = by_position_.size();
    pooled_ = by_position_;
    counting_sort(pooled_.data(), pooled_.data() + pooled_.size(), alphabet_,
                  [](const entry& e) { return e.code; }, scratch_, bucket_);
}

void sparse_words::sort_runs_by_last_letter(entry* first, entry* last) {
    const word_code a = alphabet_;
    while (first < last) {
        const word_code prefix = first->code / a;
        entry* end = first + 1;
        while (end < last && end->code / a == prefix) ++end;
        if (end - first > 1) {
            if (static_cast<std::size_t>(end - first) <= short_run) {
                insertion_sort_by_code(first, end);
            } else {
                counting_sort(first, end, a, [a](const entry& e) { return e.code % a; }, scratch_, bucket_);
            }
        }
        first = end;
    }
}

void sparse_words::grow() {
    if (letters_ >= max_letters_ || positions_ <= 1) throw internal_error("sparse_words::grow past its limit");
    const std::size_t shift = static_cast<std::size_t>(letters_);  // position t gains the letter at bin t + L
    const std::size_t positions = positions_ - 1;
    const word_code a = alphabet_;

    // Per position: words that gain their first spike (codes below the alphabet) go first, then the
    // old words with their new last letter. The fresh ones are kept aside for the pooled list too.
    fresh_.clear();
    next_start_.resize(positions + 1);
    next_by_position_.clear();
    for (std::size_t t = 0; t < positions; ++t) {
        next_start_[t] = next_by_position_.size();
        const std::size_t b = t + shift;
        for (std::size_t i = bin_start_[b]; i < bin_start_[b + 1]; ++i) {
            const spike_bin& s = spike_bins_[i];
            if (starts_fresh(s, t)) next_by_position_.push_back({s.value, s.trial, static_cast<std::uint32_t>(t)});
        }
        entry* fresh_first = next_by_position_.data() + next_start_[t];
        insertion_sort_by_code(fresh_first, next_by_position_.data() + next_by_position_.size());
        fresh_.insert(fresh_.end(), fresh_first, next_by_position_.data() + next_by_position_.size());

        const std::size_t old_first = next_by_position_.size();
        const letter* row = letters_of_.bin_row(b);
        for (const entry* e = begin_at(t); e < end_at(t); ++e) {
            next_by_position_.push_back({e->code * a + row[e->trial], e->trial, e->position});
        }
        sort_runs_by_last_letter(next_by_position_.data() + old_first, next_by_position_.data() + next_by_position_.size());
    }
    next_start_[positions] = next_by_position_.size();

    // Pooled: the fresh words sorted by their single letter, then the old words of the positions
    // that remain, re-sorted within runs.
    next_pooled_.clear();
    next_pooled_.insert(next_pooled_.end(), fresh_.begin(), fresh_.end());
    counting_sort(next_pooled_.data(), next_pooled_.data() + next_pooled_.size(), a,
                  [](const entry& e) { return e.code; }, scratch_, bucket_);
    const std::size_t old_first = next_pooled_.size();
    for (const entry& e: pooled_) {
        if (e.position >= positions) continue;
        next_pooled_.push_back({e.code * a + letters_of_.at(e.position + shift, e.trial), e.trial, e.position});
    }
    sort_runs_by_last_letter(next_pooled_.data() + old_first, next_pooled_.data() + next_pooled_.size());

    position_start_.swap(next_start_);
    by_position_.swap(next_by_position_);
    pooled_.swap(next_pooled_);
    positions_ = positions;
    ++letters_;
}

}  // namespace rastrum
