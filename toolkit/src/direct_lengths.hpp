#pragma once
/// The direct method's main loop for one record, one word length at a time: a caller grows words
/// length by length and decides after each whether to go on (the fit-length rule, and the
/// calibration, which grows its surrogates in step with the record), then finishes the estimate
/// over the chosen fit range. Private to the toolkit (direct_method.cpp, direct_calibration.cpp).
#include <rastrum/direct_method.hpp>
#include <rastrum/fit_lengths.hpp>

#include <cstddef>
#include <optional>
#include <utility>
#include <vector>

namespace rastrum {

class direct_lengths {
public:
    /// Checks that the record can be analysed (throws insufficient_data saying what is missing) and
    /// makes the random splits. `letters` and `workspace` must outlive the object, which holds the
    /// workspace's buffers until it is destroyed. `settings` must have passed check_direct_settings.
    direct_lengths(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                   direct_workspace& workspace);

    /// Computes the next word length (letters_min first). Requires more().
    const letters_estimate& next();
    bool more() const { return last_ < settings_.letters_max; }
    const std::vector<letters_estimate>& computed() const { return out_.by_letters; }

    /// The information rate [bits/s] over the computed lengths fit.first..fit.second, from all
    /// trials: the intercept of the 1/L fit.
    double info_rate(std::pair<int, int> fit) const;

    /// The estimate over the chosen fit range, with its uncertainty and cautions; `stop` says why no
    /// longer length was computed. Call once, last.
    /// With `calibration`, the headline rate, standard error and interval are its corrected ones
    /// (and the plain ones are kept in it).
    direct_estimate finish(fit_choice choice, length_stop stop, std::optional<rate_calibration> calibration = std::nullopt);

private:
    const sparse_letters& letters_;
    seconds bin_width_;
    const direct_settings& settings_;
    direct_workspace& workspace_;
    std::vector<std::vector<std::size_t>> sizes_;
    std::size_t primary_ = 0, other_ = 0;
    int last_ = 0;
    direct_estimate out_;
    // Extrapolated entropies per computed length: on all trials (primary and other estimator) and on
    // each random half (primary).
    std::vector<double> total_all_, noise_all_, total_other_, noise_other_;
    std::vector<std::vector<double>> total_half_, noise_half_;
};

/// The information rate [bits/s] over lengths fit.first..fit.second of per-word entropies listed
/// from `first_letters` on: the intercept of the 1/L fit, as the direct method computes it.
double info_rate_over(const std::vector<double>& total_bits, const std::vector<double>& noise_bits, int first_letters,
                      std::pair<int, int> fit, seconds bin_width);

/// Mean, and sample standard deviation (n - 1), summed in order: the same bits wherever used.
double mean_of(const std::vector<double>& v);
double sd_of(const std::vector<double>& v);
/// The direct method with its calibration (settings.surrogates > 0): direct_calibration.cpp.
direct_estimate estimate_calibrated(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                                    direct_workspace& workspace);

}  // namespace rastrum
