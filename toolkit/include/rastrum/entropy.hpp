#pragma once
/// Entropy estimators on a histogram of counts (the counts of each distinct word or response).
/// All results in bits. Every estimator needs only a few sums over the counts, gathered in a
/// `count_summary`, so histograms never have to be stored to be estimated.
#include <rastrum/types.hpp>

#include <vector>

namespace rastrum {

/// n log2 n, with 0 log 0 = 0; tabulated for small n.
double n_log2_n(count n);
/// f(n) - f(n - 1) for f(n) = n log2 n (0 for n <= 1), computed without cancellation.
double n_log2_n_step(double n);

/// The sums over a histogram's non-zero counts n_i that the estimators need.
struct count_summary {
    count samples = 0;          // N = sum n_i
    count distinct = 0;         // number of non-zero n_i
    double sum_n_log2_n = 0;    // sum n_i log2 n_i
    double sum_leave_one_out = 0;  // sum n_i (f(n_i) - f(n_i - 1)), f(n) = n log2 n: for the jackknife

    /// Adds one histogram bin holding n samples (nothing for n = 0).
    void add(count n) {
        if (n == 0) return;
        if (n == 1) return add_single();
        add_several(n);
    }
    /// A bin seen once: f(1) = f(0) = 0, so only the counts change.
    void add_single() {
        ++samples;
        ++distinct;
    }
    void merge(const count_summary& other);

private:
    void add_several(count n);
};

count_summary summarize_counts(const std::vector<count>& counts);

/// The same sums averaged over several histograms of the same sample size. Every estimator below is
/// affine in (distinct, sum_n_log2_n, sum_leave_one_out) for a fixed sample size, so the estimate from
/// the mean sums equals the mean of the estimates: the noise entropy, a mean over start positions,
/// needs one evaluation instead of one per position.
struct mean_summary {
    double samples = 0;
    double distinct = 0;
    double sum_n_log2_n = 0;
    double sum_leave_one_out = 0;
};

/// The mean of `histograms` summaries merged into `total`, each of `samples_each` samples.
mean_summary mean_of_histograms(const count_summary& total, double histograms, count samples_each);

/// Plug-in (maximum-likelihood) entropy: log2 N - (1/N) sum n_i log2 n_i. 0 for N = 0.
double plugin_entropy(const count_summary& s);
double plugin_entropy(const mean_summary& s);

/// Miller-Madow: plug-in plus (m - 1) / (2 N ln 2), m the number of non-zero counts
/// (Miller 1955, "Note on the bias of information estimates").
double miller_madow_entropy(const count_summary& s);
double miller_madow_entropy(const mean_summary& s);

/// Jackknife: N H - (N - 1) <H_(-j)>, the mean over leaving each of the N samples out
/// (Efron & Stein 1981, Ann. Statist. 9:586; Zahl 1977, Ecology 58:907). Needs N >= 2
/// (returns the plug-in value otherwise).
double jackknife_entropy(const count_summary& s);
double jackknife_entropy(const mean_summary& s);

}  // namespace rastrum
