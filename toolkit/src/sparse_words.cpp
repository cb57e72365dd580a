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

/// Appends the words of [first, last) (sorted by code) that `keep`, each grown by its next letter,
/// sorted: the grown words of one old word form a run, sorted by their new last letter. The runs are
/// found on the old codes, not as the new code / alphabet: that integer division per word made
/// re-sorting a tenth of a calibrated run.
template <typename Keep, typename NextLetter>
void append_grown_sorted(const entry* first, const entry* last, word_code alphabet, Keep keep, NextLetter next_letter,
                         std::vector<entry>& out, std::vector<entry>& scratch, std::vector<std::size_t>& bucket) {
    while (first < last) {
        const word_code prefix = first->code;
        const word_code base = prefix * alphabet;
        const std::size_t run_first = out.size();
        for (; first < last && first->code == prefix; ++first) {
            if (keep(*first)) out.push_back({base + next_letter(*first), first->trial, first->position});
        }
        entry* begin = out.data() + run_first;
        entry* end = out.data() + out.size();
        if (static_cast<std::size_t>(end - begin) <= short_run) {
            insertion_sort_by_code(begin, end);
        } else {
            counting_sort(begin, end, alphabet, [base](const entry& e) { return e.code - base; }, scratch, bucket);
        }
    }
}

/// Room for n entries. A list that must grow takes half as much again as asked for: the lists grow
/// with every word length (each spike sits in L words), and reserving exactly what each length
/// needs re-allocated them at every length, each time faulting in fresh pages (with the
/// calibration's surrogates, 21 sets of lists, that page faulting was a tenth of the run).
void reserve_ahead(std::vector<entry>& v, std::size_t n) {
    if (v.capacity() < n) v.reserve(n + n / 2);
}

}  // namespace

void sparse_words::start(const sparse_letters& letters, word_code alphabet, int max_letters) {
    letters_of_ = &letters;
    alphabet_ = alphabet;
    max_letters_ = max_letters;
    letters_ = 1;
    trials_ = letters.trials;
    positions_ = letters.bins;
    check_codable_words(alphabet_, letters.largest, max_letters_);
    if (static_cast<double>(letters.bins) * static_cast<double>(letters.trials) >=
        static_cast<double>(std::numeric_limits<std::uint32_t>::max())) {
        throw insufficient_data("2^32 words or more per word length: use a wider bin or fewer trials");
    }
    // Each non-zero letter knows the previous spike bin of its trial.
    last_spike_.assign(trials_, no_previous);
    previous_.resize(letters.nonzero.size());
    for (std::size_t b = 0; b < letters.bins; ++b) {
        for (std::uint32_t i = letters.bin_start[b]; i < letters.bin_start[b + 1]; ++i) {
            const std::uint32_t k = letters.nonzero[i].trial;
            previous_[i] = last_spike_[k];
            last_spike_[k] = static_cast<std::uint32_t>(b);
        }
    }
    occupied_.clear();  // made when first needed: many estimates use 1-letter words only

    // One letter: the words holding a spike are the non-zero letters, position by position as the
    // letters are held bin by bin (written in place: no growth checks per entry), sorted by value.
    position_start_.assign(letters.bin_start.begin(), letters.bin_start.end());
    by_position_.resize(letters.nonzero.size());
    entry* out = by_position_.data();
    for (std::size_t t = 0; t < positions_; ++t) {
        entry* const first = out;
        for (std::uint32_t i = letters.bin_start[t]; i < letters.bin_start[t + 1]; ++i) {
            *out++ = {letters.nonzero[i].value, letters.nonzero[i].trial, static_cast<std::uint32_t>(t)};
        }
        insertion_sort_by_code(first, out);
    }
    pooled_ready_ = false;  // made when first asked for: a 1-letter total can be counted per trial instead
}

void sparse_words::letter_counts_per_trial(std::vector<std::uint32_t>& counts) const {
    if (letters_ != 1) throw internal_error("sparse_words::letter_counts_per_trial after growing");
    counts.assign(static_cast<std::size_t>(alphabet_ - 1) * trials_, 0);
    for (const auto& e: letters_of_->nonzero) ++counts[(e.value - 1) * trials_ + e.trial];
}

void sparse_words::make_pooled() const {
    pooled_ = by_position_;
    counting_sort(pooled_.data(), pooled_.data() + pooled_.size(), alphabet_,
                  [](const entry& e) { return e.code; }, scratch_, bucket_);
    pooled_ready_ = true;
}

void sparse_words::mark_occupied() {
    const sparse_letters& letters = *letters_of_;
    row_words_ = (trials_ + 63) / 64;
    occupied_.assign(letters.bins * row_words_, 0);
    for (std::size_t b = 0; b < letters.bins; ++b) {
        for (std::uint32_t i = letters.bin_start[b]; i < letters.bin_start[b + 1]; ++i) {
            const std::uint32_t k = letters.nonzero[i].trial;
            occupied_[b * row_words_ + k / 64] |= std::uint64_t{1} << (k % 64);
        }
    }
}

void sparse_words::grow() {
    if (letters_ >= max_letters_ || positions_ <= 1) throw internal_error("sparse_words::grow past its limit");
    if (occupied_.empty()) mark_occupied();
    if (!pooled_ready_) make_pooled();
    const sparse_letters& letters = *letters_of_;
    const std::size_t shift = static_cast<std::size_t>(letters_);  // position t gains the letter at bin t + L
    const std::size_t positions = positions_ - 1;
    const word_code a = alphabet_;

    // Per position: words that gain their first spike (codes below the alphabet) go first, then the
    // old words with their new last letter. The fresh ones are kept aside for the pooled list too.
    // Room for the longest lists this length can make (every old word kept, every spike fresh), taken
    // while the lists are empty so that nothing is copied: growing them entry by entry re-allocated
    // and copied them, and faulted in new pages, at every length where they outgrew the buffers kept.
    fresh_.clear();
    reserve_ahead(fresh_, letters.nonzero.size());
    next_start_.resize(positions + 1);
    next_by_position_.clear();
    reserve_ahead(next_by_position_, by_position_.size() + letters.nonzero.size());
    for (std::size_t t = 0; t < positions; ++t) {
        next_start_[t] = next_by_position_.size();
        const std::size_t b = t + shift;
        for (std::uint32_t i = letters.bin_start[b]; i < letters.bin_start[b + 1]; ++i) {
            const auto& s = letters.nonzero[i];
            if (starts_fresh(previous_[i], t)) next_by_position_.push_back({s.value, s.trial, static_cast<std::uint32_t>(t)});
        }
        entry* fresh_first = next_by_position_.data() + next_start_[t];
        insertion_sort_by_code(fresh_first, next_by_position_.data() + next_by_position_.size());
        fresh_.insert(fresh_.end(), fresh_first, next_by_position_.data() + next_by_position_.size());

        append_grown_sorted(
            begin_at(t), end_at(t), a, [](const entry&) { return true; },
            [&](const entry& e) { return letter_at(b, e.trial); }, next_by_position_, scratch_, bucket_);
    }
    next_start_[positions] = next_by_position_.size();

    // Pooled: the fresh words sorted by their single letter, then the old words of the positions
    // that remain, re-sorted within runs.
    next_pooled_.clear();
    reserve_ahead(next_pooled_, fresh_.size() + pooled_.size());
    next_pooled_.insert(next_pooled_.end(), fresh_.begin(), fresh_.end());
    counting_sort(next_pooled_.data(), next_pooled_.data() + next_pooled_.size(), a,
                  [](const entry& e) { return e.code; }, scratch_, bucket_);
    append_grown_sorted(
        pooled_.data(), pooled_.data() + pooled_.size(), a, [positions](const entry& e) { return e.position < positions; },
        [&](const entry& e) { return letter_at(e.position + shift, e.trial); }, next_pooled_, scratch_, bucket_);

    position_start_.swap(next_start_);
    by_position_.swap(next_by_position_);
    pooled_.swap(next_pooled_);
    positions_ = positions;
    ++letters_;
}

}  // namespace rastrum
