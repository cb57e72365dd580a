#include <rastrum/errors.hpp>
#include <rastrum/extrapolation.hpp>
#include <rastrum/format.hpp>
#include <rastrum/trial_partition.hpp>

#include "direct_lengths.hpp"
#include "direct_workspace.hpp"

#include <algorithm>
#include <array>
#include <cmath>

namespace rastrum {

namespace {

/// Extrapolation to infinite data from all trials, the halves and the quarters of every split;
/// each level weighs as much as the others in the fit.
inverse_size_fit extrapolate_all(const std::vector<double>& h, const std::vector<std::vector<std::size_t>>& sizes) {
    std::vector<double> x, y, w;
    const std::size_t splits = sizes.size();
    x.push_back(1.0 / static_cast<double>(sizes[0][0]));
    y.push_back(h[0]);
    w.push_back(1.0);
    for (std::size_t s = 0; s < splits; ++s) {
        for (int level = 1; level <= 2; ++level) {
            const int blocks = 1 << level;
            for (int b = 0; b < blocks; ++b) {
                const int i = subset_index(level, b);
                x.push_back(1.0 / static_cast<double>(sizes[s][i]));
                y.push_back(h[s * nested_subsets + static_cast<std::size_t>(i)]);
                w.push_back(1.0 / static_cast<double>(static_cast<std::size_t>(blocks) * splits));
            }
        }
    }
    return fit_inverse_size(x, y, w);
}

/// Level means of one estimator's subset entropies (all trials, halves, quarters, eighths).
void level_means(const std::vector<double>& h, const std::vector<std::vector<std::size_t>>& sizes,
                 std::vector<double>& inverse_trials, std::vector<double>& bits) {
    inverse_trials.clear();
    bits.clear();
    for (int level = 0; level < 4; ++level) {
        const int blocks = 1 << level;
        double x = 0, y = 0, n = 0;
        for (std::size_t s = 0; s < sizes.size(); ++s) {
            for (int b = 0; b < blocks; ++b) {
                const int i = subset_index(level, b);
                x += 1.0 / static_cast<double>(sizes[s][static_cast<std::size_t>(i)]);
                y += h[s * nested_subsets + static_cast<std::size_t>(i)];
                n += 1;
            }
        }
        inverse_trials.push_back(x / n);
        bits.push_back(y / n);
    }
}

/// The same extrapolation for one half of one split, from that half, its quarters and its eighths.
double extrapolate_half(const std::vector<double>& h, const std::vector<std::size_t>& sizes, std::size_t split,
                        int half) {
    std::vector<double> x, y, w;
    for (int level = 1; level <= 3; ++level) {
        const int per_half = 1 << (level - 1);
        for (int b = half * per_half; b < (half + 1) * per_half; ++b) {
            const int i = subset_index(level, b);
            x.push_back(1.0 / static_cast<double>(sizes[i]));
            y.push_back(h[split * nested_subsets + static_cast<std::size_t>(i)]);
            w.push_back(1.0 / per_half);
        }
    }
    return fit_inverse_size(x, y, w).at_infinity;
}

/// The rate at infinite word length: total and noise entropy rates fitted linearly in 1/L.
struct rate_fit {
    double total = 0, noise = 0, info = 0, info_se = 0;
    line_fit total_line, noise_line;
};

rate_fit fit_rates(const std::vector<double>& total_bits, const std::vector<double>& noise_bits, int first_letters,
                   seconds bin_width) {
    std::vector<double> x, yt, yn, yi;
    for (std::size_t i = 0; i < total_bits.size(); ++i) {
        const double L = first_letters + static_cast<double>(i);
        x.push_back(1.0 / L);
        yt.push_back(total_bits[i] / (L * bin_width));
        yn.push_back(noise_bits[i] / (L * bin_width));
        yi.push_back((total_bits[i] - noise_bits[i]) / (L * bin_width));
    }
    rate_fit r;
    r.total_line = fit_line(x, yt);
    r.noise_line = fit_line(x, yn);
    r.total = r.total_line.intercept;
    r.noise = r.noise_line.intercept;
    const line_fit info = fit_line(x, yi);
    r.info = info.intercept;
    r.info_se = info.intercept_se;
    return r;
}

std::vector<double> slice(const std::vector<double>& v, int from, int to) {
    return std::vector<double>(v.begin() + from, v.begin() + to + 1);
}


}  // namespace

double mean_of(const std::vector<double>& v) {
    double m = 0;
    for (double x: v) m += x;
    return m / static_cast<double>(v.size());
}

double sd_of(const std::vector<double>& v) {
    const double m = mean_of(v);
    double ss = 0;
    for (double x: v) ss += (x - m) * (x - m);
    return std::sqrt(ss / static_cast<double>(v.size() - 1));
}

direct_lengths::direct_lengths(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                               direct_workspace& workspace)
    : letters_(letters), bin_width_(bin_width), settings_(settings), workspace_(workspace) {
    const std::size_t n_trials = letters.trials;
    if (n_trials < static_cast<std::size_t>(nested_blocks)) {
        throw insufficient_data("the direct method needs at least 8 trials (its extrapolation uses eighths of them); got " +
                                std::to_string(n_trials));
    }
    if (letters.bins < static_cast<std::size_t>(settings.letters_max) + 1) {
        throw insufficient_data("at " + format_number(1000 * bin_width) + " ms bins the trials hold " +
                                std::to_string(letters.bins) + " whole bins; words of up to " +
                                std::to_string(settings.letters_max) + " letters need at least " +
                                std::to_string(settings.letters_max + 1) + " (narrower bins or fewer letters)");
    }
    direct_workspace::parts& kept = workspace.inside();
    kept.splits = make_nested_splits(n_trials, settings.splits, settings.seed);
    for (const auto& s: kept.splits) sizes_.push_back(subset_sizes(s));
    primary_ = static_cast<std::size_t>(settings.subsets);
    // The other extrapolation the sampling rule compares with: jackknife against plug-in.
    other_ = static_cast<std::size_t>(settings.subsets == subset_estimator::plugin ? subset_estimator::jackknife
                                                                                  : subset_estimator::plugin);
    total_half_.resize(2 * kept.splits.size());
    noise_half_.resize(2 * kept.splits.size());
    out_.bin_width = bin_width;
    out_.trials = n_trials;
    kept.words.start(letters, std::max<word_code>(2, word_code{letters.largest} + 1), settings.letters_max);
    kept.measurer.reset(kept.splits, n_trials);
}

const letters_estimate& direct_lengths::next() {
    if (!more()) throw internal_error("direct_lengths::next past letters_max");
    direct_workspace::parts& kept = workspace_.inside();
    const auto& splits = kept.splits;
    const auto& sizes = sizes_;
    const std::size_t primary = primary_, other = other_;
    const auto plugin = static_cast<std::size_t>(subset_estimator::plugin);
    const auto miller_madow = static_cast<std::size_t>(subset_estimator::miller_madow);
    // Words start at one letter; lengths below letters_min are grown but not measured.
    if (last_ > 0) kept.words.grow();
    ++last_;
    while (last_ < settings_.letters_min) {
        kept.words.grow();
        ++last_;
    }
    const int L = last_;
    const subset_entropies& e = kept.measurer.measure(kept.words);
    letters_estimate le;
    le.letters = L;
    le.samples = e.samples;
    le.distinct_words = e.distinct;
    le.total_plugin_bits = e.total[plugin][0];
    le.noise_plugin_bits = e.noise[plugin][0];
    le.total_miller_madow_bits = e.total[miller_madow][0];
    le.noise_miller_madow_bits = e.noise[miller_madow][0];
    std::array<double, subset_estimator_count> total_inf{}, noise_inf{};
    for (std::size_t m = 0; m < static_cast<std::size_t>(subset_estimator_count); ++m) {
        total_inf[m] = extrapolate_all(e.total[m], sizes).at_infinity;
        noise_inf[m] = extrapolate_all(e.noise[m], sizes).at_infinity;
        le.info_bits_by_estimator[m] = total_inf[m] - noise_inf[m];
    }
    le.data_size.total_fit = extrapolate_all(e.total[primary], sizes);
    le.data_size.noise_fit = extrapolate_all(e.noise[primary], sizes);
    std::vector<double> unused;
    level_means(e.total[primary], sizes, le.data_size.inverse_trials, le.data_size.total_bits);
    level_means(e.noise[primary], sizes, unused, le.data_size.noise_bits);
    le.data_size.in_fit = {true, true, true, false};
    le.total_bits = total_inf[primary];
    le.noise_bits = noise_inf[primary];
    le.info_bits = le.total_bits - le.noise_bits;
    le.estimator_spread_bits = std::abs(le.info_bits_by_estimator[primary] - le.info_bits_by_estimator[other]);

    std::vector<double> info_halves;
    for (std::size_t s = 0; s < splits.size(); ++s) {
        for (int h = 0; h < 2; ++h) {
            const std::size_t i = 2 * s + static_cast<std::size_t>(h);
            total_half_[i].push_back(extrapolate_half(e.total[primary], sizes[s], s, h));
            noise_half_[i].push_back(extrapolate_half(e.noise[primary], sizes[s], s, h));
            info_halves.push_back(total_half_[i].back() - noise_half_[i].back());
        }
    }
    le.info_half_bits = mean_of(info_halves);
    le.info_se_bits = sd_of(info_halves) / std::sqrt(2.0);
    le.well_sampled = le.estimator_spread_bits <=
                      settings_.bias_tolerance * std::max(std::abs(le.info_bits), 2 * le.info_se_bits);
    out_.by_letters.push_back(le);
    total_all_.push_back(le.total_bits);
    noise_all_.push_back(le.noise_bits);
    total_other_.push_back(total_inf[other]);
    noise_other_.push_back(noise_inf[other]);
    return out_.by_letters.back();
}

double info_rate_over(const std::vector<double>& total_bits, const std::vector<double>& noise_bits, int first_letters,
                      std::pair<int, int> fit, seconds bin_width) {
    const int from = fit.first - first_letters;
    const int to = fit.second - first_letters;
    if (from < 0 || to >= static_cast<int>(total_bits.size()) || to >= static_cast<int>(noise_bits.size()) || from > to) {
        throw internal_error("info_rate_over: a fit range outside the lengths given");
    }
    return fit_rates(slice(total_bits, from, to), slice(noise_bits, from, to), fit.first, bin_width).info;
}

double direct_lengths::info_rate(std::pair<int, int> fit) const {
    return info_rate_over(total_all_, noise_all_, settings_.letters_min, fit, bin_width_);
}

direct_estimate direct_lengths::finish(fit_choice choice, length_stop stop, std::optional<rate_calibration> calibration) {
    out_.letters_stop = stop;
    const std::size_t n_trials = letters_.trials;
    const std::size_t n_halves = total_half_.size();
    out_.fit_letters = choice.letters;
    out_.fit_letters_from_user = choice.from_user;
    out_.warnings = std::move(choice.warnings);
    const int from = out_.fit_letters.first - settings_.letters_min;
    const int to = out_.fit_letters.second - settings_.letters_min;

    const rate_fit all = fit_rates(slice(total_all_, from, to), slice(noise_all_, from, to), out_.fit_letters.first, bin_width_);
    out_.total_rate = all.total;
    out_.noise_rate = all.noise;
    out_.info_rate = all.info;
    out_.total_rate_fit = all.total_line;
    out_.noise_rate_fit = all.noise_line;
    for (std::size_t i = 0; i < n_halves; ++i) {
        out_.half_info_rates.push_back(
            fit_rates(slice(total_half_[i], from, to), slice(noise_half_[i], from, to), out_.fit_letters.first, bin_width_).info);
    }
    // The variance of an estimate on N trials scales as 1/N, so the halves' spread over sqrt 2 is
    // the spread expected of the estimate on all trials.
    out_.uncertainty.resampling = sd_of(out_.half_info_rates) / std::sqrt(2.0);
    out_.uncertainty.data_size = std::abs(mean_of(out_.half_info_rates) - out_.info_rate);
    out_.uncertainty.word_length = all.info_se;
    // The whole distance to the other bias correction: with homogeneous firing the jackknife-based
    // rate sat up to two thirds of that distance from the exact 0 (notes/methods.md, section 4.4).
    out_.uncertainty.bias_correction =
        std::abs(out_.info_rate - fit_rates(slice(total_other_, from, to), slice(noise_other_, from, to),
                                           out_.fit_letters.first, bin_width_).info);
    const auto& u = out_.uncertainty;
    out_.info_rate_se = std::sqrt(u.resampling * u.resampling + u.data_size * u.data_size +
                                 u.word_length * u.word_length + u.bias_correction * u.bias_correction);
    out_.info_rate_ci95 = {out_.info_rate - 1.96 * out_.info_rate_se, out_.info_rate + 1.96 * out_.info_rate_se};
    if (calibration) {
        // The calibrated rate, its error and interval lead; the plain ones stay beside them.
        calibration->plain_info_rate = out_.info_rate;
        calibration->plain_info_rate_se = out_.info_rate_se;
        calibration->plain_info_rate_ci95 = out_.info_rate_ci95;
        const calibrated_fit& c = calibration->by_fit.at(calibration->chosen);
        out_.info_rate = c.rate - c.bias;
        out_.info_rate_se = c.error;
        const double t = calibrated_interval_factor(calibration->surrogates);
        out_.info_rate_ci95 = {out_.info_rate - t * c.error, out_.info_rate + t * c.error};
        out_.calibration = std::move(calibration);
    }

    // Few spikes per bin position across the trials: each position's noise entropy rests on one
    // spike or none and is underestimated, beyond what the corrections and the plain interval see
    // (notes/methods.md, "Sparse bins"; the threshold comes from the experiment there). A calibrated
    // record measures that bias and error on its surrogates (corrected, and "uncertain" when the
    // error is large), so neither this caution nor the one on few trials would add anything to it
    // (notes/methods-calibration.md, "Cautions of a calibrated record").
    const bool calibrated = out_.calibration.has_value();
    const double per_position = letters_.bins == 0 ? 0 : static_cast<double>(letters_.spikes) / static_cast<double>(letters_.bins);
    if (!calibrated && per_position < sparse_spikes_per_position) {
        out_.warnings.push_back(
            "sparse: " + format_fixed(per_position, 3) + " spikes per bin position across all " + std::to_string(n_trials) +
            " trials (below " + format_fixed(sparse_spikes_per_position, 1) +
            "): the noise entropy of most positions rests on one spike or none, so it is underestimated and the "
            "information overestimated by an amount that neither the bias corrections nor the interval capture; "
            "use wider bins or more trials, or measure the bias with --null-rotations");
    }
    if (!calibrated && n_trials < 50) {
        out_.warnings.push_back("only " + std::to_string(n_trials) +
                               " trials: noise entropies of all but short words are strongly undersampled");
    }
    if (out_.info_rate_ci95.first <= 0 && out_.info_rate_ci95.second >= 0) {
        out_.warnings.push_back("the 95% interval includes 0: no information about the stimulus is detectable");
    }
    return std::move(out_);
}

}  // namespace rastrum
