#include "ranked_trials.hpp"

#include <algorithm>

namespace rastrum::detail {

ranked_trials::ranked_trials(const std::vector<std::uint32_t>& condition, std::size_t conditions,
                             const std::vector<word_code>& response):
    condition_(condition), conditions_(conditions), rank_(response.size()), in_condition_(conditions, 0) {
    std::vector<word_code> codes = response;
    std::sort(codes.begin(), codes.end());
    codes.erase(std::unique(codes.begin(), codes.end()), codes.end());
    distinct_ = codes.size();
    for (std::size_t k = 0; k < response.size(); ++k) {
        rank_[k] = static_cast<std::uint32_t>(std::lower_bound(codes.begin(), codes.end(), response[k]) - codes.begin());
    }
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
// Only the plug-in entropy is needed here: the jackknife's sum (a log per bin) is skipped. `visit`
// calls its argument on each entry of the table that may be non-zero, in increasing order; each is
// cleared as it is read, so the table is zero again afterwards.
template <class Visit>
double plugin_clearing_visited(std::uint32_t* counts, Visit visit) {
    count samples = 0;
    double sum_n_log2_n = 0;
    visit([&](std::size_t r) {
        const count n = counts[r];
        if (n == 0) return;
        samples += n;
        if (n > 1) sum_n_log2_n += n_log2_n(n);
        counts[r] = 0;
    });
    return plugin_entropy(mean_summary{static_cast<double>(samples), 0, sum_n_log2_n, 0});
}

double plugin_clearing(std::uint32_t* counts, std::size_t size) {
    return plugin_clearing_visited(counts, [size](auto&& read) {
        for (std::size_t r = 0; r < size; ++r) read(r);
    });
}

/// The same over the entries `at` (increasing) of a table that is zero elsewhere.
double plugin_clearing(std::uint32_t* counts, const std::vector<std::uint32_t>& at) {
    return plugin_clearing_visited(counts, [&at](auto&& read) {
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
        ++pooled_[r];
        ++by_condition_[s * distinct_ + r];
        ++in_condition_[s];
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
        std::uint32_t* table = &by_condition_[s * distinct_];
        noise += static_cast<double>(in_condition_[s]) / static_cast<double>(trials) *
                 (own_labels ? plugin_clearing(table, ranks_in_[s]) : plugin_clearing(table, distinct_));
        in_condition_[s] = 0;
    }
    if (trials == 0) return 0;
    return plugin_clearing(pooled_.data(), distinct_) - noise;
}

double ranked_trials::plugin_information(const std::vector<std::size_t>& use) { return information_of(condition_.data(), use); }

double ranked_trials::plugin_information_relabelled(const std::vector<std::uint32_t>& condition) {
    return information_of(condition.data(), {});
}

double ranked_trials::plugin_entropy_of(const std::vector<std::uint32_t>& order, std::size_t from, std::size_t to) {
    for (std::size_t i = from; i < to; ++i) ++pooled_[rank_[order[i]]];
    return plugin_clearing(pooled_.data(), distinct_);
}

}  // namespace rastrum::detail
