#include "direct_lengths.hpp"

#include <rastrum/direct_calibration.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/random.hpp>
#include <rastrum/stiminfo_calibration.hpp>

#include <algorithm>
#include <cmath>
#include <numeric>

namespace rastrum {

namespace {

// Random tags of the surrogates' streams (derive_seed), apart from every other use of the record's seed.
constexpr std::uint64_t surrogate_draw_tag = 0x57ca1d7a0ULL;
constexpr std::uint64_t surrogate_split_tag = 0x57ca1d7a1ULL;
// An estimator whose value on the record lies further than this many spreads (of one more surrogate)
// from its mean on the surrogates is not calibrated by them (about 1 in 1,000 for a t with 9 degrees
// of freedom; notes/methods-calibration.md, "When the model cannot stand in for the record").
constexpr double model_check_spreads = 5;
// The calibration declines a record whose unseen mass (Good-Turing) exceeds this in an alphabet of
// more than alphabet_per_trial responses per trial: measured where the model fails (binary words of
// 50 letters with about one spike per trial: unseen mass 0.25-0.37, calibrated values 0.46-0.81 bits
// against true 0.09-0.37) and where it works (words of two count letters: at most 0.23, in an
// alphabet of about two responses per trial); notes/methods-calibration.md.
constexpr double max_unseen_mass = 0.2;
constexpr double alphabet_per_trial = 10;

double entropy_bits(const std::vector<double>& p) {
    double h = 0;
    for (double x: p) {
        if (x > 0) h -= x * std::log2(x);
    }
    return h;
}

}  // namespace

response_model::response_model(const labelled_responses& t, response_smoothing smoothing): alphabet_(t.alphabet) {
    if (t.response.empty() || t.response.size() != t.condition.size()) throw internal_error("response_model: no trials");
    responses_ = t.response;
    std::sort(responses_.begin(), responses_.end());
    responses_.erase(std::unique(responses_.begin(), responses_.end()), responses_.end());
    const std::size_t size = responses_.size(), conditions = t.conditions;
    std::vector<std::vector<double>> f(conditions, std::vector<double>(size, 0));
    std::vector<double> n(conditions, 0), g(size, 0);
    for (std::size_t k = 0; k < t.response.size(); ++k) {
        const auto i = static_cast<std::size_t>(std::lower_bound(responses_.begin(), responses_.end(), t.response[k]) -
                                                responses_.begin());
        f[t.condition[k]][i] += 1;
        n[t.condition[k]] += 1;
        g[i] += 1;
    }
    const double total = static_cast<double>(t.response.size());
    double live = 0;  // conditions with trials
    for (std::size_t s = 0; s < conditions; ++s) {
        weights_.push_back(n[s] / total);
        if (n[s] > 0) live += 1;
        for (double& x: f[s]) x = n[s] > 0 ? x / n[s] : 0;
    }
    for (double& x: g) x /= total;
    // Variance matching, in the metric of the information: for small differences between conditions
    // I ~ X / (2 ln 2) with X = sum_s w_s sum_r (f_s(r) - g(r))^2 / g(r) (the chi-square divergence
    // from the pooled distribution). With R responses seen, S conditions of n_s trials (N in all) and
    // no information, X has expectation (R - 1)(S - 1) / N (Pearson's chi-square over N; the same
    // count of cells that makes the Miller-Madow and Panzeri-Treves corrections). What X holds
    // beyond that, tau2, is the spread of the true distributions about the pooled one; condition s's
    // own term has noise (R - 1)(1 / n_s - 1 / N), and k_s = sqrt(tau2 / (tau2 + that)) leaves the
    // model's conditions about the spread tau2 (Louis 1984).
    const double cells = static_cast<double>(size) - 1;
    double observed = 0;
    for (std::size_t s = 0; s < conditions; ++s) {
        double d = 0;
        for (std::size_t i = 0; i < size; ++i) d += (f[s][i] - g[i]) * (f[s][i] - g[i]) / g[i];
        observed += weights_[s] * d;
    }
    const double tau2 = std::max(0.0, observed - cells * (live - 1) / total);
    for (std::size_t s = 0; s < conditions; ++s) {
        double k = 1;
        if (smoothing == response_smoothing::variance_matched) {
            const double noise = n[s] > 0 ? cells * (1 / n[s] - 1 / total) : 0;
            k = tau2 + noise > 0 ? std::sqrt(tau2 / (tau2 + noise)) : 0;
        }
        shrinkage_.push_back(n[s] > 0 ? k : 0);
        frequencies_.push_back(n[s] > 0 ? f[s] : g);
    }
    pooled_ = std::move(g);
    set_shrinkage(shrinkage_);
}

void response_model::set_shrinkage(const std::vector<double>& k) {
    shrinkage_ = k;
    probabilities_.assign(k.size(), std::vector<double>(pooled_.size()));
    for (std::size_t s = 0; s < k.size(); ++s) {
        for (std::size_t i = 0; i < pooled_.size(); ++i) {
            probabilities_[s][i] = pooled_[i] + k[s] * (frequencies_[s][i] - pooled_[i]);
        }
    }
}

response_model response_model::matched_to(double target_bits) const {
    // Along the ray k_s = min(1, lambda r_s), r_s the factors relative to the largest (all 1 when
    // every factor is 0), the information grows with lambda (it is convex in p(r|s) and 0 at
    // lambda = 0: Cover & Thomas 2006, theorem 2.7.4), so bisection finds the lambda that gives it.
    const double largest = *std::max_element(shrinkage_.begin(), shrinkage_.end());
    std::vector<double> r(shrinkage_.size(), 1.0);
    double smallest = 1;
    for (std::size_t s = 0; s < r.size(); ++s) {
        if (largest > 0) r[s] = shrinkage_[s] / largest;
        if (weights_[s] > 0 && r[s] > 0) smallest = std::min(smallest, r[s]);
    }
    response_model m = *this;
    auto at = [&](double lambda) {
        std::vector<double> k(r.size());
        for (std::size_t s = 0; s < r.size(); ++s) k[s] = std::min(1.0, lambda * r[s]);
        m.set_shrinkage(k);
        return m.information();
    };
    double low = 0, high = 1 / smallest;
    if (!(target_bits > 0)) {
        at(0);
        return m;
    }
    if (at(high) <= target_bits) return m;  // the raw frequencies carry no more than the target
    for (int i = 0; i < 60; ++i) {
        const double mid = (low + high) / 2;
        (at(mid) < target_bits ? low : high) = mid;
    }
    at((low + high) / 2);
    return m;
}

response_model::response_model(std::vector<word_code> responses, std::vector<std::vector<double>> probabilities,
                               std::vector<double> weights, double alphabet)
    : responses_(std::move(responses)), probabilities_(std::move(probabilities)), weights_(std::move(weights)),
      shrinkage_(weights_.size(), 1.0), alphabet_(alphabet) {
    frequencies_ = probabilities_;
    pooled_.assign(responses_.size(), 0);
    for (std::size_t s = 0; s < weights_.size() && s < probabilities_.size(); ++s) {
        for (std::size_t i = 0; i < pooled_.size() && i < probabilities_[s].size(); ++i) {
            pooled_[i] += weights_[s] * probabilities_[s][i];
        }
    }
    if (probabilities_.size() != weights_.size()) throw internal_error("response_model: a weight per condition");
    for (const auto& p: probabilities_) {
        if (p.size() != responses_.size()) throw internal_error("response_model: a probability per response");
        if (std::any_of(p.begin(), p.end(), [](double x) { return !(x >= 0); })) throw internal_error("response_model: negative");
    }
}

double response_model::information() const {
    std::vector<double> pooled(responses_.size(), 0);
    double noise = 0;
    for (std::size_t s = 0; s < probabilities_.size(); ++s) {
        if (weights_[s] == 0) continue;
        for (std::size_t i = 0; i < pooled.size(); ++i) pooled[i] += weights_[s] * probabilities_[s][i];
        noise += weights_[s] * entropy_bits(probabilities_[s]);
    }
    return std::max(0.0, entropy_bits(pooled) - noise);  // >= 0 exactly; rounding may leave -1e-16
}

labelled_responses response_model::draw(const std::vector<std::size_t>& trials_per_condition, std::uint64_t seed) const {
    if (trials_per_condition.size() != probabilities_.size()) throw internal_error("response_model::draw: conditions");
    labelled_responses out;
    out.conditions = probabilities_.size();
    out.alphabet = alphabet_;
    random_stream rng(seed);
    std::vector<double> cumulative(responses_.size());
    for (std::size_t s = 0; s < probabilities_.size(); ++s) {
        std::partial_sum(probabilities_[s].begin(), probabilities_[s].end(), cumulative.begin());
        const double top = cumulative.empty() ? 0 : cumulative.back();
        for (std::size_t j = 0; j < trials_per_condition[s]; ++j) {
            // The first response whose cumulative probability exceeds u: never one of probability 0.
            const double u = rng.uniform() * top;
            auto it = std::upper_bound(cumulative.begin(), cumulative.end(), u);
            if (it == cumulative.end()) --it;
            while (it != cumulative.begin() && probabilities_[s][static_cast<std::size_t>(it - cumulative.begin())] == 0) --it;
            out.condition.push_back(static_cast<std::uint32_t>(s));
            out.response.push_back(responses_[static_cast<std::size_t>(it - cumulative.begin())]);
        }
    }
    return out;
}

std::string uncertain_caution(const stiminfo_calibration& c) {
    if (c.not_calibrated) return c.reason;
    const error_at_size& now = c.by_size.front();
    const std::string needed =
        c.trials_per_condition_needed
            ? "about " + format_number(std::ceil(*c.trials_per_condition_needed)) + " trials per condition would meet it"
            : "more than " + format_number(std::ceil(4 * now.trials_per_condition)) +
                  " trials per condition (4x) would be needed to meet it";
    return "uncertain: at " + format_number(std::round(now.trials_per_condition * 10) / 10) +
           " trials per condition the calibrated error of " + info_estimator_name(c.recommended) + ", " +
           format_fixed(c.error, 3) + " bits, exceeds the tolerance of " + format_fixed(c.tolerance, 3) +
           " bits (10% of the value, or 0.02 bits); " + needed +
           "; more trials per condition, a coarser code or a shorter window would help";
}

std::optional<double> trials_needed(const std::vector<std::pair<double, double>>& points, double tolerance, double beyond) {
    // log e = log a - b log n by least squares.
    double mx = 0, my = 0;
    for (const auto& [n, e]: points) {
        mx += std::log(n) / static_cast<double>(points.size());
        my += std::log(e) / static_cast<double>(points.size());
    }
    double sxy = 0, sxx = 0;
    for (const auto& [n, e]: points) {
        sxy += (std::log(n) - mx) * (std::log(e) - my);
        sxx += (std::log(n) - mx) * (std::log(n) - mx);
    }
    if (!(sxx > 0) || !(tolerance > 0)) return std::nullopt;
    const double slope = sxy / sxx;  // -b
    if (!(slope < 0)) return std::nullopt;
    const double log_n = mx + (std::log(tolerance) - my) / slope;
    const double n = std::exp(log_n);
    if (!(n <= beyond)) return std::nullopt;
    return std::max(2.0, n);
}

namespace {

/// Every estimator in `which` on `surrogates` data sets drawn at `scale` times the record's trials.
std::map<info_estimator, std::vector<double>> surrogate_values(const response_model& model,
                                                               const std::vector<std::size_t>& per_condition,
                                                               unsigned scale, unsigned surrogates,
                                                               const std::vector<info_estimator>& which,
                                                               const info_settings& settings) {
    std::vector<std::size_t> trials = per_condition;  // scale 0: the first model's, at the record's trials
    for (auto& n: trials) n *= std::max(1u, scale);
    std::map<info_estimator, std::vector<double>> values;
    for (unsigned k = 0; k < surrogates; ++k) {
        const labelled_responses data = model.draw(trials, derive_seed(settings.seed, {surrogate_draw_tag, scale, k}));
        info_settings own = settings;
        own.seed = derive_seed(settings.seed, {surrogate_split_tag, scale, k});
        for (info_estimator e: which) values[e].push_back(stimulus_information(data, e, own));
    }
    return values;
}

double mean_trials(const std::vector<std::size_t>& per_condition) {
    double sum = 0, live = 0;
    for (std::size_t n: per_condition) {
        if (n == 0) continue;
        sum += static_cast<double>(n);
        live += 1;
    }
    return live > 0 ? sum / live : 0;
}

std::string not_calibrated_because(const std::string& why) {
    return "not calibrated: " + why + "; a coarser code (the count code, or fewer or wider bins) would help; the envelope "
           "interval of the estimators is in the JSON and CSV";
}

}  // namespace

stiminfo_calibration calibrate_stiminfo(const labelled_responses& t, const std::map<info_estimator, double>& estimates,
                                        const info_settings& settings, const calibration_request& q) {
    if (q.surrogates < 2 || q.scaled_surrogates < 2 || estimates.empty()) throw internal_error("calibrate_stiminfo: request");
    stiminfo_calibration cal;
    cal.surrogates = q.surrogates;
    cal.smoothing = q.smoothing;
    std::vector<std::size_t> per_condition(t.conditions, 0);
    for (std::uint32_t c: t.condition) ++per_condition[c];
    cal.t_quantile = calibrated_interval_factor(q.surrogates);

    // Most trials' responses are their own (every estimator then sits near its ceiling whatever the
    // truth: all distinct, plug-in = H(S)), or much of the responses' mass lies on responses never
    // seen, in an alphabet far larger than the trials: a model over the responses seen leaves that
    // mass out, its data sets repeat responses more often than the record's, and the estimators'
    // errors measured on them come out too small (notes/methods-calibration.md, "When the model
    // cannot stand in for the record"). Such a record is declined before any surrogate is drawn.
    std::map<word_code, std::size_t> seen;
    for (word_code r: t.response) ++seen[r];
    const std::size_t distinct = seen.size();
    const double trials = static_cast<double>(t.response.size());
    cal.unseen_mass = static_cast<double>(std::count_if(seen.begin(), seen.end(), [](const auto& r) { return r.second == 1; })) / trials;
    const std::string measured_on = ", and the estimators' errors cannot be measured on a model fitted to the responses seen";
    std::string why;
    if (2 * distinct > t.response.size()) {
        why = std::to_string(distinct) + " of the " + std::to_string(t.response.size()) +
              " trials' responses are distinct (more than half), so the estimators sit near their ceiling whatever the "
              "truth" + measured_on;
    } else if (cal.unseen_mass > max_unseen_mass && t.alphabet > alphabet_per_trial * trials) {
        why = "about " + format_fixed(100 * cal.unseen_mass, 0) + "% of the responses' probability lies on responses never "
              "seen (the share of trials whose response occurs once), in an alphabet of " + format_number(t.alphabet) +
              " responses for " + std::to_string(t.response.size()) + " trials" + measured_on;
    }
    if (!why.empty()) {
        cal.not_calibrated = true;
        cal.uncertain = true;
        cal.value = cal.error = cal.first_model_bits = cal.first_plugin_bias = cal.model_bits = NAN;
        cal.interval = {NAN, NAN};
        cal.tolerance = q.floor_bits;
        cal.reason = not_calibrated_because(why);
        return cal;
    }

    response_model model(t, q.smoothing);
    cal.first_model_bits = model.information();
    if (q.smoothing == response_smoothing::variance_matched) {
        // The shape of the model is right but its size is not (the factor matches a divergence, not
        // the information, and errs both ways: notes/methods-calibration.md). Its size is set to the
        // plug-in information less the plug-in's bias at this first model, measured on surrogates
        // (a bootstrap bias correction: Efron & Tibshirani 1993, ch. 10), so that data drawn from the
        // model show the record's plug-in information on average.
        const auto plugin = surrogate_values(model, per_condition, 0, q.surrogates, {info_estimator::plugin}, settings);
        cal.first_plugin_bias = mean_of(plugin.at(info_estimator::plugin)) - cal.first_model_bits;
        model = model.matched_to(stimulus_information(t, info_estimator::plugin, settings) - cal.first_plugin_bias);
    }
    cal.shrinkage = model.shrinkage();
    cal.model_bits = model.information();
    std::vector<info_estimator> which;
    for (const auto& [e, v]: estimates) which.push_back(e);

    const auto values = surrogate_values(model, per_condition, 1, q.surrogates, which, settings);
    double best = INFINITY, best_unlike = INFINITY;
    info_estimator closest_unlike = which.front();
    for (info_estimator e: which) {
        estimator_calibration c;
        c.estimate = estimates.at(e);
        c.bias = mean_of(values.at(e)) - cal.model_bits;
        c.spread = sd_of(values.at(e));
        c.rmse = std::hypot(c.bias, c.spread);
        c.error = calibrated_error(c.bias, c.spread, q.surrogates);
        cal.by_estimator[e] = c;
        // A posterior predictive check (Gelman, Carlin, Stern & Rubin 2004, Bayesian Data Analysis,
        // ch. 6; from memory): the record's value should look like one more of the surrogates'.
        const double gap = std::abs(c.estimate - (cal.model_bits + c.bias));
        const double allowed = model_check_spreads * c.spread * std::sqrt(1 + 1.0 / q.surrogates) + q.floor_bits;
        if (gap > allowed) {
            cal.unlike_model.push_back(e);
            if (gap / allowed < best_unlike) best_unlike = gap / allowed, closest_unlike = e;
            continue;
        }
        if (c.rmse < best) {  // ties keep the earlier estimator of all_info_estimators' order
            best = c.rmse;
            cal.recommended = e;
        }
    }
    const double base = mean_trials(per_condition);
    if (cal.unlike_model.size() == which.size()) {
        // No calibrated value, interval or trials needed; the closest estimator's measurements stay.
        const estimator_calibration& closest = cal.by_estimator.at(closest_unlike);
        cal.not_calibrated = true;
        cal.uncertain = true;
        cal.recommended = closest_unlike;
        cal.value = NAN;
        cal.error = closest.error;
        cal.interval = {NAN, NAN};
        cal.tolerance = q.floor_bits;
        cal.by_size.push_back({1, base, q.surrogates, closest.bias, closest.spread, closest.error});
        cal.reason = not_calibrated_because(
            "the record is unlike data drawn from the model fitted to it (every estimator's value lies beyond " +
            format_number(model_check_spreads) + " spreads of its values on the model's data sets; " +
            info_estimator_name(closest_unlike) + ": " + format_fixed(closest.estimate, 3) + " bits against " +
            format_fixed(cal.model_bits + closest.bias, 3) + " +- " + format_fixed(closest.spread, 3) +
            "), so its estimators cannot be judged at this sample size");
        return cal;
    }
    const estimator_calibration& chosen = cal.by_estimator.at(cal.recommended);
    cal.value = chosen.estimate - chosen.bias;
    cal.error = chosen.error;
    cal.interval = {cal.value - cal.t_quantile * cal.error, cal.value + cal.t_quantile * cal.error};
    cal.tolerance = std::max(q.relative_tolerance * std::abs(cal.value), q.floor_bits);
    cal.uncertain = cal.error > cal.tolerance;

    cal.by_size.push_back({1, base, q.surrogates, chosen.bias, chosen.spread, chosen.error});
    std::vector<std::pair<double, double>> points{{base, chosen.error}};
    for (unsigned scale: {2u, 4u}) {
        const auto scaled = surrogate_values(model, per_condition, scale, q.scaled_surrogates, {cal.recommended}, settings);
        const std::vector<double>& v = scaled.at(cal.recommended);
        error_at_size at{static_cast<double>(scale), base * scale, q.scaled_surrogates, 0, 0, 0};
        at.bias = mean_of(v) - cal.model_bits;
        at.spread = sd_of(v);
        at.error = calibrated_error(at.bias, at.spread, q.scaled_surrogates);
        cal.by_size.push_back(at);
        if (at.error > 0) points.emplace_back(at.trials_per_condition, at.error);
    }
    if (chosen.error > 0 && points.size() == 3) {
        cal.trials_per_condition_needed = trials_needed(points, cal.tolerance, 4 * base);
    } else if (chosen.error <= cal.tolerance) {
        cal.trials_per_condition_needed = base;  // no spread at all: the record's trials suffice
    }
    return cal;
}

}  // namespace rastrum
