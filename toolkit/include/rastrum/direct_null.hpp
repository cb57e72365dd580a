#pragma once
/// A null for the direct method: each trial's letters are rotated in time by its own random offset,
/// which keeps every trial's spike statistics but breaks their locking to the stimulus, so the
/// information of rotated data is zero up to bias. Repeating the whole estimate on rotated data
/// measures the bias left by the extrapolations and gives a permutation p-value.
#include <rastrum/binning.hpp>
#include <rastrum/direct_method.hpp>

#include <cstdint>
#include <vector>

namespace rastrum {

/// Letters of trial k moved by offsets[k] bins: new bin b holds old bin (b + offsets[k]) mod bins.
letter_matrix rotate_trials(const letter_matrix& letters, const std::vector<std::size_t>& offsets);

struct rotation_null {
    unsigned rotations = 0;
    std::vector<double> info_rates;  // [bits/s] one per rotation
    double mean = 0;                 // [bits/s]
    double sd = 0;                   // [bits/s]
    double p_value = 1;              // (1 + #{null >= observed}) / (1 + rotations)
};

/// Runs `rotations` rotated estimates with `settings` (normally with fit_letters fixed to the ones
/// the real estimate used) and compares them with `observed` [bits/s]. Each rotation's offsets come
/// from (seed, rotation), so the null is the same for any thread count.
rotation_null rotation_null_distribution(const letter_matrix& letters, seconds bin_width, const direct_settings& settings,
                                         unsigned rotations, double observed, std::uint64_t seed);

}  // namespace rastrum
