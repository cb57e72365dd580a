#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/population.hpp>
#include <rastrum/random.hpp>

#include <cmath>
#include <limits>
#include <map>

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

double independent_information(const std::vector<labelled_responses>& units, const std::vector<std::size_t>& use,
                               std::size_t joint_limit) {
    const std::size_t conditions = units[0].conditions;
    std::vector<std::size_t> trials = use;
    if (trials.empty()) {
        for (std::size_t k = 0; k < units[0].condition.size(); ++k) trials.push_back(k);
    }
    const double n = static_cast<double>(trials.size());
    std::vector<double> p_s(conditions, 0);
    for (std::size_t k: trials) p_s[units[0].condition[k]] += 1 / n;
    // Each unit's empirical P(r_c | s).
    std::vector<std::vector<std::map<word_code, double>>> marginal(units.size(), std::vector<std::map<word_code, double>>(conditions));
    for (std::size_t u = 0; u < units.size(); ++u) {
        for (std::size_t k: trials) marginal[u][units[u].condition[k]][units[u].response[k]] += 1;
        for (std::size_t s = 0; s < conditions; ++s) {
            double total = 0;
            for (const auto& [r, c]: marginal[u][s]) total += c;
            for (auto& [r, c]: marginal[u][s]) c /= total;
        }
    }
    // The product of the supports, counted before it is built: it grows as the product of the units'
    // distinct responses, and the maps below hold every one of them.
    double support = 0;
    for (std::size_t s = 0; s < conditions; ++s) {
        if (p_s[s] == 0) continue;
        double product = 1;
        for (std::size_t u = 0; u < units.size(); ++u) product *= static_cast<double>(marginal[u][s].size());
        support += product;
    }
    if (support > static_cast<double>(joint_limit)) {
        throw too_many_joint_responses("the independent-units information of these " + std::to_string(units.size()) +
                                " units needs " + format_number(support) + " joint responses (the product of their "
                                "distinct responses in each condition), more than the " +
                                format_number(static_cast<double>(joint_limit)) + " it may hold");
    }
    // P_ind(r | s) over the product of the supports, and the pooled P_ind(r).
    std::vector<std::map<std::vector<word_code>, double>> conditional(conditions);
    for (std::size_t s = 0; s < conditions; ++s) {
        if (p_s[s] == 0) continue;
        std::map<std::vector<word_code>, double> product{{{}, 1.0}};
        for (std::size_t u = 0; u < units.size(); ++u) {
            std::map<std::vector<word_code>, double> grown;
            for (const auto& [key, p]: product) {
                for (const auto& [r, q]: marginal[u][s]) {
                    auto longer = key;
                    longer.push_back(r);
                    grown[longer] = p * q;
                }
            }
            product = std::move(grown);
        }
        conditional[s] = std::move(product);
    }
    std::map<std::vector<word_code>, double> pooled;
    for (std::size_t s = 0; s < conditions; ++s) {
        for (const auto& [r, p]: conditional[s]) pooled[r] += p_s[s] * p;
    }
    double info = 0;
    for (std::size_t s = 0; s < conditions; ++s) {
        for (const auto& [r, p]: conditional[s]) {
            if (p > 0) info += p_s[s] * p * std::log2(p / pooled[r]);
        }
    }
    return info;
}

population_values population_information(const std::vector<labelled_responses>& units, info_estimator estimator,
                                         const info_settings& settings, unsigned shuffles, std::size_t joint_limit) {
    population_values v;
    const labelled_responses joint = joint_responses(units);
    v.joint = stimulus_information(joint, estimator, settings);
    double independent_noise = 0;  // H_ind(R|S) = sum_c H(R_c|S)
    for (const auto& u: units) {
        v.sum_single += stimulus_information(u, estimator, settings);
        independent_noise += conditional_response_entropy(u, estimator, settings);
    }
    v.synergy = v.joint - v.sum_single;
    v.independent = extrapolate_over_trials(
        units[0].condition, units[0].conditions,
        [&](const std::vector<std::size_t>& use) { return independent_information(units, use, joint_limit); }, settings);
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

}  // namespace rastrum
