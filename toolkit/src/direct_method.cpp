#include <rastrum/direct_method.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/extrapolation.hpp>
#include <rastrum/fit_lengths.hpp>
#include <rastrum/trial_partition.hpp>

#include "direct_workspace.hpp"

#include <algorithm>
#include <array>
#include <cmath>

namespace rastrum {

const char* subset_estimator_name(subset_estimator e) {
    switch (e) {
    case subset_estimator::plugin: return "plug-in";
    case subset_estimator::miller_madow: return "miller-madow";
    case subset_estimator::jackknife: return "jackknife";
    }
    throw internal_error("unknown subset estimator");
}

subset_estimator parse_subset_estimator(const std::string& name) {
    if (name == "plug-in") return subset_estimator::plugin;
    if (name == "miller-madow") return subset_estimator::miller_madow;
    if (name == "jackknife") return subset_estimator::jackknife;
    throw usage_error("unknown subset estimator '" + name + "': choose plug-in, miller-madow or jackknife");
}

void check_direct_settings(const direct_settings& s) {
    if (s.letters_min < 1 || s.letters_max < s.letters_min) {
        throw usage_error("--letters: need 1 <= A <= B, got " + std::to_string(s.letters_min) + "-" +
                          std::to_string(s.letters_max));
    }
    if (s.fit_letters) {
        const auto [a, b] = *s.fit_letters;
        if (a < s.letters_min || b > s.letters_max || a > b) {
            throw usage_error("--fit-letters " + std::to_string(a) + "-" + std::to_string(b) +
                              " must lie within --letters " + std::to_string(s.letters_min) + "-" +
                              std::to_string(s.letters_max));
        }
    }
    if (s.splits < 2) throw usage_error("--splits: at least 2 random splits of the trials are needed");
    if (!(s.bias_tolerance > 0 && s.bias_tolerance <= 1)) {
        throw usage_error("--bias-tolerance must lie in (0, 1], got " + format_number(s.bias_tolerance));
    }
}

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

direct_workspace::direct_workspace(): parts_(std::make_unique<parts>()) {}
direct_workspace::~direct_workspace() = default;
direct_workspace::direct_workspace(direct_workspace&&) noexcept = default;
direct_workspace& direct_workspace::operator=(direct_workspace&&) noexcept = default;

direct_estimate estimate_direct(const letter_matrix& letters, seconds bin_width, const direct_settings& settings) {
    direct_workspace workspace;
    return estimate_direct(sparse_of(letters), bin_width, settings, workspace);
}

direct_estimate estimate_direct(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                                direct_workspace& workspace) {
    check_direct_settings(settings);
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
    const auto& splits = kept.splits;
    std::vector<std::vector<std::size_t>> sizes;
    for (const auto& s: splits) sizes.push_back(subset_sizes(s));
    const std::size_t n_halves = 2 * splits.size();
    const auto primary = static_cast<std::size_t>(settings.subsets);
    // The other extrapolation the sampling rule compares with: jackknife against plug-in.
    const auto other = static_cast<std::size_t>(settings.subsets == subset_estimator::plugin ? subset_estimator::jackknife
                                                                                             : subset_estimator::plugin);
    const auto plugin = static_cast<std::size_t>(subset_estimator::plugin);
    const auto miller_madow = static_cast<std::size_t>(subset_estimator::miller_madow);

    direct_estimate out;
    out.bin_width = bin_width;
    out.trials = n_trials;
    // Extrapolated entropies per analysed length: on all trials (primary and other estimator) and
    // on each random half (primary).
    std::vector<double> total_all, noise_all, total_other, noise_other;
    std::vector<std::vector<double>> total_half(n_halves), noise_half(n_halves);

    sparse_words& words = kept.words;
    words.start(letters, std::max<word_code>(2, word_code{letters.largest} + 1), settings.letters_max);
    length_measurer& measurer = kept.measurer;
    measurer.reset(splits, n_trials);
    const fit_length_rule rule(settings);
    for (int L = 1; L <= settings.letters_max; ++L) {
        if (L > 1) words.grow();
        if (L < settings.letters_min) continue;
        const subset_entropies& e = measurer.measure(words);

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
                total_half[i].push_back(extrapolate_half(e.total[primary], sizes[s], s, h));
                noise_half[i].push_back(extrapolate_half(e.noise[primary], sizes[s], s, h));
                info_halves.push_back(total_half[i].back() - noise_half[i].back());
            }
        }
        le.info_half_bits = mean_of(info_halves);
        le.info_se_bits = sd_of(info_halves) / std::sqrt(2.0);
        le.well_sampled = le.estimator_spread_bits <=
                          settings.bias_tolerance * std::max(std::abs(le.info_bits), 2 * le.info_se_bits);
        out.by_letters.push_back(le);
        total_all.push_back(le.total_bits);
        noise_all.push_back(le.noise_bits);
        total_other.push_back(total_inf[other]);
        noise_other.push_back(noise_inf[other]);
        // No longer length can change the fit range, so none is computed (fit_lengths.hpp).
        if (L < settings.letters_max && !settings.every_length && !rule.longer_length_may_enter(out.by_letters)) {
            out.letters_stop = rule.stop_reason();
            break;
        }
    }

    fit_choice choice = rule.choose(out.by_letters);
    out.fit_letters = choice.letters;
    out.fit_letters_from_user = choice.from_user;
    out.warnings = std::move(choice.warnings);
    const int from = out.fit_letters.first - settings.letters_min;
    const int to = out.fit_letters.second - settings.letters_min;

    const rate_fit all = fit_rates(slice(total_all, from, to), slice(noise_all, from, to), out.fit_letters.first, bin_width);
    out.total_rate = all.total;
    out.noise_rate = all.noise;
    out.info_rate = all.info;
    out.total_rate_fit = all.total_line;
    out.noise_rate_fit = all.noise_line;
    for (std::size_t i = 0; i < n_halves; ++i) {
        out.half_info_rates.push_back(
            fit_rates(slice(total_half[i], from, to), slice(noise_half[i], from, to), out.fit_letters.first, bin_width).info);
    }
    // The variance of an estimate on N trials scales as 1/N, so the halves' spread over sqrt 2 is
    // the spread expected of the estimate on all trials.
    out.uncertainty.resampling = sd_of(out.half_info_rates) / std::sqrt(2.0);
    out.uncertainty.data_size = std::abs(mean_of(out.half_info_rates) - out.info_rate);
    out.uncertainty.word_length = all.info_se;
    // The whole distance to the other bias correction: with homogeneous firing the jackknife-based
    // rate sat up to two thirds of that distance from the exact 0 (notes/methods.md, section 4.4).
    out.uncertainty.bias_correction =
        std::abs(out.info_rate - fit_rates(slice(total_other, from, to), slice(noise_other, from, to),
                                           out.fit_letters.first, bin_width).info);
    const auto& u = out.uncertainty;
    out.info_rate_se = std::sqrt(u.resampling * u.resampling + u.data_size * u.data_size +
                                 u.word_length * u.word_length + u.bias_correction * u.bias_correction);
    out.info_rate_ci95 = {out.info_rate - 1.96 * out.info_rate_se, out.info_rate + 1.96 * out.info_rate_se};

    // Few spikes per bin position across the trials: each position's noise entropy rests on one
    // spike or none and is underestimated, beyond what the corrections and the interval see
    // (notes/methods.md, "Sparse bins"; the threshold comes from the experiment there).
    const double per_position = letters.bins == 0 ? 0 : static_cast<double>(letters.spikes) / static_cast<double>(letters.bins);
    if (per_position < sparse_spikes_per_position) {
        out.warnings.push_back(
            "sparse: " + format_fixed(per_position, 3) + " spikes per bin position across all " + std::to_string(n_trials) +
            " trials (below " + format_fixed(sparse_spikes_per_position, 1) +
            "): the noise entropy of most positions rests on one spike or none, so it is underestimated and the "
            "information overestimated by an amount that neither the bias corrections nor the interval capture; "
            "use wider bins or more trials, or measure the bias with --null-rotations");
    }
    if (n_trials < 50) {
        out.warnings.push_back("only " + std::to_string(n_trials) +
                               " trials: noise entropies of all but short words are strongly undersampled");
    }
    if (out.info_rate_ci95.first <= 0 && out.info_rate_ci95.second >= 0) {
        out.warnings.push_back("the 95% interval includes 0: no information about the stimulus is detectable");
    }
    return out;
}

}  // namespace rastrum
