#include "ranked_trials.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/population.hpp>
#include <rastrum/random.hpp>

#include <algorithm>
#include <cmath>
#include <limits>

namespace rastrum {

labelled_responses joint_responses(const std::vector<labelled_responses>& units) {
    if (units.empty()) throw internal_error("joint_responses: no units");
    labelled_responses joint;
    joint.condition = units[0].condition;
    joint.conditions = units[0].conditions;
    joint.response.assign(joint.condition.size(), 0);
    double alphabet = 1;
    word_code limit = std::numeric_limits<word_code>::max();
    for (const auto& u: units) {
        const auto radix = static_cast<word_code>(u.alphabet);
        if (radix == 0 || limit / radix == 0 || alphabet * u.alphabet > 1.8e19) {
            throw insufficient_data("the joint responses of these units take more than 2^64 values; use a coarser code");
        }
        limit /= radix;
        for (std::size_t k = 0; k < joint.response.size(); ++k) joint.response[k] = joint.response[k] * radix + u.response[k];
        alphabet *= u.alphabet;
    }
    joint.alphabet = alphabet;
    return joint;
}

std::vector<labelled_responses> shuffled_within_conditions(const std::vector<labelled_responses>& units,
                                                           std::uint64_t seed) {
    std::vector<labelled_responses> out = units;
    std::vector<std::vector<std::size_t>> members(units[0].conditions);
    for (std::size_t k = 0; k < units[0].condition.size(); ++k) members[units[0].condition[k]].push_back(k);
    for (std::size_t u = 0; u < units.size(); ++u) {
        random_stream rng(derive_seed(seed, {0x5a11ULL, u}));
        for (const auto& m: members) {
            std::vector<word_code> values;
            for (std::size_t k: m) values.push_back(units[u].response[k]);
            shuffle(values, rng);
            for (std::size_t i = 0; i < m.size(); ++i) out[u].response[m[i]] = values[i];
        }
    }
    return out;
}

namespace {
/// The independent-units information of the same units over many subsets of their trials. Each unit's
/// responses are ranked once (rank order is code order); per subset, each unit's empirical P(r | s)
/// is a dense table over its ranks, reused from subset to subset.
class independent_units {
public:
    independent_units(const std::vector<labelled_responses>& units, std::size_t joint_limit):
        units_(units), conditions_(units[0].conditions), joint_limit_(joint_limit), p_(units.size()), seen_(units.size()) {
        for (const auto& u: units) {
            detail::ranked_trials ranked(u.condition, u.conditions, u.response);
            rank_.push_back(ranked.rank());
            distinct_.push_back(ranked.distinct());
        }
    }

    double information(const std::vector<std::size_t>& use);

private:
    void marginals(std::size_t u, const std::vector<std::size_t>& trials);
    const std::vector<labelled_responses>& units_;
    std::size_t conditions_;
    std::size_t joint_limit_;
    std::vector<std::vector<std::uint32_t>> rank_;
    std::vector<std::size_t> distinct_;
    std::vector<std::vector<double>> p_;                            // per unit: conditions x distinct, P(r | s)
    std::vector<std::vector<std::vector<std::uint32_t>>> seen_;     // per unit and condition: ranks seen, increasing
};

void independent_units::marginals(std::size_t u, const std::vector<std::size_t>& trials) {
    const std::size_t size = distinct_[u];
    std::vector<double>& p = p_[u];
    p.assign(conditions_ * size, 0);
    for (std::size_t k: trials) p[units_[u].condition[k] * size + rank_[u][k]] += 1;
    seen_[u].resize(conditions_);
    for (std::size_t s = 0; s < conditions_; ++s) {
        // Counts are whole numbers, so the total and each quotient do not depend on the order of summing.
        double total = 0;
        for (std::size_t i = 0; i < size; ++i) total += p[s * size + i];
        seen_[u][s].clear();
        for (std::size_t i = 0; i < size; ++i) {
            if (p[s * size + i] == 0) continue;
            p[s * size + i] /= total;
            seen_[u][s].push_back(static_cast<std::uint32_t>(i));
        }
    }
}

double independent_units::information(const std::vector<std::size_t>& use) {
    const std::size_t conditions = conditions_;
    std::vector<std::size_t> trials = use;
    if (trials.empty()) {
        for (std::size_t k = 0; k < units_[0].condition.size(); ++k) trials.push_back(k);
    }
    const double n = static_cast<double>(trials.size());
    std::vector<double> p_s(conditions, 0);
    for (std::size_t k: trials) p_s[units_[0].condition[k]] += 1 / n;
    const std::size_t m = units_.size();
    for (std::size_t u = 0; u < m; ++u) marginals(u, trials);
    // The product of the supports, counted before it is visited: it grows as the product of the
    // units' distinct responses in each condition, and each is visited once per condition.
    double support = 0;
    for (std::size_t s = 0; s < conditions; ++s) {
        if (p_s[s] == 0) continue;
        double product = 1;
        for (std::size_t u = 0; u < m; ++u) product *= static_cast<double>(seen_[u][s].size());
        support += product;
    }
    if (support > static_cast<double>(joint_limit_)) {
        throw too_many_joint_responses("the independent-units information of these " + std::to_string(m) +
                                       " units needs " + format_number(support) + " joint responses (the product of their "
                                       "distinct responses in each condition), more than the " +
                                       format_number(static_cast<double>(joint_limit_)) + " it may hold");
    }
    // P_ind(r | s) = prod_c P(r_c | s) over the product of the units' supports in condition s, visited
    // in lexicographic order (first unit slowest), and the pooled P_ind(r) = sum_t p(t) P_ind(r | t),
    // summed over t in increasing order; conditions where some r_c was not seen add exact zeros.
    // Products are formed left to right from 1. This is the order in which the sums were once taken
    // over maps keyed by the response vectors, so the value is the same to the last bit. The partial
    // products of the first units, for every condition at once, are kept while their digits stay.
    std::vector<std::size_t> live;  // the conditions with trials, increasing
    for (std::size_t t = 0; t < conditions; ++t) {
        if (p_s[t] != 0) live.push_back(t);
    }
    const std::size_t width = live.size();
    std::vector<double> weight(width);  // p(t) of each live condition
    for (std::size_t j = 0; j < width; ++j) weight[j] = p_s[live[j]];
    // The last unit's digit moves fastest: its P(r | t) are laid out response by response, so the
    // innermost loop reads them in order.
    const std::size_t last = m - 1;
    std::vector<double> last_columns(distinct_[last] * width);
    for (std::size_t r = 0; r < distinct_[last]; ++r) {
        for (std::size_t j = 0; j < width; ++j) last_columns[r * width + j] = p_[last][live[j] * distinct_[last] + r];
    }
    std::vector<double> prefix(m * width);  // row u: prod_{c <= u} P(r_c | live[j]); row `last` is q
    const std::vector<double> ones(width, 1.0);
    double info = 0;
    std::vector<std::size_t> digit(m);
    for (std::size_t s = 0; s < conditions; ++s) {
        if (p_s[s] == 0) continue;
        double size = 1;
        for (std::size_t u = 0; u < m; ++u) {
            size *= static_cast<double>(seen_[u][s].size());
        }
        if (size == 0) continue;
        const std::size_t own = static_cast<std::size_t>(std::find(live.begin(), live.end(), s) - live.begin());
        std::fill(digit.begin(), digit.end(), 0);
        std::size_t from = 0;  // the first unit, before the last, whose digit changed
        while (true) {
            for (std::size_t u = from; u < last; ++u) {
                const double* column = p_[u].data() + seen_[u][s][digit[u]];
                const std::size_t stride = distinct_[u];
                double* row = &prefix[u * width];
                for (std::size_t j = 0; j < width; ++j) {
                    row[j] = (u == 0 ? 1.0 : prefix[(u - 1) * width + j]) * column[live[j] * stride];
                }
            }
            // The last unit's responses, in increasing order, against the product of the others'
            // (1 for a single unit: 1 * x is x exactly).
            const double* before = last == 0 ? ones.data() : &prefix[(last - 1) * width];
            double* q = &prefix[last * width];
            for (const std::uint32_t r: seen_[last][s]) {
                const double* column = &last_columns[r * width];
                for (std::size_t j = 0; j < width; ++j) q[j] = before[j] * column[j];
                const double p = q[own];
                if (p > 0) {
                    double pooled = 0;
                    for (std::size_t j = 0; j < width; ++j) pooled += weight[j] * q[j];
                    info += p_s[s] * p * std::log2(p / pooled);
                }
            }
            if (last == 0) break;
            std::size_t u = last;
            while (u > 0 && ++digit[u - 1] == seen_[u - 1][s].size()) digit[--u] = 0;
            if (u == 0) break;
            from = u - 1;
        }
    }
    return info;
}
}  // namespace

double independent_information(const std::vector<labelled_responses>& units, const std::vector<std::size_t>& use,
                               std::size_t joint_limit) {
    return independent_units(units, joint_limit).information(use);
}

double independent_extrapolated(const std::vector<labelled_responses>& units, const info_settings& settings,
                                std::size_t joint_limit) {
    independent_units independent(units, joint_limit);
    return extrapolate_over_trials(
        units[0].condition, units[0].conditions,
        [&](const std::vector<std::size_t>& use) { return independent.information(use); }, settings);
}

population_values population_information_given(const std::vector<labelled_responses>& units, info_estimator estimator,
                                               const info_settings& settings, unsigned shuffles, double independent) {
    population_values v;
    const labelled_responses joint = joint_responses(units);
    v.joint = stimulus_information(joint, estimator, settings);
    double independent_noise = 0;  // H_ind(R|S) = sum_c H(R_c|S)
    for (const auto& u: units) {
        // conditional_response_entropy(u) without computing the unit's information twice.
        const double info = stimulus_information(u, estimator, settings);
        v.sum_single += info;
        independent_noise += response_entropy(u.response, u.alphabet, estimator, settings) - info;
    }
    v.synergy = v.joint - v.sum_single;
    v.independent = independent;
    double shuffled_noise = 0;  // H_sh(R|S), averaged over shuffles
    const unsigned repeats = std::max(1u, shuffles);
    for (unsigned i = 0; i < repeats; ++i) {
        const labelled_responses sh = joint_responses(shuffled_within_conditions(units, derive_seed(settings.seed, {0x5bULL, i})));
        shuffled_noise += conditional_response_entropy(sh, estimator, settings) / repeats;
    }
    // I_sh = H(R) - H_ind(R|S) + H_sh(R|S) - H(R|S) = I_joint + H_sh(R|S) - H_ind(R|S).
    v.shuffle_corrected = v.joint + shuffled_noise - independent_noise;
    return v;
}

population_values population_information(const std::vector<labelled_responses>& units, info_estimator estimator,
                                         const info_settings& settings, unsigned shuffles, std::size_t joint_limit) {
    // The other values first, as before the split: a population refused for its joint responses
    // is refused for that, before the independent-units term's own bound is checked.
    population_values v = population_information_given(units, estimator, settings, shuffles, 0.0);
    v.independent = independent_extrapolated(units, settings, joint_limit);
    return v;
}

}  // namespace rastrum
