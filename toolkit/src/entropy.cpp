#include <rastrum/entropy.hpp>

#include <array>
#include <cmath>

namespace rastrum {

namespace {
constexpr count table_size = 4096;

// Both tables serve the hot loops of the direct method, where counts are mostly small.
const std::array<double, table_size>& n_log2_n_table() {
    static const auto table = [] {
        std::array<double, table_size> t{};
        for (count n = 1; n < table_size; ++n) t[n] = static_cast<double>(n) * std::log2(static_cast<double>(n));
        return t;
    }();
    return table;
}

const std::array<double, table_size>& log2_table() {
    static const auto table = [] {
        std::array<double, table_size> t{};
        for (count n = 1; n < table_size; ++n) t[n] = std::log2(static_cast<double>(n));
        return t;
    }();
    return table;
}

double log2_of(count n) { return n < table_size ? log2_table()[n] : std::log2(static_cast<double>(n)); }
}  // namespace

double n_log2_n(count n) {
    if (n < table_size) return n_log2_n_table()[n];
    const double x = static_cast<double>(n);
    return x * std::log2(x);
}

void count_summary::add(count n) {
    if (n == 0) return;
    samples += n;
    ++distinct;
    const double f = n_log2_n(n);
    sum_n_log2_n += f;
    sum_leave_one_out += static_cast<double>(n) * (f - n_log2_n(n - 1));
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

double plugin_entropy(const count_summary& s) {
    if (s.samples == 0) return 0;
    return log2_of(s.samples) - s.sum_n_log2_n / static_cast<double>(s.samples);
}

double miller_madow_entropy(const count_summary& s) {
    if (s.samples == 0) return 0;
    return plugin_entropy(s) +
           static_cast<double>(s.distinct - 1) / (2.0 * static_cast<double>(s.samples) * std::log(2.0));
}

double jackknife_entropy(const count_summary& s) {
    if (s.samples < 2) return plugin_entropy(s);
    const double n = static_cast<double>(s.samples);
    // Leaving out one sample of a word seen n_i times gives
    //   H_(-i) = log2(N-1) - (S - f(n_i) + f(n_i - 1)) / (N-1),  S = sum f(n_j);
    // summing n_i H_(-i) over words gives N log2(N-1) - (N S - sum n_i (f(n_i) - f(n_i - 1))) / (N-1).
    const double sum_left_out = n * log2_of(s.samples - 1) - (n * s.sum_n_log2_n - s.sum_leave_one_out) / (n - 1);
    const double mean_left_out = sum_left_out / n;
    return n * plugin_entropy(s) - (n - 1) * mean_left_out;
}

}  // namespace rastrum
