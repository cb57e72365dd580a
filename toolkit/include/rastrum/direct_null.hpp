#pragma once
/// A null for the direct method: each trial's letters are rotated in time by its own random offset,
/// which keeps every trial's spike statistics but breaks their locking to the stimulus, so the
/// information of rotated data is zero up to bias. Repeating the whole estimate on rotated data
/// measures the bias left by the extrapolations and gives a permutation p-value.
#include <rastrum/sparse_letters.hpp>
#include <rastrum/direct_method.hpp>

#include <cstdint>
#include <vector>

namespace rastrum {

struct rotation_null {
    unsigned rotations = 0;
    std::vector<double> info_rates;  // [bits/s] one per rotation
    double mean = 0;                 // [bits/s]
    double sd = 0;                   // [bits/s]
    double p_value = 1;              // (1 + #{null >= observed}) / (1 + rotations)
};

/// Runs `rotations` rotated estimates with `settings` (normally with fit_letters fixed to the ones
/// the real estimate used, and only those lengths) and compares them with `observed` [bits/s]. Each
/// rotation's offsets (trial k's letters move by offset k: new bin b holds old bin (b + offset) mod
/// bins) and nested splits come from (seed, rotation), so the null is the same for any thread count.
/// The rotations move the non-zero letters (trial_rotator), never a matrix of every bin.
rotation_null rotation_null_distribution(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                                         unsigned rotations, double observed, std::uint64_t seed,
                                         direct_workspace& workspace);

}  // namespace rastrum
