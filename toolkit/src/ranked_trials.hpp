#pragma once
// Plug-in information and entropy of many subsets of the same trials, the inner loop of quadratic
// extrapolation, the label-shuffle null and the jackknife. Private to the toolkit.
#include <rastrum/entropy.hpp>
#include <rastrum/types.hpp>

#include <cstdint>
#include <vector>

namespace rastrum::detail {

/// Trials whose responses are replaced by their rank among the distinct codes, so that any subset's
/// histograms are small dense tables. Ranks keep the order of the codes, so the non-zero counts are
/// summed in the same order as the histograms of the codes themselves (counts_of_codes: increasing
/// code): every value is equal to the last bit to counting the codes.
class ranked_trials {
public:
    ranked_trials(const std::vector<std::uint32_t>& condition, std::size_t conditions, const std::vector<word_code>& response);

    /// I = H(R) - sum_s (N_s / N) H(R|s), plug-in, over the trials in `use` (all when empty).
    double plugin_information(const std::vector<std::size_t>& use = {});
    /// The same with the trials' conditions replaced by `condition` (a permutation of the labels).
    double plugin_information_relabelled(const std::vector<std::uint32_t>& condition);
    /// Plug-in entropy of the responses of trials order[from..to) (indices into the trials).
    double plugin_entropy_of(const std::vector<std::uint32_t>& order, std::size_t from, std::size_t to);

    /// Response ranks per trial, their number, and the histogram sums of `counts` read in rank order
    /// (the table is cleared on the way).
    const std::vector<std::uint32_t>& rank() const { return rank_; }
    std::size_t distinct() const { return distinct_; }
    static count_summary summary_clearing(std::uint32_t* counts, std::size_t size);

private:
    double information_of(const std::uint32_t* condition, const std::vector<std::size_t>& use);
    std::vector<std::uint32_t> condition_;
    std::size_t conditions_;
    std::vector<std::uint32_t> rank_;
    std::size_t distinct_ = 0;
    std::vector<std::uint32_t> pooled_, by_condition_;  // distinct_ and conditions_ x distinct_ counts
    std::vector<count> in_condition_;
    std::vector<std::vector<std::uint32_t>> ranks_in_;  // per condition: the ranks its trials hold, increasing
    // The entries of the pooled and each condition's table that reached two samples in this subset.
    std::vector<std::uint32_t> repeated_pooled_;
    std::vector<std::vector<std::uint32_t>> repeated_in_;
};

}  // namespace rastrum::detail
