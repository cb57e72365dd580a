#include <rastrum/direct_calibration.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/letter_chain.hpp>
#include <rastrum/random.hpp>

#include "direct_lengths.hpp"
#include "direct_workspace.hpp"

#include <boost/math/distributions/students_t.hpp>

#include <algorithm>
#include <array>
#include <cmath>
#include <memory>
#include <string>

namespace rastrum {

namespace {
// The share of the measured bias counted as uncertain: the bias is the estimator's at the fitted
// model, not at the truth (notes/methods-calibration.md; its size from notes/validation.md).
constexpr double bias_allowance = 0.1;
}  // namespace

double calibration_tolerance(double rate, double relative, double floor_bits_per_spike, double mean_rate_hz) {
    return std::max(relative * std::abs(rate), floor_bits_per_spike * mean_rate_hz);
}

double calibrated_error(double bias, double spread, unsigned surrogates) {
    const double k = std::max(1u, surrogates);
    return std::sqrt(spread * spread * (1 + 1 / k) + bias_allowance * bias_allowance * bias * bias);
}

double calibrated_interval_factor(unsigned surrogates) {
    if (surrogates < 2) throw internal_error("calibrated_interval_factor: fewer than 2 surrogates");
    return boost::math::quantile(boost::math::students_t(static_cast<double>(surrogates - 1)), 0.975);
}

namespace {

/// The least-squares line of log error on log multiple (0, log 2, log 4).
struct log_log_line {
    double mean_x = 0, mean_y = 0, slope = 0;
    bool valid = false;  // every error positive
};

log_log_line line_through(const std::array<double, 3>& errors) {
    log_log_line line;
    const double x[3] = {0, std::log(2.0), std::log(4.0)};
    line.mean_x = (x[0] + x[1] + x[2]) / 3;
    for (double e: errors) {
        if (!(e > 0)) return line;
        line.mean_y += std::log(e) / 3;
    }
    double sxy = 0, sxx = 0;
    for (int i = 0; i < 3; ++i) {
        sxy += (x[i] - line.mean_x) * (std::log(errors[static_cast<std::size_t>(i)]) - line.mean_y);
        sxx += (x[i] - line.mean_x) * (x[i] - line.mean_x);
    }
    line.slope = sxy / sxx;
    line.valid = true;
    return line;
}

}  // namespace

bool errors_fall_with_trials(const std::array<double, 3>& errors) {
    const log_log_line line = line_through(errors);
    return line.valid && line.slope < 0 && errors[1] < errors[0];
}

std::size_t trials_for_tolerance(std::size_t trials, const std::array<double, 3>& errors, double tolerance) {
    const log_log_line line = line_through(errors);
    if (!line.valid) return 0;
    const double mean_x = line.mean_x, mean_y = line.mean_y, slope = line.slope;
    if (!(slope < 0) || !(tolerance > 0)) return 0;
    double multiple = std::exp(mean_x + (std::log(tolerance) - mean_y) / slope);
    if (multiple <= 1 && errors[0] > tolerance) {
        // The line passes below the record's own error: from the record's error toward the error at
        // twice its trials instead, so that more trials than the record's are named.
        const double first = (std::log(errors[1]) - std::log(errors[0])) / std::log(2.0);
        if (!(first < 0)) return 0;
        multiple = std::exp((std::log(tolerance) - std::log(errors[0])) / first);
    }
    if (!(multiple <= 16)) return 0;
    // Up to the next whole trial, but not for the rounding of the logs (4 x 10 trials is 40).
    const double needed = std::max(multiple, 1.0) * static_cast<double>(trials);
    return static_cast<std::size_t>(std::ceil(needed * (1 - 1e-12)));
}

namespace {

// Random tags of the surrogates' streams (derive_seed), apart from every other use of the seed.
constexpr std::uint64_t surrogate_draw_tag = 0xca11b7a7e0ULL;
constexpr std::uint64_t surrogate_split_tag = 0xca11b7a7e1ULL;
constexpr std::uint64_t larger_draw_tag = 0xca11b7a7e2ULL;
constexpr std::uint64_t larger_split_tag = 0xca11b7a7e3ULL;
static_assert(subset_estimator_count == 3, "rate_calibration::by_estimator holds three estimators");

/// The calibrated error of range `fit` with `multiple` times the record's trials: as many surrogates
/// as the calibration's, drawn from the model one at a time into the first surrogate's buffers,
/// each grown alone to the range's longest words.
double error_with_more_trials(const letter_chain& model, std::size_t trials, unsigned multiple, const calibrated_fit& fit,
                              seconds bin_width, const direct_settings& settings,
                              direct_workspace::parts::surrogate_parts& buffers) {
    direct_settings s = settings;
    s.surrogates = 0;
    s.splits = std::min(settings.surrogate_splits, settings.splits);
    s.letters_max = fit.fit.second;
    s.fit_letters.reset();
    std::vector<double> rates;
    for (unsigned k = 0; k < settings.surrogates; ++k) {
        model.draw(trials * multiple, derive_seed(settings.seed, {larger_draw_tag, multiple, k}), buffers.letters);
        s.seed = derive_seed(settings.seed, {larger_split_tag, multiple, k});
        direct_lengths lengths(buffers.letters, bin_width, s, *buffers.workspace);
        std::vector<double> total, noise;
        while (lengths.more()) {
            const letters_estimate& e = lengths.next();
            total.push_back(e.total_bits);
            noise.push_back(e.noise_bits);
        }
        rates.push_back(info_rate_over(total, noise, s.letters_min, fit.fit, bin_width));
    }
    return calibrated_error(mean_of(rates) - fit.model_rate, sd_of(rates), settings.surrogates);
}

/// The information rate over `fit` of one estimator's extrapolated informations per length.
double info_rate_of(const std::vector<double>& info_bits, int first_letters, std::pair<int, int> fit, seconds bin_width) {
    return info_rate_over(info_bits, std::vector<double>(info_bits.size(), 0.0), first_letters, fit, bin_width);
}

/// One surrogate's estimate, grown in step with the record's; its letters and buffers are the
/// thread's (direct_workspace::parts::surrogates), kept from record to record.
struct surrogate {
    direct_settings settings;
    std::unique_ptr<direct_lengths> lengths;
};

double mean_rate_hz(const sparse_letters& letters, seconds bin_width) {
    const double span = static_cast<double>(letters.trials) * static_cast<double>(letters.bins) * bin_width;
    return span > 0 ? static_cast<double>(letters.spikes) / span : 0.0;
}

/// What an uncertain record's caution says of more trials: how many would do, that more than 16 times
/// would be needed, or that it is not known (the errors of the 2x and 4x surrogates do not fall).
std::string trials_advice(const rate_calibration& cal) {
    const std::string measured = "(measured on surrogates of 2 and 4 times the trials)";
    if (cal.trials_needed > 0) return "about " + std::to_string(cal.trials_needed) + " trials would bring it within " + measured;
    if (errors_fall_with_trials(cal.error_by_trials)) return "more than 16 times the trials would be needed " + measured;
    return "how many trials would do is not known: on surrogates of 2 and 4 times the trials the error did not fall steadily (" +
           format_fixed(cal.error_by_trials[0], 2) + ", " + format_fixed(cal.error_by_trials[1], 2) + " and " +
           format_fixed(cal.error_by_trials[2], 2) + " bits/s)";
}

/// The upper half of lengths letters_min..b, as the sampling rule fits them.
std::pair<int, int> upper_half(int b, int letters_min) { return {std::max(letters_min, (b + 1) / 2), b}; }

/// The fit range to report (notes/methods-calibration.md). The longest range within tolerance sees
/// the most of the correlations between bins that the data can resolve; a range within tolerance
/// whose corrected rate agrees with it (within 1.96 combined errors) has found the same
/// information. Of those the shortest that extrapolates (ends past the shortest length) is
/// reported, or the shortest when none does: chosen by position, not by the smallest error, whose
/// estimate from a few surrogates is itself noisy (picking the smallest picks an underestimate).
/// When no range is within tolerance, the extrapolating one with the smallest error. Single letters
/// are blind to patterns: once a range that extrapolates has been examined, a single-letter range
/// within tolerance does not count as one (with 60 trials a pattern unit's 1-letter rate of about 0
/// met the tolerance while its 1-2 range did not, and a confident zero was reported).
std::size_t choose_fit(const std::vector<calibrated_fit>& by_fit) {
    auto extrapolates = [](const calibrated_fit& c) { return c.fit.first < c.fit.second; };
    const bool any_extrapolates = std::any_of(by_fit.begin(), by_fit.end(), extrapolates);
    std::size_t longest = by_fit.size();
    for (std::size_t i = 0; i < by_fit.size(); ++i) {
        if (by_fit[i].within_tolerance && (extrapolates(by_fit[i]) || !any_extrapolates)) longest = i;
    }
    if (longest == by_fit.size()) {
        // None within tolerance: the smallest error among the ranges that extrapolate, when there
        // are any (single letters measure another quantity, blind to patterns), else the first.
        std::size_t best = by_fit.size();
        for (std::size_t i = 0; i < by_fit.size(); ++i) {
            if (extrapolates(by_fit[i]) && (best == by_fit.size() || by_fit[i].error < by_fit[best].error)) best = i;
        }
        return best == by_fit.size() ? 0 : best;
    }
    const calibrated_fit& reference = by_fit[longest];
    auto agrees = [&](const calibrated_fit& c) {
        const double gap = (c.rate - c.bias) - (reference.rate - reference.bias);
        return c.within_tolerance && std::abs(gap) <= 1.96 * std::hypot(c.error, reference.error);
    };
    for (std::size_t i = 0; i < by_fit.size(); ++i) {
        if (agrees(by_fit[i]) && extrapolates(by_fit[i])) return i;
    }
    for (std::size_t i = 0; i < by_fit.size(); ++i) {
        if (agrees(by_fit[i])) return i;
    }
    return longest;
}

}  // namespace

direct_estimate estimate_calibrated(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                                    direct_workspace& workspace) {
    direct_lengths record(letters, bin_width, settings, workspace);
    const letter_chain model(letters);
    const unsigned k_count = settings.surrogates;
    auto& kept = workspace.inside().surrogates;
    if (kept.size() < k_count) kept.resize(k_count);
    std::vector<surrogate> surrogates(k_count);
    for (unsigned k = 0; k < k_count; ++k) {
        surrogate& s = surrogates[k];
        model.draw(letters.trials, derive_seed(settings.seed, {surrogate_draw_tag, k}), kept[k].letters);
        s.settings = settings;
        s.settings.surrogates = 0;
        s.settings.splits = std::min(settings.surrogate_splits, settings.splits);
        s.settings.seed = derive_seed(settings.seed, {surrogate_split_tag, k});
        s.lengths = std::make_unique<direct_lengths>(kept[k].letters, bin_width, s.settings, *kept[k].workspace);
    }

    // The longest length the calibration can judge: the model's word entropies are enumerated.
    const int ceiling = std::min(settings.letters_max, model.longest_enumerable());
    if (ceiling < settings.letters_min || (settings.fit_letters && settings.fit_letters->second > ceiling)) {
        throw insufficient_data("the calibration enumerates words of at most " + std::to_string(model.longest_enumerable()) +
                                " letters of this alphabet (" + std::to_string(model.alphabet()) +
                                " letters); ask for shorter words or turn it off with --surrogates 0");
    }
    const double rate_hz = mean_rate_hz(letters, bin_width);
    std::vector<double> model_total, model_noise;
    std::vector<std::vector<double>> sur_total(k_count), sur_noise(k_count);
    // Each surrogate's information per length by every subset estimator: [estimator][surrogate].
    std::array<std::vector<std::vector<double>>, subset_estimator_count> sur_info;
    for (auto& by_surrogate: sur_info) by_surrogate.resize(k_count);
    rate_calibration cal;
    cal.surrogates = k_count;
    length_stop stop = length_stop::letters_max;

    auto examine = [&](std::pair<int, int> fit) {
        calibrated_fit c;
        c.fit = fit;
        c.rate = record.info_rate(fit);
        c.model_rate = info_rate_over(model_total, model_noise, settings.letters_min, fit, bin_width);
        std::vector<double> rates;
        for (unsigned k = 0; k < k_count; ++k) {
            rates.push_back(info_rate_over(sur_total[k], sur_noise[k], settings.letters_min, fit, bin_width));
        }
        c.bias = mean_of(rates) - c.model_rate;
        c.spread = sd_of(rates);
        c.error = calibrated_error(c.bias, c.spread, k_count);
        c.within_tolerance = c.error <= calibration_tolerance(c.rate - c.bias, settings.error_tolerance,
                                                              settings.error_floor_bits_per_spike, rate_hz);
        cal.by_fit.push_back(c);
        return c.within_tolerance;
    };

    // With --every-length the record computes every length for the curves, but the search, and the
    // surrogates, stop where they would without it: the rates do not depend on the option.
    bool searching = true;
    while (record.more()) {
        const int L = record.next().letters;
        if (!searching) continue;
        for (unsigned k = 0; k < k_count; ++k) {
            const letters_estimate& e = surrogates[k].lengths->next();
            sur_total[k].push_back(e.total_bits);
            sur_noise[k].push_back(e.noise_bits);
            for (std::size_t m = 0; m < sur_info.size(); ++m) sur_info[m][k].push_back(e.info_bits_by_estimator[m]);
        }
        const auto exact = model.entropies(L);
        model_total.push_back(exact.total);
        model_noise.push_back(exact.noise);
        bool done = false;
        if (settings.fit_letters) {
            if (L == settings.fit_letters->second) {
                examine(*settings.fit_letters);
                stop = length_stop::fit_letters;
                done = true;
            }
        } else if (!examine(upper_half(L, settings.letters_min)) && L > settings.letters_min) {
            // Errors grow with word length: the first range beyond the tolerance ends the search, once
            // a range that extrapolates has been seen (single letters failing says nothing of patterns).
            stop = length_stop::calibration;
            done = true;
        } else if (L == ceiling) {
            stop = ceiling < settings.letters_max ? length_stop::calibration : length_stop::letters_max;
            done = true;
        }
        if (done && !settings.every_length) break;
        searching = !done;
    }
    if (settings.every_length) stop = length_stop::letters_max;

    cal.chosen = choose_fit(cal.by_fit);
    const calibrated_fit& chosen = cal.by_fit[cal.chosen];
    cal.uncertain = !chosen.within_tolerance;
    cal.tolerance = calibration_tolerance(chosen.rate - chosen.bias, settings.error_tolerance,
                                          settings.error_floor_bits_per_spike, rate_hz);

    // Every subset estimator on the same surrogates at the chosen range, for the record (not to
    // choose one: an estimator's error at the fitted model is not its error at the truth; notes/
    // methods-calibration.md, "Trials needed, and the subset estimators").
    for (std::size_t m = 0; m < sur_info.size(); ++m) {
        std::vector<double> rates;
        for (unsigned k = 0; k < k_count; ++k) {
            rates.push_back(info_rate_of(sur_info[m][k], settings.letters_min, chosen.fit, bin_width));
        }
        estimator_calibration& c = cal.by_estimator[m];
        std::vector<double> record_info;
        for (const letters_estimate& e: record.computed()) record_info.push_back(e.info_bits_by_estimator[m]);
        c.estimate = info_rate_of(record_info, settings.letters_min, chosen.fit, bin_width);
        c.bias = mean_of(rates) - chosen.model_rate;
        c.spread = sd_of(rates);
        c.rmse = std::hypot(c.bias, c.spread);
        c.error = calibrated_error(c.bias, c.spread, k_count);
    }

    // An uncertain record: how many trials would bring the chosen range within the tolerance.
    surrogates.clear();  // their buffers are reused below
    if (cal.uncertain) {
        cal.error_by_trials[0] = chosen.error;
        cal.error_by_trials[1] = error_with_more_trials(model, letters.trials, 2, chosen, bin_width, settings, kept[0]);
        cal.error_by_trials[2] = error_with_more_trials(model, letters.trials, 4, chosen, bin_width, settings, kept[0]);
        cal.trials_needed = trials_for_tolerance(letters.trials, cal.error_by_trials, cal.tolerance);
    }

    fit_choice choice;
    choice.letters = chosen.fit;
    choice.from_user = settings.fit_letters.has_value();
    if (cal.uncertain) {
        choice.warnings.push_back(
            "uncertain: at " + std::to_string(letters.trials) + " trials the calibrated error of the rate, " +
            format_fixed(chosen.error, 2) + " bits/s, exceeds the tolerance of " + format_fixed(cal.tolerance, 2) +
            " bits/s (" + format_fixed(100 * settings.error_tolerance, 0) + "% of the rate, or " +
            format_number(settings.error_floor_bits_per_spike) +
            " bits per spike); " +
            trials_advice(cal) +
            "; wider bins or shorter words also help");
    }
    if (!choice.from_user && chosen.fit.first == chosen.fit.second) {
        choice.warnings.push_back("the rate comes from " + std::to_string(chosen.fit.first) +
                                  "-letter words alone, without extrapolation to infinite word length: correlations "
                                  "between bins further apart are not counted");
    }
    return record.finish(std::move(choice), stop, std::move(cal));
}

}  // namespace rastrum
