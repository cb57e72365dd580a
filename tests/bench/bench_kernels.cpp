// Kernels of the direct method: binning, word coding, counting in nested subsets, estimators,
// and one whole (unit, bin width) estimate. Figures go to notes/performance.md.
#include <rastrum/binning.hpp>
#include <rastrum/direct_method.hpp>
#include <rastrum/entropy.hpp>
#include <rastrum/random.hpp>
#include <rastrum/synthetic.hpp>
#include <rastrum/trial_partition.hpp>
#include <rastrum/word_counting.hpp>
#include <rastrum/words.hpp>

#include <benchmark/benchmark.h>

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

void grow_words(benchmark::State& state) {
    const auto letters = bin_spikes(poisson_trials(), 0.002, 5000, true);
    for (auto _: state) {
        word_codes words(letters, 2, 12);
        for (int L = 2; L <= 12; ++L) words.grow();
        benchmark::DoNotOptimize(words.at_position(0));
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations()) * 11 * 5000 * 100);
}
BENCHMARK(grow_words);

// Counting random codes from a word space of 2^k words in all 15 subsets of 8 nested splits.
void count_subsets(benchmark::State& state) {
    const auto space = std::uint64_t{1} << state.range(0);
    const std::size_t trials = 100, n = 100000;
    const auto splits = make_nested_splits(trials, 8, 3);
    random_stream rng(5);
    std::vector<word_occurrence> words(n);
    for (std::size_t i = 0; i < n; ++i) words[i] = {rng.below(space), static_cast<std::uint32_t>(i % trials)};
    subset_counter counter(splits);
    for (auto _: state) {
        auto copy = words;
        sort_by_code(copy);
        counter.count_sorted(copy);
        benchmark::DoNotOptimize(counter.summary(0, 0));
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * n));
}
BENCHMARK(count_subsets)->Arg(4)->Arg(10)->Arg(16);

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

// One unit at one bin width: 100 trials x 10 s at 20 Hz, 2 ms bins, letters 1-12.
void direct_one_unit(benchmark::State& state) {
    const auto letters = bin_spikes(poisson_trials(), 0.002, 5000, false);
    direct_settings settings;
    settings.letters_max = 12;
    for (auto _: state) benchmark::DoNotOptimize(estimate_direct(letters, 0.002, settings));
}
BENCHMARK(direct_one_unit)->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
