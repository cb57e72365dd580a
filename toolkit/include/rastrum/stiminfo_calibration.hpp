#pragma once
/// Calibration of stimulus information at the record's own sample size (notes/methods-calibration.md,
/// "Stimulus information"): a parametric bootstrap (Efron & Tibshirani 1993, *An Introduction to the
/// Bootstrap*, ch. 6 and 10). A model fitted to the record (a response distribution per condition,
/// smoothed toward the pooled one) has an information known exactly; surrogate data sets drawn from
/// it with the record's trials per condition are analysed by every estimator, with the same
/// settings. From their error against the model's exact value: each estimator's bias and spread at
/// this sample size, the estimator of lowest RMSE, its bias-corrected value with an interval that
/// follows the measured error, and from surrogates with 2x and 4x the trials, how many trials per
/// condition would bring that error within the tolerance.
#include <rastrum/direct_calibration.hpp>
#include <rastrum/stimulus_information.hpp>

#include <cstddef>
#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

/// How a condition's response frequencies become the model's probabilities.
enum class response_smoothing {
    /// Each condition's frequencies f_s moved toward the pooled distribution g by a factor k_s that
    /// leaves the conditions the spread about g that the data show beyond their sampling noise
    /// (variance matching, as the direct method's letter chain: Louis 1984, J. Am. Stat. Assoc. 79:393).
    variance_matched,
    /// The raw frequencies (k_s = 1): they vary more than the truth, so the model carries
    /// information where there is none (kept for the measurement that chose variance matching).
    none,
};

/// The surrogate model of one record: for each condition, a distribution over the responses seen in
/// the record (a response never seen has probability 0), and the weight of each condition, its share
/// of the record's trials.
class response_model {
public:
    /// Fitted to `trials` (at least one trial; conditions without trials get weight 0).
    explicit response_model(const labelled_responses& trials,
                            response_smoothing smoothing = response_smoothing::variance_matched);
    /// A model given directly: probabilities[s][i] of responses[i] in condition s (each row sums to
    /// 1), weights[s] summing to 1. Throws internal_error on ragged or negative input.
    response_model(std::vector<word_code> responses, std::vector<std::vector<double>> probabilities,
                   std::vector<double> weights, double alphabet);

    /// I(S;R) = H(sum_s w_s p_s) - sum_s w_s H(p_s) in bits, exact (a finite sum).
    double information() const;
    /// A surrogate data set with trials_per_condition[s] trials of condition s, in condition order,
    /// drawn from the model by a stream seeded with `seed`; the record's alphabet.
    labelled_responses draw(const std::vector<std::size_t>& trials_per_condition, std::uint64_t seed) const;

    /// The same model with each condition's factor moved along k_s = min(1, lambda k_s / max k) so
    /// that its information is `target_bits` (0 for a target <= 0; the raw frequencies when the
    /// target is beyond theirs).
    response_model matched_to(double target_bits) const;

    /// The factor k_s of each condition (1 for given or raw models, 0 when the data show no spread
    /// beyond noise: then every condition is the pooled distribution and the information is 0).
    const std::vector<double>& shrinkage() const { return shrinkage_; }
    const std::vector<std::vector<double>>& probabilities() const { return probabilities_; }
    const std::vector<word_code>& responses() const { return responses_; }

private:
    void set_shrinkage(const std::vector<double>& k);
    std::vector<word_code> responses_;
    std::vector<std::vector<double>> frequencies_;  // per condition (the pooled ones where it has no trials)
    std::vector<double> pooled_;
    std::vector<std::vector<double>> probabilities_;
    std::vector<double> weights_;
    std::vector<double> shrinkage_;
    double alphabet_ = 0;
};

/// One estimator at the model: the record's estimate and the surrogates' error against the model's
/// exact information.

/// The recommended estimator's calibrated error at a multiple of the record's trials per condition.
struct error_at_size {
    double scale = 1;                   // 1, 2, 4: trials per condition x scale
    double trials_per_condition = 0;    // mean over conditions, x scale
    unsigned surrogates = 0;
    double bias = 0, spread = 0, error = 0;  // [bits]
};

struct stiminfo_calibration {
    unsigned surrogates = 0;
    response_smoothing smoothing = response_smoothing::variance_matched;
    std::vector<double> shrinkage;          // k_s per condition
    double first_model_bits = 0;            // the variance-matched model's information, before its size is set
    double first_plugin_bias = 0;           // the plug-in's bias at that first model (surrogates)
    double model_bits = 0;                  // the model's exact information
    std::map<info_estimator, estimator_calibration> by_estimator;
    info_estimator recommended = info_estimator::plugin;  // lowest rmse at the model
    double value = 0;                       // [bits] its estimate minus its bias
    double error = 0;                       // [bits] its calibrated error
    double t_quantile = 0;                  // Student's t, 0.975, surrogates - 1 degrees of freedom
    std::pair<double, double> interval{0, 0};  // 95%: value +- t_quantile * error
    double tolerance = 0;                   // [bits] max(relative * |value|, floor)
    bool uncertain = false;                 // error > tolerance
    std::vector<error_at_size> by_size;     // scale 1, 2, 4
    /// Trials per condition at which the error would reach the tolerance (a / n^b fitted through
    /// by_size in log-log); absent when it does not within 4x the record's trials.
    std::optional<double> trials_per_condition_needed;
    /// The estimators whose value on the record lies beyond 5 spreads (and the floor) of their
    /// values on the surrogates: the model does not stand in for the record for them, and they are
    /// not recommended. When that is every estimator, the record is not calibrated: value and
    /// interval are NaN (null in the JSON), uncertain is true, `reason` says why and what would help,
    /// and by_size holds the record's trials only.
    std::vector<info_estimator> unlike_model;
    bool not_calibrated = false;
    std::string reason;
    /// The responses' probability mass not seen in the record, by Good and Turing's estimate: the
    /// share of trials whose response occurs once (Good 1953, Biometrika 40:237; from memory).
    double unseen_mass = 0;
};

struct calibration_request {
    unsigned surrogates = 0;          // >= 2
    unsigned scaled_surrogates = 0;   // at 2x and 4x the trials (recommended estimator only); >= 2
    double relative_tolerance = 0.10;
    double floor_bits = 0.02;
    response_smoothing smoothing = response_smoothing::variance_matched;
};

/// Calibrates the record `trials` whose estimates by each estimator are `estimates` (their keys are
/// the estimators calibrated), each surrogate analysed with `settings` but its own seed, derived
/// from settings.seed: the result does not depend on threads or on other records.
stiminfo_calibration calibrate_stiminfo(const labelled_responses& trials,
                                        const std::map<info_estimator, double>& estimates,
                                        const info_settings& settings, const calibration_request& request);

/// Trials per condition at which e(n) = a / n^b, fitted by least squares in log-log through the
/// points, equals `tolerance`; absent when the fit does not fall (b <= 0) or reaches it only beyond
/// `beyond` trials per condition. Never below 2.
std::optional<double> trials_needed(const std::vector<std::pair<double, double>>& trials_and_error, double tolerance,
                                    double beyond);

/// The caution of an uncertain record: its error against the tolerance, the trials per condition
/// that would meet it, and what would help.
std::string uncertain_caution(const stiminfo_calibration& calibration);

}  // namespace rastrum
