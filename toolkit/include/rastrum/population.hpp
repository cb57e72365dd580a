#pragma once
/// Information carried by the joint response of several units, and how it compares with the units
/// taken one at a time (synergy or redundancy), with conditionally independent units, and with the
/// shuffle-corrected estimate of Montemurro, Senatore & Panzeri 2007 (Neural Comput. 19:2913) and
/// Panzeri, Senatore, Montemurro & Petersen 2007 (J. Neurophysiol. 98:1064).
#include <rastrum/errors.hpp>
#include <rastrum/stimulus_information.hpp>

#include <cstddef>
#include <cstdint>
#include <vector>

namespace rastrum {

/// One code per trial from the units' codes in mixed radix (unit 0 most significant), over the same
/// trials and conditions. Throws insufficient_data when the joint alphabet exceeds 2^64 codes.
labelled_responses joint_responses(const std::vector<labelled_responses>& units);

/// The units' responses shuffled across the trials of each condition, each unit on its own:
/// the noise correlations between units are destroyed, each unit's conditional distribution kept.
std::vector<labelled_responses> shuffled_within_conditions(const std::vector<labelled_responses>& units,
                                                           std::uint64_t seed);

/// The most joint responses independent_information visits, summed over the conditions: its default
/// limit, which a caller lowers to bound the work (each joint response is visited once per condition;
/// none is stored, so the limit bounds time, and memory estimates that count them err high).
inline constexpr std::size_t independent_joint_limit = 1000000;

/// What independent_information throws when the joint responses exceed its limit (exit 4 as any
/// insufficient_data), so that a caller that set the limit can say why.
struct too_many_joint_responses: insufficient_data {
    using insufficient_data::insufficient_data;
};

/// I(S;R) if the units were conditionally independent: the plug-in information of the product of the
/// units' empirical conditional distributions, summed exactly over its support, over the trials in
/// `use` (all when empty). Throws insufficient_data, before building it, when that support summed over
/// the conditions exceeds `joint_limit` joint responses.
double independent_information(const std::vector<labelled_responses>& units, const std::vector<std::size_t>& use = {},
                               std::size_t joint_limit = independent_joint_limit);

struct population_values {
    double joint = 0;              // I(S; R1..Rn)
    double sum_single = 0;         // sum_c I(S; R_c)
    double synergy = 0;            // joint - sum_single (negative: redundancy)
    double independent = 0;        // independent_information, extrapolated to infinite trials
    double shuffle_corrected = 0;  // I_sh = H(R) - H_ind(R|S) + H_sh(R|S) - H(R|S)
};

/// Every value but `independent` by `estimator`; `independent` is the plug-in product of marginals
/// extrapolated in 1/N like quadratic-extrapolation, because its plug-in value is biased upward. H_ind(R|S) is the sum of the units' conditional
/// entropies; H_sh(R|S) is averaged over `shuffles` within-condition shuffles.
/// `joint_limit` bounds the joint responses of `independent` (see independent_information).
population_values population_information(const std::vector<labelled_responses>& units, info_estimator estimator,
                                         const info_settings& settings, unsigned shuffles,
                                         std::size_t joint_limit = independent_joint_limit);
/// The same values with `independent` given: it does not depend on the estimator, so the values of
/// several estimators on the same units compute it once (independent_extrapolated) and share it.
population_values population_information_given(const std::vector<labelled_responses>& units, info_estimator estimator,
                                               const info_settings& settings, unsigned shuffles, double independent);
/// `independent` of population_information: the plug-in independent-units information extrapolated in 1/N.
double independent_extrapolated(const std::vector<labelled_responses>& units, const info_settings& settings,
                                std::size_t joint_limit = independent_joint_limit);

}  // namespace rastrum
