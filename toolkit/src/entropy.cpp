#include <rastrum/entropy.hpp>

#include <array>
#include <cmath>

namespace rastrum {

namespace {
constexpr count table_size = 4096;

// The table serves the counting loops of the direct method, where counts are mostly small.
const std::array<double, table_size>& n_log2_n_table() {
    static const auto table = [] {
        std::array<double, table_size> t{};
        for (count n = 1; n < table_size; ++n) t[n] = static_cast<double>(n) * std::log2(static_cast<double>(n));
        return t;
    }();
    return table;
}
}  // namespace

double n_log2_n(count n) {
    if (n < table_size) return n_log2_n_table()[n];
    const double x = static_cast<double>(n);
    return x * std::log2(x);
}

double n_log2_n_step(double n) {
    if (n <= 1) return 0;
    // n log2 n - (n-1) log2(n-1) = log2(n-1) + n log2(n / (n-1)), without subtracting large numbers.
    return std::log2(n - 1) + n * std::log1p(1 / (n - 1)) / std::log(2.0);
}

void count_summary::add_several(count n) {
    samples += n;
    ++distinct;
    sum_n_log2_n += n_log2_n(n);
    sum_leave_one_out += static_cast<double>(n) * n_log2_n_step(static_cast<double>(n));
}

void count_summary::merge(const count_summary& o) {
    samples += o.samples;
    distinct += o.distinct;
    sum_n_log2_n += o.sum_n_log2_n;
    sum_leave_one_out += o.sum_leave_one_out;
}

count_summary summarize_counts(const std::vector<count>& counts) {
    count_summary s;
    for (count n: counts) s.add(n);
    return s;
}

mean_summary mean_of_histograms(const count_summary& total, double histograms, count samples_each) {
    return {static_cast<double>(samples_each), static_cast<double>(total.distinct) / histograms,
            total.sum_n_log2_n / histograms, total.sum_leave_one_out / histograms};
}

namespace {
mean_summary as_mean(const count_summary& s) {
    return {static_cast<double>(s.samples), static_cast<double>(s.distinct), s.sum_n_log2_n, s.sum_leave_one_out};
}
}  // namespace

double plugin_entropy(const mean_summary& s) {
    if (s.samples <= 0) return 0;
    return std::log2(s.samples) - s.sum_n_log2_n / s.samples;
}

double miller_madow_entropy(const mean_summary& s) {
    if (s.samples <= 0) return 0;
    return plugin_entropy(s) + (s.distinct - 1) / (2.0 * s.samples * std::log(2.0));
}

double jackknife_entropy(const mean_summary& s) {
    if (s.samples < 2) return plugin_entropy(s);
    // Leaving out one sample of a word seen n_i times gives
    //   H_(-i) = log2(N-1) - (S - f(n_i) + f(n_i - 1)) / (N-1),  S = sum f(n_j), f(n) = n log2 n;
    // summing n_i H_(-i) over words gives N log2(N-1) - (N S - L) / (N-1), L = sum n_i (f(n_i) - f(n_i - 1)).
    // N H - (N-1) <H_(-i)> then simplifies to (f(N) - f(N-1)) - L / N: the same value without the
    // difference of two numbers near N H, which lost about log10 N digits.
    return n_log2_n_step(s.samples) - s.sum_leave_one_out / s.samples;
}

double plugin_entropy(const count_summary& s) { return plugin_entropy(as_mean(s)); }
double miller_madow_entropy(const count_summary& s) { return miller_madow_entropy(as_mean(s)); }
double jackknife_entropy(const count_summary& s) { return jackknife_entropy(as_mean(s)); }

}  // namespace rastrum
