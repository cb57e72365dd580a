#include "log_gamma.hpp"
#include "ranked_trials.hpp"

#include <rastrum/code_counting.hpp>
#include <rastrum/entropy.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/extrapolation.hpp>
#include <rastrum/nsb.hpp>
#include <rastrum/random.hpp>
#include <rastrum/stimulus_information.hpp>

#include <algorithm>
#include <cmath>
#include <memory>
#include <numeric>

namespace rastrum {

const char* info_estimator_name(info_estimator e) {
    switch (e) {
    case info_estimator::plugin: return "plug-in";
    case info_estimator::miller_madow: return "miller-madow";
    case info_estimator::jackknife: return "jackknife";
    case info_estimator::panzeri_treves: return "panzeri-treves";
    case info_estimator::quadratic_extrapolation: return "quadratic-extrapolation";
    case info_estimator::nsb: return "nsb";
    }
    throw internal_error("unknown information estimator");
}

info_estimator parse_info_estimator(const std::string& name) {
    for (info_estimator e: all_info_estimators) {
        if (name == info_estimator_name(e)) return e;
    }
    throw usage_error("unknown estimator '" + name +
                      "': choose plug-in, miller-madow, jackknife, panzeri-treves, quadratic-extrapolation or nsb");
}

namespace {

/// Response histograms: pooled, and per condition, over the trials in `use` (all when empty).
struct histograms {
    std::vector<count> pooled;
    std::vector<std::vector<count>> by_condition;
    std::vector<count> trials_in;  // per condition
    count trials = 0;
};

/// The alphabet as a bound on the codes, for counts_of_codes (0 when it is too large to matter).
word_code code_space(double alphabet) {
    return alphabet >= 1 && alphabet < 9.0e15 ? static_cast<word_code>(std::ceil(alphabet)) : 0;
}

histograms histograms_of(const labelled_responses& t, const std::vector<std::size_t>& use) {
    histograms h;
    std::vector<word_code> pooled;
    std::vector<std::vector<word_code>> per(t.conditions);
    auto take = [&](std::size_t k) {
        pooled.push_back(t.response[k]);
        per[t.condition[k]].push_back(t.response[k]);
    };
    if (use.empty()) {
        for (std::size_t k = 0; k < t.response.size(); ++k) take(k);
    } else {
        for (std::size_t k: use) take(k);
    }
    h.trials = pooled.size();
    const word_code space = code_space(t.alphabet);
    h.pooled = counts_of_codes(pooled, space);
    for (auto& codes: per) {
        h.trials_in.push_back(codes.size());
        h.by_condition.push_back(counts_of_codes(codes, space));
    }
    return h;
}

/// I = H(R) - sum_s p(s) H(R|s) with p(s) = N_s / N and each entropy by `entropy`.
template <typename Entropy>
double information_with(const histograms& h, Entropy entropy) {
    if (h.trials == 0) return 0;
    double noise = 0;
    for (std::size_t s = 0; s < h.by_condition.size(); ++s) {
        if (h.trials_in[s] == 0) continue;
        noise += static_cast<double>(h.trials_in[s]) / static_cast<double>(h.trials) * entropy(h.by_condition[s]);
    }
    return entropy(h.pooled) - noise;
}

double plugin_of(const std::vector<count>& c) { return plugin_entropy(summarize_counts(c)); }

double plugin_information(const histograms& h) { return information_with(h, plugin_of); }

// Leave-one-trial-out: removing a trial with response r in condition s changes H(R) in one bin,
// H(R|s) in one bin and every weight N_s' / N; trials in the same (s, r) cell give the same value.
// Cells are visited by condition, then in increasing order of response (rank order is code order).
double jackknife_information(const labelled_responses& t) {
    const double n = static_cast<double>(t.response.size());
    detail::ranked_trials ranked(t.condition, t.conditions, t.response);
    if (n < 2) return ranked.plugin_information();
    const std::size_t distinct = ranked.distinct();
    std::vector<std::uint32_t> pooled(distinct, 0), per(t.conditions * distinct, 0);
    std::vector<count> in_condition(t.conditions, 0);
    for (std::size_t k = 0; k < t.response.size(); ++k) {
        const std::uint32_t r = ranked.rank()[k];
        ++pooled[r];
        ++per[t.condition[k] * distinct + r];
        ++in_condition[t.condition[k]];
    }
    std::vector<std::uint32_t> scratch = pooled;
    const count_summary all = detail::ranked_trials::summary_clearing(scratch.data(), distinct);
    std::vector<count_summary> cond;
    std::vector<double> h_cond;
    for (std::size_t s = 0; s < t.conditions; ++s) {
        scratch.assign(per.begin() + static_cast<std::ptrdiff_t>(s * distinct),
                       per.begin() + static_cast<std::ptrdiff_t>((s + 1) * distinct));
        cond.push_back(detail::ranked_trials::summary_clearing(scratch.data(), distinct));
        h_cond.push_back(plugin_entropy(cond.back()));
    }
    // Entropy of a histogram with one sample less in a bin that held c samples.
    auto without_one = [](const count_summary& s, count c) {
        const double m = static_cast<double>(s.samples) - 1;
        if (m <= 0) return 0.0;
        return std::log2(m) - (s.sum_n_log2_n - n_log2_n(c) + n_log2_n(c - 1)) / m;
    };
    double weighted_noise = 0;  // sum_s N_s H(R|s)
    for (std::size_t s = 0; s < t.conditions; ++s) weighted_noise += static_cast<double>(in_condition[s]) * h_cond[s];
    double sum_left_out = 0;
    for (std::size_t s = 0; s < t.conditions; ++s) {
        for (std::size_t r = 0; r < distinct; ++r) {
            const count c = per[s * distinct + r];
            if (c == 0) continue;
            const double h_total = without_one(all, pooled[r]);
            const double h_s = without_one(cond[s], c);
            const double noise = (weighted_noise - static_cast<double>(in_condition[s]) * h_cond[s] +
                                  (static_cast<double>(in_condition[s]) - 1) * h_s) / (n - 1);
            sum_left_out += static_cast<double>(c) * (h_total - noise);
        }
    }
    return n * ranked.plugin_information() - (n - 1) * sum_left_out / n;
}

double extrapolated_information(const labelled_responses& t, const info_settings& settings) {
    detail::ranked_trials ranked(t.condition, t.conditions, t.response);
    return extrapolate_over_trials(
        t.condition, t.conditions, [&](const std::vector<std::size_t>& use) { return ranked.plugin_information(use); },
        settings);
}

double extrapolated_entropy(const std::vector<word_code>& responses, const info_settings& settings) {
    // Blocks of a shuffled order of the trials; shuffling indices permutes them as it would the codes.
    detail::ranked_trials ranked(std::vector<std::uint32_t>(responses.size(), 0), 1, responses);
    const double n = static_cast<double>(responses.size());
    std::vector<std::uint32_t> order(responses.size());
    for (std::size_t k = 0; k < order.size(); ++k) order[k] = static_cast<std::uint32_t>(k);
    std::vector<double> x{1 / n}, y{ranked.plugin_entropy_of(order, 0, order.size())}, w{1};
    for (unsigned split = 0; split < settings.splits; ++split) {
        random_stream rng(derive_seed(settings.seed, {0xe47ULL, split}));
        shuffle(order, rng);
        for (int level = 1; level <= 2; ++level) {
            const int blocks = 1 << level;
            for (int b = 0; b < blocks; ++b) {
                const std::size_t from = order.size() * static_cast<std::size_t>(b) / static_cast<std::size_t>(blocks);
                const std::size_t to = order.size() * static_cast<std::size_t>(b + 1) / static_cast<std::size_t>(blocks);
                if (to <= from) continue;
                x.push_back(1 / static_cast<double>(to - from));
                y.push_back(ranked.plugin_entropy_of(order, from, to));
                w.push_back(1.0 / (blocks * settings.splits));
            }
        }
    }
    return fit_inverse_size(x, y, w).at_infinity;
}

}  // namespace

namespace {
/// The halves and quarters of one call of extrapolate_over_trials, in the order they are fitted.
struct stratified_subset {
    std::vector<std::size_t> use;  // trial indices, increasing
    double weight;
};

// Stratified random subsets: each condition's trials in random order, cut into quarters; halves are
// pairs of quarters.
std::vector<stratified_subset> draw_stratified_subsets(const std::vector<std::uint32_t>& condition, std::size_t conditions,
                                                       const info_settings& settings) {
    std::vector<std::vector<std::size_t>> members(conditions);
    for (std::size_t k = 0; k < condition.size(); ++k) members[condition[k]].push_back(k);
    std::vector<stratified_subset> out;
    for (unsigned split = 0; split < settings.splits; ++split) {
        random_stream rng(derive_seed(settings.seed, {0x9e0ULL, split}));
        std::vector<std::vector<std::size_t>> quarter(4);
        for (auto m: members) {
            shuffle(m, rng);
            for (std::size_t i = 0; i < m.size(); ++i) quarter[i * 4 / m.size()].push_back(m[i]);
        }
        for (int level = 1; level <= 2; ++level) {
            const int blocks = 1 << level;
            for (int b = 0; b < blocks; ++b) {
                std::vector<std::size_t> use;
                for (int q = b * 4 / blocks; q < (b + 1) * 4 / blocks; ++q) {
                    use.insert(use.end(), quarter[static_cast<std::size_t>(q)].begin(),
                               quarter[static_cast<std::size_t>(q)].end());
                }
                if (use.empty()) continue;
                std::sort(use.begin(), use.end());
                out.push_back({std::move(use), 1.0 / (blocks * settings.splits)});
            }
        }
    }
    return out;
}

/// The subsets depend only on the conditions of the trials, the seed and the number of splits, and a
/// record asks for the same ones many times (every estimate, every bootstrap resample of a
/// population keeps the conditions in place): the last draw of each thread is kept.
std::shared_ptr<const std::vector<stratified_subset>> stratified_subsets(const std::vector<std::uint32_t>& condition, std::size_t conditions,
                                                         const info_settings& settings) {
    struct drawn {
        std::vector<std::uint32_t> condition;
        std::size_t conditions = 0;
        info_settings settings;
        std::shared_ptr<const std::vector<stratified_subset>> subsets;
    };
    thread_local drawn last;
    if (!last.subsets || last.conditions != conditions || last.settings.seed != settings.seed ||
        last.settings.splits != settings.splits || last.condition != condition) {
        last.subsets = std::make_shared<const std::vector<stratified_subset>>(draw_stratified_subsets(condition, conditions, settings));
        last.condition = condition;
        last.conditions = conditions;
        last.settings = settings;
    }
    return last.subsets;
}
}  // namespace

double extrapolate_over_trials(const std::vector<std::uint32_t>& condition, std::size_t conditions,
                               const std::function<double(const std::vector<std::size_t>&)>& value,
                               const info_settings& settings) {
    std::vector<double> x{1 / static_cast<double>(condition.size())}, y{value({})}, w{1};
    // Held here: `value` may itself extrapolate (and redraw the thread's subsets).
    const auto subsets = stratified_subsets(condition, conditions, settings);
    for (const auto& subset: *subsets) {
        x.push_back(1 / static_cast<double>(subset.use.size()));
        y.push_back(value(subset.use));
        w.push_back(subset.weight);
    }
    return fit_inverse_size(x, y, w).at_infinity;
}

double response_entropy(const std::vector<word_code>& responses, double alphabet, info_estimator estimator,
                        const info_settings& settings) {
    if (responses.empty()) return 0;
    // Extrapolation ranks the responses itself: no histogram of the whole set is needed.
    if (estimator == info_estimator::quadratic_extrapolation) return extrapolated_entropy(responses, settings);
    const std::vector<count> c = counts_of_codes(responses);
    const count_summary s = summarize_counts(c);
    switch (estimator) {
    case info_estimator::plugin: return plugin_entropy(s);
    case info_estimator::miller_madow: return miller_madow_entropy(s);
    case info_estimator::jackknife: return jackknife_entropy(s);
    case info_estimator::panzeri_treves:
        return plugin_entropy(s) + (relevant_responses(c, alphabet) - 1) / (2 * static_cast<double>(s.samples) * std::log(2.0));
    case info_estimator::quadratic_extrapolation: return extrapolated_entropy(responses, settings);
    case info_estimator::nsb: return nsb_entropy_mean(c, alphabet);
    }
    throw internal_error("unknown information estimator");
}

double conditional_response_entropy(const labelled_responses& trials, info_estimator estimator,
                                    const info_settings& settings) {
    return response_entropy(trials.response, trials.alphabet, estimator, settings) -
           stimulus_information(trials, estimator, settings);
}

double panzeri_treves_bias(const std::vector<double>& relevant_per_condition, double relevant_pooled, double trials) {
    double sum = 0;
    for (double r: relevant_per_condition) sum += r - 1;
    return (sum - (relevant_pooled - 1)) / (2 * trials * std::log(2.0));
}

namespace {
/// The grid of beta that relevant_responses searches (ln beta from -14 to 7 in steps of 0.05, the
/// steps added as they always were) and, per thread, lnGamma(c + beta) - lnGamma(beta) for the counts
/// c met so far.
class relevant_grid {
public:
    relevant_grid() {
        for (double log_beta = -14; log_beta <= 7; log_beta += 0.05) beta.push_back(std::exp(log_beta));
        by_count_.resize(beta.size());
    }
    double rising(std::size_t i, count c) const {
        std::vector<double>& row = by_count_[i];
        if (c >= row.size()) {
            if (c > 4096) return log_gamma(static_cast<double>(c) + beta[i]) - log_gamma(beta[i]);
            const std::size_t from = row.size();
            row.resize(static_cast<std::size_t>(c) + 1);
            for (std::size_t m = from; m <= c; ++m) row[m] = log_gamma(static_cast<double>(m) + beta[i]) - log_gamma(beta[i]);
        }
        return row[c];
    }
    std::vector<double> beta;

private:
    mutable std::vector<std::vector<double>> by_count_;
};

const relevant_grid& relevant_grid_table() {
    thread_local const relevant_grid grid;
    return grid;
}
}  // namespace

double relevant_responses(const std::vector<count>& counts, double alphabet) {
    // Observed values, plus the unseen ones a Dirichlet posterior would expect to show up in a
    // sample of the same size: sum over values of 1 - (1 - q)^N with q the posterior mean
    // (n + beta) / (N + K beta), beta chosen by maximum evidence (notes/methods.md).
    std::vector<count> seen;
    count n = 0;
    for (count c: counts) {
        if (c > 0) seen.push_back(c);
        n += c;
    }
    const double observed = static_cast<double>(seen.size());
    const double k = std::max(alphabet, observed);
    if (n == 0 || k <= observed) return observed;
    const double N = static_cast<double>(n);
    // The same grid of beta and the same counts recur in every histogram: lnGamma(c + beta) -
    // lnGamma(beta) is kept per grid point and count (the values, and so the sums, are unchanged).
    const auto& table = relevant_grid_table();
    auto log_evidence = [&](std::size_t i, double beta) {
        double e = log_gamma(k * beta) - log_gamma(N + k * beta);
        for (count c: seen) e += table.rising(i, c);
        return e;
    };
    double best_beta = 1e-6, best = -INFINITY;
    for (std::size_t i = 0; i < table.beta.size(); ++i) {
        const double beta = table.beta[i];
        const double e = log_evidence(i, beta);
        if (e > best) {
            best = e;
            best_beta = beta;
        }
    }
    double relevant = 0;
    const double total = N + k * best_beta;
    for (count c: seen) relevant += -std::expm1(N * std::log1p(-(static_cast<double>(c) + best_beta) / total));
    const double unseen = k - observed;
    relevant += unseen * -std::expm1(N * std::log1p(-best_beta / total));
    return std::min(k, std::max(observed, relevant));
}

double stimulus_information(const labelled_responses& t, info_estimator estimator, const info_settings& settings) {
    if (t.response.size() != t.condition.size()) throw internal_error("stimulus_information: ragged trials");
    for (std::uint32_t c: t.condition) {
        if (c >= t.conditions) throw internal_error("stimulus_information: condition index out of range");
    }
    switch (estimator) {
    case info_estimator::plugin: return plugin_information(histograms_of(t, {}));
    case info_estimator::miller_madow:
        return information_with(histograms_of(t, {}),
                                [](const std::vector<count>& c) { return miller_madow_entropy(summarize_counts(c)); });
    case info_estimator::jackknife: return jackknife_information(t);
    case info_estimator::panzeri_treves: {
        const histograms h = histograms_of(t, {});
        std::vector<double> per;
        for (std::size_t s = 0; s < h.by_condition.size(); ++s) {
            if (h.trials_in[s] > 0) per.push_back(relevant_responses(h.by_condition[s], t.alphabet));
        }
        return plugin_information(h) -
               panzeri_treves_bias(per, relevant_responses(h.pooled, t.alphabet), static_cast<double>(h.trials));
    }
    case info_estimator::quadratic_extrapolation: return extrapolated_information(t, settings);
    case info_estimator::nsb:
        return information_with(histograms_of(t, {}),
                                [&](const std::vector<count>& c) { return nsb_entropy_mean(c, t.alphabet); });
    }
    throw internal_error("unknown information estimator");
}

}  // namespace rastrum
