#pragma once
/// Calibration of the direct method at the record's own sample size (notes/methods.md,
/// "Calibration"): surrogate data sets drawn from a model fitted to the record (letter_chain.hpp:
/// its time course of firing and its bin-to-bin dependence, with exactly known word entropies),
/// with the record's trials and bins, are analysed by the same estimator. Their error against the
/// model's exact answer measures, for each candidate fit range, the estimator's bias and spread
/// at this sample size (a parametric bootstrap: Efron & Tibshirani 1993, *An Introduction to the
/// Bootstrap*, ch. 6 and 10). From that:
///   - the rate is corrected by the measured bias;
///   - its 95% interval is +-t calibrated errors (the surrogates' spread, the uncertainty of
///     their mean, and a tenth of the bias, since the model is fitted to the data rather than to
///     the truth), t the 97.5% point of Student's t with K - 1 degrees of freedom for K surrogates,
///     since the spread is itself estimated from them (2.09 for 20);
///   - the fit range is the longest whose calibrated error is within the tolerance, so longer words
///     enter whenever the data support them (the user's `--fit-letters` still decides when given);
///   - a record is marked uncertain when no range meets the tolerance.
#include <array>
#include <cstddef>
#include <utility>
#include <vector>

namespace rastrum {


/// One candidate fit range: the upper half of lengths 1..b (b from the shortest length on), as the
/// sampling rule fits it.
struct calibrated_fit {
    std::pair<int, int> fit{0, 0};
    double rate = 0;        // [bits/s] the record's information rate over this range, uncorrected
    double model_rate = 0;  // [bits/s] the model's exact rate over this range
    double bias = 0;        // [bits/s] mean surrogate rate - model_rate
    double spread = 0;      // [bits/s] standard deviation of the surrogate rates
    double error = 0;       // [bits/s] calibrated error of rate - bias
    bool within_tolerance = false;
};

/// One estimator measured on a record's surrogates, in the units of its quantity (bits/s for the
/// direct method's rates, bits for stimulus information).
struct estimator_calibration {
    double estimate = 0;  // the record's value by this estimator
    double bias = 0;      // mean over surrogates - the model's exact value
    double spread = 0;    // standard deviation over surrogates
    double rmse = 0;      // sqrt(bias^2 + spread^2): its error without the bias correction
    double error = 0;     // calibrated error of estimate - bias (calibrated_error)
};

struct rate_calibration {
    unsigned surrogates = 0;
    std::vector<calibrated_fit> by_fit;  // every range examined, shortest first
    std::size_t chosen = 0;              // index into by_fit
    double tolerance = 0;                // [bits/s] the error allowed for the chosen rate
    bool uncertain = false;              // no range met the tolerance
    /// Every subset estimator at the chosen range (indexed by subset_estimator: plug-in,
    /// Miller-Madow, jackknife), measured at the fitted model. Not a recommendation: which has the
    /// smallest RMSE at the model need not have it at the truth (notes/methods-calibration.md).
    std::array<estimator_calibration, 3> by_estimator{};
    /// For an uncertain record: the chosen range's calibrated error on surrogates of 2 and 4 times
    /// the trials (index 0: the record's own trials), and the trials at which it would meet the
    /// tolerance, from the line through log error against log trials; 0 when the error does not
    /// fall with trials there, or the line reaches the tolerance only beyond 16 times the trials.
    std::array<double, 3> error_by_trials{};
    std::size_t trials_needed = 0;
    /// The estimate before calibration (the headline fields of direct_estimate hold the calibrated one).
    double plain_info_rate = 0;
    double plain_info_rate_se = 0;
    std::pair<double, double> plain_info_rate_ci95{0, 0};
};

/// The tolerance [bits/s] for a rate: `relative` of its size, but never below `floor_bits_per_spike`
/// times the mean firing rate (so that a rate near 0 is judged against the smallest information
/// worth resolving, not against itself).
double calibration_tolerance(double rate, double relative, double floor_bits_per_spike, double mean_rate_hz);

/// The calibrated error of a corrected rate from its surrogates' bias and spread (K surrogates):
/// sqrt(spread^2 (1 + 1/K) + (bias / 10)^2).
double calibrated_error(double bias, double spread, unsigned surrogates);

/// The half-width of the 95% interval in calibrated errors: Student's t at 0.975 with K - 1 degrees
/// of freedom for K >= 2 surrogates (the prediction interval of a value whose mean and spread are
/// estimated from K draws: common practice, e.g. Hahn & Meeker 1991, *Statistical Intervals*, ch. 4,
/// from memory).
double calibrated_interval_factor(unsigned surrogates);

/// The trials at which an error measured at trials, 2 x trials and 4 x trials (`errors`) would
/// fall to `tolerance`, from the least-squares line through log error against log trials; 0 when
/// the line does not fall, or reaches the tolerance only beyond 16 times the trials. Rounded up.
std::size_t trials_for_tolerance(std::size_t trials, const std::array<double, 3>& errors, double tolerance);

/// Whether errors measured at 1, 2 and 4 times the trials fall with the trials: every error positive,
/// the least-squares line through log error against log trials falling, and the error at 2x below the
/// record's own (the segment trials_for_tolerance falls back on). When they do not (the
/// surrogates' errors are themselves noisy), how many trials would do is not known, which is not
/// the same as "more than 16 times" (trials_for_tolerance gives 0 for both).
bool errors_fall_with_trials(const std::array<double, 3>& errors);

}  // namespace rastrum
