#include <rastrum/direct_null.hpp>
#include <rastrum/random.hpp>

#include <cmath>

namespace rastrum {

letter_matrix rotate_trials(const letter_matrix& letters, const std::vector<std::size_t>& offsets) {
    letter_matrix out = letters;
    const std::size_t bins = letters.bins, trials = letters.trials;
    for (std::size_t k = 0; k < trials; ++k) {
        const std::size_t shift = bins ? offsets[k] % bins : 0;
        for (std::size_t b = 0; b < bins; ++b) {
            const std::size_t from = b + shift < bins ? b + shift : b + shift - bins;
            out.letters[b * trials + k] = letters.letters[from * trials + k];
        }
    }
    return out;
}

rotation_null rotation_null_distribution(const letter_matrix& letters, seconds bin_width, const direct_settings& settings,
                                         unsigned rotations, double observed, std::uint64_t seed) {
    rotation_null null;
    null.rotations = rotations;
    if (rotations == 0) return null;
    std::vector<std::size_t> offsets(letters.trials);
    std::size_t at_least = 0;
    for (unsigned i = 0; i < rotations; ++i) {
        random_stream rng(derive_seed(seed, {0x707a7eULL, i}));
        for (auto& o: offsets) o = static_cast<std::size_t>(rng.below(letters.bins));
        direct_settings s = settings;
        s.seed = derive_seed(seed, {0x5e11ULL, i});
        const double rate = estimate_direct(rotate_trials(letters, offsets), bin_width, s).info_rate;
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
