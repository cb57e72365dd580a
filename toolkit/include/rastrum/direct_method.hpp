#pragma once
/// The direct method (Strong, Koberle, de Ruyter van Steveninck & Bialek 1998, Phys. Rev. Lett.
/// 80:197) for one spike train at one bin width: the response to a frozen stimulus repeated over
/// trials is cut into words; the total entropy of words pooled over start times and trials, minus
/// the noise entropy of the word at each start time across trials, is the information. Both are
/// extrapolated to infinite data (in 1/N) and their rates to infinite word length (in 1/L).
/// The formulas, the rule that picks the word lengths of the 1/L fit, and the evidence for that
/// rule are in notes/methods.md.
#include <rastrum/binning.hpp>
#include <rastrum/direct_calibration.hpp>
#include <rastrum/sparse_letters.hpp>
#include <rastrum/extrapolation.hpp>
#include <rastrum/types.hpp>

#include <array>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

/// The estimator applied to each subset of trials before the extrapolation to infinite data.
enum class subset_estimator { plugin = 0, miller_madow = 1, jackknife = 2 };
inline constexpr int subset_estimator_count = 3;

/// "plug-in", "miller-madow" or "jackknife"; and back (throws usage_error on other text).
const char* subset_estimator_name(subset_estimator e);
subset_estimator parse_subset_estimator(const std::string& name);

/// Below this many spikes per bin position (summed over the trials), estimates carry a "sparse"
/// caution: the noise entropy is then underestimated beyond what the corrections and the interval
/// see (measured with homogeneous firing, notes/methods.md, "Sparse bins").
inline constexpr double sparse_spikes_per_position = 0.5;

/// Why the direct method computed no longer word length (fit_lengths.hpp): the longest length asked
/// for was reached, the end of the user's fit range, or a length past which the sampling rule lets
/// no longer one into the fit.
enum class length_stop { letters_max = 0, fit_letters = 1, sampling_rule = 2, calibration = 3 };

/// "--letters", "--fit-letters", "sampling rule" or "calibration": the JSON's `letters_computed_until`.
const char* length_stop_name(length_stop why);

struct direct_settings {
    int letters_min = 1;                            // word lengths analysed: letters_min..letters_max
    int letters_max = 10;
    std::optional<std::pair<int, int>> fit_letters; // lengths of the 1/L fit; chosen by rule when empty
    unsigned splits = 8;                            // random nested splits of the trials
    subset_estimator subsets = subset_estimator::jackknife;
    /// The sampling rule: a word length is well sampled when two extrapolations to infinite data,
    /// from plug-in and from jackknife estimates on the subsets, agree on its information within
    /// this fraction of that information, or of twice its standard error when that is larger
    /// (see notes/methods.md).
    double bias_tolerance = 0.03;
    std::uint64_t seed = 1;
    /// Compute every length up to letters_max, also those past the first one after which no length
    /// can enter the fit (for the curves in 1/L; the rates are the same either way).
    bool every_length = false;
    /// Calibration at the record's own sample size (direct_calibration.hpp): surrogate data sets
    /// per record; 0 turns it off. With it, the calibration chooses the fit range (unless
    /// fit_letters is given) and the rate, its standard error and interval are the calibrated ones.
    unsigned surrogates = 10;
    /// Random splits of the trials in each surrogate's estimate (at most `splits`). The estimator's
    /// mean over random splits does not depend on their number, but its spread does: with 2 splits
    /// instead of 8 the surrogates' spread was 1.6 times the record's (notes/methods-calibration.md),
    /// so by default they use as many as the record.
    unsigned surrogate_splits = 8;
    /// A calibrated error within this fraction of the rate, or within error_floor_bits_per_spike
    /// times the mean firing rate, is within tolerance.
    double error_tolerance = 0.05;
    double error_floor_bits_per_spike = 0.02;
};

/// The extrapolation to infinite data at one word length, as a figure shows it: the mean entropy by
/// the subset estimator at each level of the nested splits (all trials, halves, quarters, eighths)
/// against the mean inverse trial count, and the quadratics in 1/N fitted to the individual subsets.
struct data_size_curve {
    std::vector<double> inverse_trials;   // 1/N per level, N the mean trial count of its subsets
    std::vector<double> total_bits;       // per word
    std::vector<double> noise_bits;
    std::vector<bool> in_fit;             // the eighths are not used by the full-data fit
    inverse_size_fit total_fit;
    inverse_size_fit noise_fit;
};

/// Per-word values (bits per word) at one word length.
struct letters_estimate {
    int letters = 0;
    count samples = 0;            // words in the total ensemble: trials x start positions
    count distinct_words = 0;     // distinct words among them
    double total_bits = 0;        // extrapolated to infinite data
    double noise_bits = 0;
    double info_bits = 0;         // total_bits - noise_bits
    double total_plugin_bits = 0; // on all trials, no correction
    double noise_plugin_bits = 0;
    double total_miller_madow_bits = 0;
    double noise_miller_madow_bits = 0;
    std::array<double, subset_estimator_count> info_bits_by_estimator{};  // each extrapolated to infinite data
    double estimator_spread_bits = 0; // |plug-in based - jackknife based| information: the bias scale
    double info_se_bits = 0;      // standard error of info_bits from its spread over random halves
    double info_half_bits = 0;    // mean over random halves of the trials, each extrapolated alike
    bool well_sampled = false;    // estimator_spread_bits within the sampling rule's tolerance
    data_size_curve data_size;
};

/// The three parts of the information rate's standard error (bits/s), combined in quadrature.
struct rate_uncertainty {
    double resampling = 0;   // spread of the whole estimate over random halves of the trials, / sqrt 2
    double data_size = 0;    // how far the estimate moves from all trials to half of them
    double word_length = 0;  // standard error of the 1/L intercept
    double bias_correction = 0;  // the distance between the rates from plug-in and jackknife subsets
};

struct direct_estimate {
    seconds bin_width = 0;
    std::size_t trials = 0;
    /// The lengths computed, from letters_min on: up to letters_max, or to the first length after which
    /// no longer one could enter the fit (see letters_stop).
    std::vector<letters_estimate> by_letters;
    length_stop letters_stop = length_stop::letters_max;
    std::pair<int, int> fit_letters{0, 0};
    bool fit_letters_from_user = false;
    double total_rate = 0;   // [bits/s] extrapolated to infinite data and word length
    double noise_rate = 0;   // [bits/s]
    double info_rate = 0;    // [bits/s]
    double info_rate_se = 0; // [bits/s]
    rate_uncertainty uncertainty;
    std::pair<double, double> info_rate_ci95{0, 0};
    line_fit total_rate_fit;  // entropy rates [bits/s] against 1/L over fit_letters: intercept + slope / L
    line_fit noise_rate_fit;
    std::vector<double> half_info_rates;  // the estimate on each random half of the trials [bits/s]
    std::vector<std::string> warnings;
    /// Present when settings.surrogates > 0; then info_rate, info_rate_se and info_rate_ci95 are the
    /// calibrated ones and the calibration keeps the plain ones.
    std::optional<rate_calibration> calibration;
};

/// Buffers one thread reuses from one estimate to the next (words, subset tallies, rotated letters),
/// so that estimates over many units, bin widths and rotations allocate almost nothing. Not for use
/// by two threads at once; the numbers never depend on what it held before.
class direct_workspace {
public:
    direct_workspace();
    ~direct_workspace();
    direct_workspace(direct_workspace&&) noexcept;
    direct_workspace& operator=(direct_workspace&&) noexcept;

    struct parts;  // toolkit/src/direct_workspace.hpp
    parts& inside() { return *parts_; }

private:
    std::unique_ptr<parts> parts_;
};

/// Needs at least 8 trials and at least `letters_max` bins (throws insufficient_data saying what
/// is missing); throws usage_error for an impossible range or a fit range outside it.
direct_estimate estimate_direct(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                                direct_workspace& workspace);
/// The same from a letter matrix, with buffers of its own.
direct_estimate estimate_direct(const letter_matrix& letters, seconds bin_width, const direct_settings& settings);

/// Checks a settings object before any data are read. Throws usage_error naming the setting.
void check_direct_settings(const direct_settings& settings);

}  // namespace rastrum
