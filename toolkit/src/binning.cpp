#include <rastrum/binning.hpp>
#include <rastrum/errors.hpp>

#include <cmath>
#include <limits>

namespace rastrum {

std::size_t whole_bins(seconds duration, seconds bin_width) {
    if (!(bin_width > 0)) throw internal_error("whole_bins: bin width must be positive");
    if (!(duration > 0)) return 0;
    const double bins = std::floor(duration / bin_width + 1e-9);
    // Beyond size_t the conversion would be undefined; callers refuse such counts before binning.
    if (!(bins < 0x1p64)) return std::numeric_limits<std::size_t>::max();
    return static_cast<std::size_t>(bins);
}

letter_matrix bin_spikes(const std::vector<std::vector<seconds>>& trial_spikes, seconds bin_width,
                         std::size_t bins, bool binary) {
    letter_matrix m;
    m.trials = trial_spikes.size();
    m.bins = bins;
    m.letters.assign(bins * m.trials, 0);
    const double per_second = 1.0 / bin_width;
    for (std::size_t k = 0; k < m.trials; ++k) {
        for (seconds t: trial_spikes[k]) {
            const double position = t * per_second;
            if (!(position >= 0)) continue;
            const auto b = static_cast<std::size_t>(position);
            if (b >= bins) break;  // spikes are ascending
            letter& cell = m.letters[b * m.trials + k];
            if (cell == std::numeric_limits<letter>::max()) {
                throw insufficient_data("a bin holds more spikes than a letter can count");
            }
            ++cell;
        }
    }
    for (letter& cell: m.letters) {
        if (binary && cell > 1) cell = 1;
        if (cell > m.largest) m.largest = cell;
        m.spikes += cell;
    }
    return m;
}

}  // namespace rastrum
