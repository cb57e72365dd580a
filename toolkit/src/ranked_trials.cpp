#include "ranked_trials.hpp"

#include <algorithm>

namespace rastrum::detail {

namespace {
// A code's rank is the number of distinct codes below it. Codes within a span of about 512 per
// trial (spike counts, the joint counts of a pair, short words) are ranked through a bitmap of the
// span: set a bit per code, then count the bits below each code (one pass and a scan of span / 64
// words, cheaper than the sort it replaces). Others are sorted. Both give every trial the same rank.
std::size_t rank_by_code(const std::vector<word_code>& response, std::vector<std::uint32_t>& rank) {
    if (response.empty()) return 0;
    const auto [low, high] = std::minmax_element(response.begin(), response.end());
    const word_code lowest = *low;
    const word_code span = *high - lowest;  // codes are lowest + [0, span]
    if (span / 64 <= 8 * response.size() + 64) {
        const std::size_t words = static_cast<std::size_t>(span / 64) + 1;
        std::vector<std::uint64_t> present(words, 0);
        for (const word_code c: response) present[(c - lowest) / 64] |= std::uint64_t{1} << ((c - lowest) % 64);
        std::vector<std::uint32_t> below(words);  // distinct codes in the words before
        std::uint32_t total = 0;
        for (std::size_t w = 0; w < words; ++w) {
            below[w] = total;
            total += static_cast<std::uint32_t>(__builtin_popcountll(present[w]));
        }
        for (std::size_t k = 0; k < response.size(); ++k) {
            const word_code offset = response[k] - lowest;
            const std::uint64_t before = present[offset / 64] & ((std::uint64_t{1} << (offset % 64)) - 1);
            rank[k] = below[offset / 64] + static_cast<std::uint32_t>(__builtin_popcountll(before));
        }
        return total;
    }
    // The trials in order of their codes; each run of equal codes gets the next rank.
    std::vector<std::pair<word_code, std::uint32_t>> by_code(response.size());
    for (std::size_t k = 0; k < response.size(); ++k) by_code[k] = {response[k], static_cast<std::uint32_t>(k)};
    std::sort(by_code.begin(), by_code.end());
    std::size_t distinct = 0;
    for (std::size_t i = 0; i < by_code.size(); ++i) {
        if (i > 0 && by_code[i].first != by_code[i - 1].first) ++distinct;
        rank[by_code[i].second] = static_cast<std::uint32_t>(distinct);
    }
    return distinct + 1;
}
}  // namespace

ranked_trials::ranked_trials(const std::vector<std::uint32_t>& condition, std::size_t conditions,
                             const std::vector<word_code>& response):
    condition_(condition), conditions_(conditions), rank_(response.size()), in_condition_(conditions, 0),
    repeated_in_(conditions) {
    distinct_ = rank_by_code(response, rank_);
    pooled_.assign(distinct_, 0);
    by_condition_.assign(conditions_ * distinct_, 0);
    // The ranks each condition holds: a subset's table of condition s is non-zero only there.
    std::vector<char> present(conditions_ * distinct_, 0);
    for (std::size_t k = 0; k < rank_.size(); ++k) present[condition_[k] * distinct_ + rank_[k]] = 1;
    ranks_in_.resize(conditions_);
    for (std::size_t s = 0; s < conditions_; ++s) {
        for (std::uint32_t r = 0; r < distinct_; ++r) {
            if (present[s * distinct_ + r]) ranks_in_[s].push_back(r);
        }
    }
}

count_summary ranked_trials::summary_clearing(std::uint32_t* counts, std::size_t size) {
    count_summary s;
    for (std::size_t r = 0; r < size; ++r) {
        if (counts[r] != 0) s.add(counts[r]);
        counts[r] = 0;
    }
    return s;
}

namespace {
// Only the plug-in entropy is needed here: the jackknife's sum (a log per bin) is skipped. Entries
// holding one sample add nothing to sum n log2 n, so the sum runs over the entries that reached two
// samples (`repeated`), in increasing order as a scan of the table would: sorted when they are few,
// the table scanned otherwise (`scan` calls its argument on each entry that may be non-zero, in
// increasing order). Either way the same terms are added in the same order.
template <class Scan>
double plugin_of_repeated(const std::uint32_t* counts, std::vector<std::uint32_t>& repeated, count samples,
                          std::size_t scan_size, Scan scan) {
    double sum_n_log2_n = 0;
    if (repeated.size() * 8 < scan_size) {
        std::sort(repeated.begin(), repeated.end());
        for (const std::uint32_t r: repeated) sum_n_log2_n += n_log2_n(counts[r]);
    } else {
        scan([&](std::size_t r) {
            if (counts[r] > 1) sum_n_log2_n += n_log2_n(counts[r]);
        });
    }
    repeated.clear();
    return plugin_entropy(mean_summary{static_cast<double>(samples), 0, sum_n_log2_n, 0});
}

double plugin_of_repeated(const std::uint32_t* counts, std::vector<std::uint32_t>& repeated, count samples, std::size_t size) {
    return plugin_of_repeated(counts, repeated, samples, size, [size](auto&& read) {
        for (std::size_t r = 0; r < size; ++r) read(r);
    });
}

/// The same over a table that is zero outside the entries `at` (increasing).
double plugin_of_repeated(const std::uint32_t* counts, std::vector<std::uint32_t>& repeated, count samples,
                          const std::vector<std::uint32_t>& at) {
    return plugin_of_repeated(counts, repeated, samples, at.size(), [&at](auto&& read) {
        for (const std::uint32_t r: at) read(r);
    });
}
}  // namespace

double ranked_trials::information_of(const std::uint32_t* condition, const std::vector<std::size_t>& use) {
    const bool own_labels = condition == condition_.data();
    // As information_with in stimulus_information.cpp: H(pooled) - sum over non-empty conditions in
    // order of (N_s / N) H(R|s).
    auto take = [&](std::size_t k) {
        const std::uint32_t r = rank_[k], s = condition[k];
        if (++pooled_[r] == 2) repeated_pooled_.push_back(r);
        if (++by_condition_[s * distinct_ + r] == 2) repeated_in_[s].push_back(r);
        ++in_condition_[s];
    };
    // Every table is zero again afterwards: the entries the trials touched are cleared.
    auto clear = [&](std::size_t k) {
        pooled_[rank_[k]] = 0;
        by_condition_[condition[k] * distinct_ + rank_[k]] = 0;
    };
    if (use.empty()) {
        for (std::size_t k = 0; k < rank_.size(); ++k) take(k);
    } else {
        for (std::size_t k: use) take(k);
    }
    const count trials = use.empty() ? rank_.size() : use.size();
    double noise = 0;
    for (std::size_t s = 0; s < conditions_; ++s) {
        if (in_condition_[s] == 0) continue;
        const std::uint32_t* table = &by_condition_[s * distinct_];
        noise += static_cast<double>(in_condition_[s]) / static_cast<double>(trials) *
                 (own_labels ? plugin_of_repeated(table, repeated_in_[s], in_condition_[s], ranks_in_[s])
                             : plugin_of_repeated(table, repeated_in_[s], in_condition_[s], distinct_));
        in_condition_[s] = 0;
    }
    const double pooled = trials == 0 ? 0 : plugin_of_repeated(pooled_.data(), repeated_pooled_, trials, distinct_);
    if (use.empty()) {
        for (std::size_t k = 0; k < rank_.size(); ++k) clear(k);
    } else {
        for (std::size_t k: use) clear(k);
    }
    if (trials == 0) return 0;
    return pooled - noise;
}

double ranked_trials::plugin_information(const std::vector<std::size_t>& use) { return information_of(condition_.data(), use); }

double ranked_trials::plugin_information_relabelled(const std::vector<std::uint32_t>& condition) {
    return information_of(condition.data(), {});
}

double ranked_trials::plugin_entropy_of(const std::vector<std::uint32_t>& order, std::size_t from, std::size_t to) {
    for (std::size_t i = from; i < to; ++i) {
        if (++pooled_[rank_[order[i]]] == 2) repeated_pooled_.push_back(rank_[order[i]]);
    }
    const double h = plugin_of_repeated(pooled_.data(), repeated_pooled_, to - from, distinct_);
    for (std::size_t i = from; i < to; ++i) pooled_[rank_[order[i]]] = 0;
    return h;
}

}  // namespace rastrum::detail
