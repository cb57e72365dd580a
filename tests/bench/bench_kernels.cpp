// Kernels of the direct method: binning, word coding, counting in nested subsets, estimators,
// and one whole (unit, bin width) estimate. Figures go to notes/performance.md.
#include <rastrum/binning.hpp>
#include <rastrum/code_counting.hpp>
#include <rastrum/direct_method.hpp>
#include <rastrum/entropy.hpp>
#include <rastrum/random.hpp>
#include <rastrum/synthetic.hpp>
#include <rastrum/trial_partition.hpp>
#include <rastrum/sparse_letters.hpp>
#include <rastrum/sparse_words.hpp>
#include <rastrum/subset_tally.hpp>

#include <benchmark/benchmark.h>

#include <algorithm>

using namespace rastrum;

namespace {

// 100 trials x 10 s at 20 Hz, the shape of the whole-process benchmark in notes/performance.md.
const std::vector<std::vector<seconds>>& poisson_trials() {
    static const auto trials = [] {
        std::vector<std::vector<seconds>> t(100);
        random_stream rng(1);
        for (auto& trial: t) {
            for (double x = rng.exponential() / 20; x < 10; x += rng.exponential() / 20) trial.push_back(x);
        }
        return t;
    }();
    return trials;
}

void bin_spikes_kernel(benchmark::State& state) {
    const double dt = static_cast<double>(state.range(0)) / 1000;
    const std::size_t bins = whole_bins(10, dt);
    for (auto _: state) benchmark::DoNotOptimize(bin_spikes(poisson_trials(), dt, bins, false));
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations()) * 100 * 200);
}
BENCHMARK(bin_spikes_kernel)->Arg(1)->Arg(4);

// Growing the words that hold a spike from 1 to 16 letters and keeping both lists sorted by code:
// 100 trials x 10 s at 20 Hz in 0.5 ms bins (W1's finest). Items: every word of every length, listed
// or not, so the figure compares with building all words densely.
void grow_sparse_words(benchmark::State& state) {
    const auto letters = sparse_of(bin_spikes(poisson_trials(), 0.0005, 20000, false));
    const word_code alphabet = std::max<word_code>(2, word_code{letters.largest} + 1);
    std::int64_t words_per_run = 0;
    for (std::size_t L = 1; L <= 16; ++L) words_per_run += static_cast<std::int64_t>((20000 - L + 1) * 100);
    sparse_words words;
    for (auto _: state) {
        words.start(letters, alphabet, 16);
        for (int L = 2; L <= 16; ++L) words.grow();
        benchmark::DoNotOptimize(words.pooled().data());
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations()) * words_per_run);
}
BENCHMARK(grow_sparse_words)->Unit(benchmark::kMillisecond);

// Word counting: 10^6 random codes from a word space of 2^k words, 100 trials, counted in all 15
// subsets of 8 nested splits (the tally the direct method runs). The codes come sorted, as the
// direct method keeps them (grow_sparse_words measures that); items are words counted.
void count_words_in_subsets(benchmark::State& state) {
    const auto space = std::uint64_t{1} << state.range(0);
    const std::size_t trials = 100, n = 1000000;
    const auto splits = make_nested_splits(trials, 8, 3);
    random_stream rng(5);
    std::vector<sparse_words::entry> words(n);
    for (std::size_t i = 0; i < n; ++i) {
        words[i] = {1 + rng.below(space), static_cast<std::uint32_t>(i % trials), static_cast<std::uint32_t>(i / trials)};
    }
    std::sort(words.begin(), words.end(), [](const auto& a, const auto& b) { return a.code < b.code; });
    subset_tally tally(splits, trials, 4096);
    for (auto _: state) {
        tally.clear();
        tally.add_histogram(words.data(), words.data() + n, n / trials);
        benchmark::DoNotOptimize(tally.summary(0, 0));
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * n));
    // Each word is counted in the whole set and the 14 proper subsets of every split: 113 histograms.
    state.counters["histograms"] = static_cast<double>(1 + splits.size() * (nested_subsets - 1));
}
BENCHMARK(count_words_in_subsets)->Arg(4)->Arg(8)->Arg(12)->Arg(16)->Unit(benchmark::kMillisecond);

// Word counting into one histogram, as the stimulus information counts responses: 10^6 random codes
// from 2^k, unsorted, into the counts of each distinct code in code order (counts_of_codes chooses a
// dense table or sorting by the code space, which it is told, as stiminfo tells it the code's
// alphabet). Items: words counted.
void count_words(benchmark::State& state) {
    const auto space = std::uint64_t{1} << state.range(0);
    const std::size_t n = 1000000;
    random_stream rng(5);
    std::vector<word_code> codes(n);
    for (auto& c: codes) c = rng.below(space);
    for (auto _: state) benchmark::DoNotOptimize(counts_of_codes(codes, space));
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * n));
}
BENCHMARK(count_words)->Arg(4)->Arg(8)->Arg(12)->Arg(16)->Arg(24)->Unit(benchmark::kMillisecond);

// The ceiling the counting is compared with: a plain histogram of the same codes, unsorted.
void plain_histogram(benchmark::State& state) {
    const auto space = std::uint64_t{1} << state.range(0);
    const std::size_t n = 1000000;
    random_stream rng(5);
    std::vector<std::uint32_t> codes(n);
    for (auto& c: codes) c = static_cast<std::uint32_t>(rng.below(space));
    std::vector<std::uint32_t> histogram(space);
    for (auto _: state) {
        std::fill(histogram.begin(), histogram.end(), 0u);
        for (const auto c: codes) ++histogram[c];
        benchmark::DoNotOptimize(histogram.data());
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * n));
}
BENCHMARK(plain_histogram)->Arg(4)->Arg(16)->Unit(benchmark::kMillisecond);

void estimators(benchmark::State& state) {
    random_stream rng(9);
    std::vector<count> counts(1000);
    for (auto& c: counts) c = rng.below(50);
    const auto s = summarize_counts(counts);
    for (auto _: state) {
        benchmark::DoNotOptimize(plugin_entropy(s));
        benchmark::DoNotOptimize(miller_madow_entropy(s));
        benchmark::DoNotOptimize(jackknife_entropy(s));
    }
}
BENCHMARK(estimators);

// One unit at one bin width: 100 trials x 10 s at 20 Hz, letters 1-16 (W1's), at 0.5 and 16 ms bins,
// with the buffers of one thread kept between estimates as `rastrum direct` keeps them; as the tool
// runs (up to the first length after which none can enter the fit) and with every length.
void direct_one_unit(benchmark::State& state, bool every_length) {
    const double dt = static_cast<double>(state.range(0)) / 2000;
    const auto letters = sparse_of(bin_spikes(poisson_trials(), dt, whole_bins(10, dt), false));
    direct_settings settings;
    settings.letters_max = 16;
    settings.every_length = every_length;
    direct_workspace workspace;
    for (auto _: state) benchmark::DoNotOptimize(estimate_direct(letters, dt, settings, workspace));
}
BENCHMARK_CAPTURE(direct_one_unit, as_needed, false)->Arg(1)->Arg(32)->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(direct_one_unit, every_length, true)->Arg(1)->Arg(32)->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
