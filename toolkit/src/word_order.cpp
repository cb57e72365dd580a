#include <rastrum/errors.hpp>
#include <rastrum/word_order.hpp>

#include <algorithm>
#include <limits>
#include <numeric>

namespace rastrum {

namespace {

/// Stable counting sort of `index[0..n)` by key(index) in [0, buckets), using `buffer` and `bucket`.
template <typename Key>
void counting_sort(std::uint32_t* index, std::size_t n, word_code buckets, Key key, std::vector<std::uint32_t>& buffer,
                   std::vector<std::size_t>& bucket) {
    bucket.assign(static_cast<std::size_t>(buckets) + 1, 0);
    for (std::size_t i = 0; i < n; ++i) ++bucket[static_cast<std::size_t>(key(index[i])) + 1];
    for (std::size_t b = 1; b < bucket.size(); ++b) bucket[b] += bucket[b - 1];
    buffer.resize(std::max(buffer.size(), n));
    for (std::size_t i = 0; i < n; ++i) buffer[bucket[static_cast<std::size_t>(key(index[i]))]++] = index[i];
    std::copy(buffer.begin(), buffer.begin() + static_cast<std::ptrdiff_t>(n), index);
}

/// `index` is sorted by code / alphabet (the codes before the last letter was appended); sorts it by
/// code by re-sorting each run of equal code / alphabet on code % alphabet.
void refine(std::uint32_t* index, std::size_t n, const word_code* codes, word_code alphabet,
            std::vector<std::uint32_t>& buffer, std::vector<std::size_t>& bucket) {
    std::size_t start = 0;
    while (start < n) {
        const word_code prefix = codes[index[start]] / alphabet;
        std::size_t end = start + 1;
        while (end < n && codes[index[end]] / alphabet == prefix) ++end;
        if (end - start > 1) {
            counting_sort(index + start, end - start, alphabet, [&](std::uint32_t i) { return codes[i] % alphabet; },
                          buffer, bucket);
        }
        start = end;
    }
}

}  // namespace

word_order::word_order(const word_codes& words): trials_(words.trials()) {
    const std::size_t positions = words.positions();
    if (positions * trials_ > std::numeric_limits<std::uint32_t>::max()) {
        throw insufficient_data("more than 2^32 words per word length: use a wider bin or fewer trials");
    }
    // At the start every code is a single letter, below the alphabet: one counting sort each.
    const word_code alphabet = words.alphabet();
    by_position_.resize(positions * trials_);
    for (std::size_t t = 0; t < positions; ++t) {
        std::uint32_t* order = by_position_.data() + t * trials_;
        std::iota(order, order + trials_, std::uint32_t{0});
        const word_code* codes = words.at_position(t);
        counting_sort(order, trials_, alphabet, [&](std::uint32_t k) { return codes[k]; }, buffer_, bucket_);
    }
    pooled_.resize(positions * trials_);
    std::iota(pooled_.begin(), pooled_.end(), std::uint32_t{0});
    const word_code* all = words.all().data();
    counting_sort(pooled_.data(), pooled_.size(), alphabet, [&](std::uint32_t i) { return all[i]; }, buffer_, bucket_);
}

void word_order::update(const word_codes& words) {
    const std::size_t positions = words.positions();
    const word_code alphabet = words.alphabet();
    by_position_.resize(positions * trials_);
    for (std::size_t t = 0; t < positions; ++t) {
        refine(by_position_.data() + t * trials_, trials_, words.at_position(t), alphabet, buffer_, bucket_);
    }
    // Pairs of the dropped last position go; the rest keep their order.
    const auto limit = static_cast<std::uint32_t>(positions * trials_);
    pooled_.erase(std::remove_if(pooled_.begin(), pooled_.end(), [&](std::uint32_t i) { return i >= limit; }),
                  pooled_.end());
    refine(pooled_.data(), pooled_.size(), words.all().data(), alphabet, buffer_, bucket_);
}

}  // namespace rastrum
