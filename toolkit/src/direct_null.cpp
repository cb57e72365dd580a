#include <rastrum/direct_null.hpp>
#include <rastrum/random.hpp>

#include "direct_workspace.hpp"

#include <cmath>

namespace rastrum {

rotation_null rotation_null_distribution(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                                         unsigned rotations, double observed, std::uint64_t seed,
                                         direct_workspace& workspace) {
    rotation_null null;
    null.rotations = rotations;
    if (rotations == 0) return null;
    direct_workspace::parts& kept = workspace.inside();
    kept.rotator.start(letters);
    std::vector<std::size_t>& offsets = kept.offsets;
    offsets.resize(letters.trials);
    std::size_t at_least = 0;
    for (unsigned i = 0; i < rotations; ++i) {
        random_stream rng(derive_seed(seed, {0x707a7eULL, i}));
        for (auto& o: offsets) o = static_cast<std::size_t>(rng.below(letters.bins));
        direct_settings s = settings;
        s.seed = derive_seed(seed, {0x5e11ULL, i});
        kept.rotator.rotate(offsets, kept.rotated);
        const double rate = estimate_direct(kept.rotated, bin_width, s, workspace).info_rate;
        null.info_rates.push_back(rate);
        null.mean += rate;
        if (rate >= observed) ++at_least;
    }
    null.mean /= rotations;
    if (rotations > 1) {
        double ss = 0;
        for (double r: null.info_rates) ss += (r - null.mean) * (r - null.mean);
        null.sd = std::sqrt(ss / (rotations - 1));
    }
    null.p_value = (1.0 + static_cast<double>(at_least)) / (1.0 + rotations);
    return null;
}

}  // namespace rastrum
