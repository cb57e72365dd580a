#pragma once
/// Binning: spike times of each trial become letters, the spike count in each bin of width dt.
#include <rastrum/types.hpp>

#include <cstddef>
#include <vector>

namespace rastrum {

/// Letters of all trials, stored bin-major (`at(bin, trial)`), because words are built and counted
/// across trials at one start position at a time.
struct letter_matrix {
    std::size_t trials = 0;
    std::size_t bins = 0;
    std::vector<letter> letters;  // letters[bin * trials + trial]
    letter largest = 0;           // the largest letter present (alphabet is largest + 1)
    count spikes = 0;             // spikes that fell into the bins (after clipping when binary)

    letter at(std::size_t bin, std::size_t trial) const { return letters[bin * trials + trial]; }
    const letter* bin_row(std::size_t bin) const { return letters.data() + bin * trials; }
};

/// How many whole bins of `bin_width` fit in `duration` (a bin that would end past `duration`,
/// beyond a rounding tolerance of 1e-9 bins, is dropped; a count beyond size_t gives its largest
/// value). Requires bin_width > 0.
std::size_t whole_bins(seconds duration, seconds bin_width);

/// Bins trial-relative spike times: a spike at time t goes to bin floor(t / bin_width) when that
/// bin is below `bins`; other spikes are ignored. With `binary`, letters are clipped to 0/1.
/// Expects each trial's spikes ascending and non-negative. Throws insufficient_data when a bin
/// holds more spikes than a letter can count.
letter_matrix bin_spikes(const std::vector<std::vector<seconds>>& trial_spikes, seconds bin_width,
                         std::size_t bins, bool binary);

}  // namespace rastrum
