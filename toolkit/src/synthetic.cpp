#include <rastrum/binning.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/random.hpp>
#include <rastrum/synthetic.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numeric>

namespace rastrum {

double binary_entropy(double p) {
    if (p <= 0 || p >= 1) return 0;
    return -p * std::log2(p) - (1 - p) * std::log2(1 - p);
}

namespace {

std::uint64_t poisson_draw(double mean, random_stream& rng) {
    // Inversion by sequential search: exact, and fast for the small means used here.
    if (mean <= 0) return 0;
    if (mean > 500) throw internal_error("Poisson means above 500 spikes are refused by check_spec");
    double p = std::exp(-mean), cumulative = p;
    const double u = rng.uniform();
    std::uint64_t k = 0;
    while (u > cumulative && p > 0) {
        ++k;
        p *= mean / static_cast<double>(k);
        cumulative += p;
    }
    return k;
}

/// The value for `unit` of a list that holds one value for all units or one per unit (check_spec).
double per_unit(const std::vector<double>& values, std::size_t unit) { return values.size() == 1 ? values[0] : values[unit]; }

std::string unit_name(std::size_t u) { return "u" + std::to_string(u + 1); }

/// Lays out trials and adds background spikes in the gaps between them (never inside a trial).
void lay_out_session(recording& rec, const session_shape& s, std::size_t n_trials, random_stream& rng) {
    rec.trial_start.resize(n_trials);
    rec.trial_stop.resize(n_trials);
    for (std::size_t k = 0; k < n_trials; ++k) {
        rec.trial_start[k] = s.gap + static_cast<double>(k) * (s.duration + s.gap);
        rec.trial_stop[k] = rec.trial_start[k] + s.duration;
    }
    if (s.background_hz <= 0 || s.gap <= 0) return;
    for (auto& u: rec.units) {
        for (std::size_t k = 0; k <= n_trials; ++k) {
            const seconds gap_start = k == 0 ? 0.0 : rec.trial_stop[k - 1];
            for (double t = gap_start + rng.exponential() / s.background_hz; t < gap_start + s.gap;
                 t += rng.exponential() / s.background_hz) {
                u.spike_times.push_back(t);
            }
        }
    }
}

/// A recording with `units` units named u1, u2, ... and the session laid out.
synthetic_recording start_recording(const char* kind, const session_shape& session, std::size_t units,
                                    std::size_t n_trials, random_stream& rng) {
    synthetic_recording out;
    out.kind = kind;
    out.rec.units.resize(units);
    for (std::size_t u = 0; u < units; ++u) out.rec.units[u].id = unit_name(u);
    lay_out_session(out.rec, session, n_trials, rng);
    return out;
}

/// Unit u is complete: its times sorted (as finish() would sort them) and handed to `ready`.
void unit_done(recording& rec, std::size_t u, const unit_ready& ready) {
    auto& times = rec.units[u].spike_times;
    std::sort(times.begin(), times.end());
    if (ready) ready(rec, u);
}

void finish(recording& rec) {
    for (auto& u: rec.units) std::sort(u.spike_times.begin(), u.spike_times.end());
    validate(rec);
}

/// Binary letters whose spike probability is p_t in bin t, times (1 - refractory) right after a
/// spike: a first-order Markov chain along each trial, the same on every trial.
struct binary_chain {
    std::vector<double> p;  // spike probability after no spike
    double refractory = 0;
    std::vector<double> q;  // probability of a spike in bin t across trials

    binary_chain(std::vector<double> p_, double refractory_): p(std::move(p_)), refractory(refractory_), q(p.size()) {
        double previous = 0;  // no spike before the trial starts
        for (std::size_t t = 0; t < p.size(); ++t) {
            q[t] = previous * after_spike(t) + (1 - previous) * p[t];
            previous = q[t];
        }
    }
    double after_spike(std::size_t t) const { return p[t] * (1 - refractory); }
    /// Entropy of letter t given letter t-1, averaged over trials.
    double conditional_entropy(std::size_t t) const {
        if (t == 0) return binary_entropy(q[0]);
        return q[t - 1] * binary_entropy(after_spike(t)) + (1 - q[t - 1]) * binary_entropy(p[t]);
    }
};

/// Entropy (bits) of the words of L letters at position t across trials, averaged over positions
/// (the chain rule along a Markov chain: H(X_t) + sum of H(X_j | X_j-1)).
double chain_noise_word_entropy(const binary_chain& c, int L) {
    const std::size_t positions = c.p.size() - static_cast<std::size_t>(L) + 1;
    double h = 0;
    for (std::size_t t = 0; t < positions; ++t) {
        h += binary_entropy(c.q[t]);
        for (int j = 1; j < L; ++j) h += c.conditional_entropy(t + static_cast<std::size_t>(j));
    }
    return h / static_cast<double>(positions);
}

/// Entropy (bits) of the words of L letters pooled over start positions: the mixture over t of
/// the chain's word distributions at t, enumerated word by word.
double chain_pooled_word_entropy(const binary_chain& c, int L) {
    const std::size_t positions = c.p.size() - static_cast<std::size_t>(L) + 1;
    const std::size_t words = std::size_t{1} << L;
    std::vector<double> prob(words, 0.0), one(words);
    std::vector<bool> ends_in_spike(words);
    for (std::size_t t = 0; t < positions; ++t) {
        // Grow words letter by letter; word w's last letter is its lowest bit.
        one[0] = 1 - c.q[t];
        one[1] = c.q[t];
        std::size_t filled = 2;
        for (int j = 1; j < L; ++j) {
            const std::size_t bin = t + static_cast<std::size_t>(j);
            for (std::size_t w = filled; w-- > 0;) {
                const double fire = (w & 1) ? c.after_spike(bin) : c.p[bin];
                one[2 * w + 1] = one[w] * fire;
                one[2 * w] = one[w] * (1 - fire);
            }
            filled *= 2;
        }
        for (std::size_t w = 0; w < words; ++w) prob[w] += one[w];
    }
    double h = 0;
    for (double x: prob) {
        const double q = x / static_cast<double>(positions);
        if (q > 0) h -= q * std::log2(q);
    }
    return h;
}

/// The entropy rate of the pooled letters: over start positions the next letter depends on the
/// trial's past only through the previous letter (p_t is drawn independently of earlier bins), so
/// the pooled process is the Markov chain with the average transition probabilities.
double chain_pooled_entropy_rate(const binary_chain& c) {
    double spikes = 0, silences = 0, fire_after_spike = 0, fire_after_silence = 0;
    for (std::size_t t = 1; t < c.p.size(); ++t) {
        spikes += c.q[t - 1];
        silences += 1 - c.q[t - 1];
        fire_after_spike += c.q[t - 1] * c.after_spike(t);
        fire_after_silence += (1 - c.q[t - 1]) * c.p[t];
    }
    const double n = spikes + silences;
    return (spikes > 0 ? spikes / n * binary_entropy(fire_after_spike / spikes) : 0.0) +
           (silences > 0 ? silences / n * binary_entropy(fire_after_silence / silences) : 0.0);
}

double poisson_entropy_bits(double mean, std::vector<double>* pmf_out, std::size_t n) {
    std::vector<double> pmf(n, 0.0);
    double p = std::exp(-mean);
    double h = 0;
    for (std::size_t k = 0; k < n; ++k) {
        if (k > 0) p *= mean / static_cast<double>(k);
        pmf[k] = p;
        if (p > 0) h -= p * std::log2(p);
    }
    if (pmf_out) *pmf_out = std::move(pmf);
    return h;
}

}  // namespace

synthetic_recording make_frozen_bins(const frozen_bins_spec& spec, const unit_ready& ready) {
    check_spec(spec);
    random_stream rng(derive_seed(spec.seed, {1}));
    const seconds dt = spec.bin_ms / 1000.0;
    const std::size_t bins = whole_bins(spec.session.duration, dt);
    const std::size_t n_trials = spec.session.trials;
    synthetic_recording out = start_recording("frozen-bins", spec.session, spec.rates_hz.size(), n_trials, rng);

    for (std::size_t u = 0; u < spec.rates_hz.size(); ++u) {
        const double mean_p = spec.rates_hz[u] * dt;
        const double m = per_unit(spec.modulations, u);
        std::vector<double> p(bins);
        // Gamma-distributed gain with mean 1 and coefficient of variation m (shape 1/m^2).
        for (auto& x: p) x = m > 0 ? std::min(1.0, mean_p * m * m * std::exp(log_gamma_variate(1 / (m * m), rng))) : mean_p;
        const binary_chain chain(p, spec.refractory);
        auto& spikes = out.rec.units[u].spike_times;
        for (std::size_t k = 0; k < n_trials; ++k) {
            bool fired = false;
            for (std::size_t b = 0; b < bins; ++b) {
                fired = rng.uniform() < (fired ? chain.after_spike(b) : p[b]);
                if (fired) {
                    // Keep the spike clear of the bin edges so rounding cannot move it to a neighbour.
                    const double within = 0.05 + 0.9 * rng.uniform();
                    spikes.push_back(out.rec.trial_start[k] + (static_cast<double>(b) + within) * dt);
                }
            }
        }
        unit_truth truth;
        truth.unit = out.rec.units[u].id;
        double noise = 0, mean_q = 0;
        for (std::size_t t = 1; t < bins; ++t) noise += chain.conditional_entropy(t);
        noise /= static_cast<double>(bins - 1);
        for (double x: chain.q) mean_q += x;
        mean_q /= static_cast<double>(bins);
        const double total = chain_pooled_entropy_rate(chain);
        truth.values["bin_ms"] = spec.bin_ms;
        truth.values["mean_rate_hz"] = mean_q / dt;
        truth.values["total_entropy_rate_bits_per_s"] = total / dt;
        truth.values["noise_entropy_rate_bits_per_s"] = noise / dt;
        truth.values["info_rate_bits_per_s"] = (total - noise) / dt;
        truth.values["bits_per_spike"] = (total - noise) / mean_q;
        for (int L = 1; L <= 8 && static_cast<std::size_t>(L) < bins; ++L) {
            const double total_L = chain_pooled_word_entropy(chain, L);
            const double noise_L = chain_noise_word_entropy(chain, L);
            truth.by_letters["total_entropy_bits"].push_back(total_L);
            truth.by_letters["noise_entropy_bits"].push_back(noise_L);
            truth.by_letters["info_bits"].push_back(total_L - noise_L);
        }
        out.truth.push_back(std::move(truth));
        unit_done(out.rec, u, ready);
    }
    finish(out.rec);
    return out;
}

double single_spike_information(const std::vector<double>& rate) {
    if (rate.empty()) return 0;
    const double mean = std::accumulate(rate.begin(), rate.end(), 0.0) / static_cast<double>(rate.size());
    if (!(mean > 0)) return 0;
    double sum = 0;
    for (double r: rate) {
        if (r > 0) sum += (r / mean) * std::log2(r / mean);
    }
    return sum / static_cast<double>(rate.size());
}

synthetic_recording make_poisson(const poisson_spec& spec, const unit_ready& ready) {
    check_spec(spec);
    random_stream rng(derive_seed(spec.seed, {2}));
    const seconds step = spec.resolution_ms / 1000.0;
    const std::size_t steps = whole_bins(spec.session.duration, step);
    const std::size_t n_trials = spec.session.trials;
    synthetic_recording out = start_recording("poisson", spec.session, spec.rates_hz.size(), n_trials, rng);

    const double a = std::exp(-spec.resolution_ms / spec.correlation_ms);
    for (std::size_t u = 0; u < spec.rates_hz.size(); ++u) {
        const double m = per_unit(spec.modulations, u);
        std::vector<double> rate(steps);
        double g = gaussian(rng);
        for (auto& r: rate) {
            r = std::max(0.0, spec.rates_hz[u] * (1 + m * g));
            g = a * g + std::sqrt(1 - a * a) * gaussian(rng);
        }
        // Time rescaling: unit-rate exponential gaps in cumulative intensity, mapped back to time.
        auto& spikes = out.rec.units[u].spike_times;
        for (std::size_t k = 0; k < n_trials; ++k) {
            double next = rng.exponential();
            double cumulative = 0;
            for (std::size_t i = 0; i < steps; ++i) {
                const double mass = rate[i] * step;
                while (next < cumulative + mass) {
                    const double within = (next - cumulative) / mass;
                    spikes.push_back(out.rec.trial_start[k] + (static_cast<double>(i) + within) * step);
                    next += rng.exponential();
                }
                cumulative += mass;
            }
        }
        unit_truth truth;
        truth.unit = out.rec.units[u].id;
        const double mean = std::accumulate(rate.begin(), rate.end(), 0.0) / static_cast<double>(steps);
        const double one_spike = single_spike_information(rate);
        truth.values["mean_rate_hz"] = mean;
        truth.values["single_spike_info_bits"] = one_spike;
        truth.values["single_spike_info_rate_bits_per_s"] = mean * one_spike;
        // Exact single-letter information at a few bin widths: the pooled count distribution over
        // bins against the Poisson count distribution of each bin.
        for (double bin_ms: {0.5, 1.0, 2.0, 4.0}) {
            const auto per_bin = static_cast<std::size_t>(std::llround(bin_ms / spec.resolution_ms));
            if (per_bin == 0 || std::abs(static_cast<double>(per_bin) * spec.resolution_ms - bin_ms) > 1e-9) continue;
            const std::size_t bins = steps / per_bin;
            const std::size_t n = 40;
            std::vector<double> pooled(n, 0.0), pmf;
            double noise = 0;
            for (std::size_t b = 0; b < bins; ++b) {
                double lambda = 0;
                for (std::size_t i = b * per_bin; i < (b + 1) * per_bin; ++i) lambda += rate[i] * step;
                noise += poisson_entropy_bits(lambda, &pmf, n);
                for (std::size_t c = 0; c < n; ++c) pooled[c] += pmf[c];
            }
            double total = 0;
            for (double x: pooled) {
                const double q = x / static_cast<double>(bins);
                if (q > 0) total -= q * std::log2(q);
            }
            noise /= static_cast<double>(bins);
            char key[64];
            std::snprintf(key, sizeof key, "letter_info_bits_at_%gms", bin_ms);
            truth.values[key] = total - noise;
            std::snprintf(key, sizeof key, "letter_info_rate_bits_per_s_at_%gms", bin_ms);
            truth.values[key] = (total - noise) / (bin_ms / 1000);
        }
        out.truth.push_back(std::move(truth));
        unit_done(out.rec, u, ready);
    }
    finish(out.rec);
    return out;
}

double poisson_count_information(const std::vector<double>& means) {
    if (means.empty()) return 0;
    const double largest = *std::max_element(means.begin(), means.end());
    const auto n = static_cast<std::size_t>(largest + 20 * std::sqrt(largest) + 40);
    std::vector<double> pooled(n, 0.0), pmf;
    double noise = 0;
    for (double mu: means) {
        noise += poisson_entropy_bits(mu, &pmf, n);
        for (std::size_t c = 0; c < n; ++c) pooled[c] += pmf[c];
    }
    const double k = static_cast<double>(means.size());
    double total = 0;
    for (double x: pooled) {
        const double q = x / k;
        if (q > 0) total -= q * std::log2(q);
    }
    return total - noise / k;
}

synthetic_recording make_conditions(const conditions_spec& spec, const unit_ready& ready) {
    check_spec(spec);
    random_stream rng(derive_seed(spec.seed, {3}));
    std::vector<std::size_t> condition;
    for (std::size_t c = 0; c < spec.labels.size(); ++c) {
        for (std::size_t i = 0; i < spec.trials_per_condition; ++i) condition.push_back(c);
    }
    shuffle(condition, rng);
    synthetic_recording out = start_recording("conditions", spec.session, spec.means.size(), condition.size(), rng);
    for (std::size_t c: condition) out.rec.stimulus.push_back(spec.labels[c]);
    for (std::size_t u = 0; u < spec.means.size(); ++u) {
        auto& spikes = out.rec.units[u].spike_times;
        for (std::size_t k = 0; k < condition.size(); ++k) {
            const std::uint64_t n = poisson_draw(spec.means[u][condition[k]], rng);
            for (std::uint64_t i = 0; i < n; ++i) {
                spikes.push_back(out.rec.trial_start[k] + rng.uniform() * spec.session.duration);
            }
        }
        unit_truth truth;
        truth.unit = out.rec.units[u].id;
        truth.values["count_info_bits"] = poisson_count_information(spec.means[u]);
        truth.values["stimulus_entropy_bits"] = std::log2(static_cast<double>(spec.labels.size()));
        out.truth.push_back(std::move(truth));
        unit_done(out.rec, u, ready);
    }
    finish(out.rec);
    return out;
}

}  // namespace rastrum
