#include "direct_workspace.hpp"

namespace rastrum {

namespace {

using entropy_estimator = double (*)(const mean_summary&);
const std::array<entropy_estimator, subset_estimator_count> estimators{
    static_cast<entropy_estimator>(plugin_entropy), static_cast<entropy_estimator>(miller_madow_entropy),
    static_cast<entropy_estimator>(jackknife_entropy)};

}  // namespace

void length_measurer::estimate_cells(std::array<std::vector<double>, subset_estimator_count>& out,
                                     subset_tally& tally, double histograms) {
    for (auto& v: out) v.assign(cells_, 0.0);
    tally.summaries(summaries_);
    for (std::size_t c = 0; c < cells_; ++c) {
        const count_summary& merged = summaries_[c];
        const count samples_each = static_cast<count>(static_cast<double>(merged.samples) / histograms + 0.5);
        const mean_summary mean = mean_of_histograms(merged, histograms, samples_each);
        for (std::size_t m = 0; m < static_cast<std::size_t>(subset_estimator_count); ++m) out[m][c] = estimators[m](mean);
    }
}

// The word at one start position, across the trials of each subset; averaged over positions by
// averaging the histograms' sums (see mean_summary), which the tally adds up exactly.
void length_measurer::measure_noise(const sparse_words& words, subset_entropies& e) {
    const std::size_t positions = words.positions();
    noise_.clear();
    for (std::size_t t = 0; t < positions; ++t) {
        noise_.add_histogram(words.begin_at(t), words.end_at(t), 1);
    }
    estimate_cells(e.noise, noise_, static_cast<double>(positions));
}

// Words pooled over every start position and every trial of each subset. One-letter words are counted
// per trial (no list of every occurrence sorted by code is needed for them), when the letters are few.
void length_measurer::measure_total(const sparse_words& words, subset_entropies& e) {
    total_.clear();
    if (words.letters() == 1 && words.alphabet() <= letters_counted_per_trial) {
        words.letter_counts_per_trial(trial_counts_);
        total_.add_trial_counts(trial_counts_.data(), static_cast<std::size_t>(words.alphabet() - 1), words.positions());
    } else {
        const auto& pooled = words.pooled();
        total_.add_histogram(pooled.data(), pooled.data() + pooled.size(), words.positions());
    }
    estimate_cells(e.total, total_, 1.0);
    const count_summary& all = summaries_[0];  // the whole set, as estimate_cells left them
    e.samples = all.samples;
    e.distinct = all.distinct;
}

}  // namespace rastrum
