#pragma once
/// The letters that are not 0, bin by bin: what the direct method reads. At fine bins nearly every
/// letter is 0 (at 0.5 ms and 10 Hz, 199 in 200), so a dense bins x trials matrix is mostly zeros to
/// allocate, fill and scan, for every unit and bin width and again for every rotated null; this
/// holds only the bins with spikes, and a rotation moves those (trial_rotator).
#include <rastrum/binning.hpp>
#include <rastrum/types.hpp>

#include <cstddef>
#include <cstdint>
#include <vector>

namespace rastrum {

struct sparse_letters {
    /// A non-zero letter: its trial and value.
    struct entry {
        std::uint32_t trial;
        letter value;
    };
    std::size_t trials = 0;
    std::size_t bins = 0;
    letter largest = 0;   // the largest letter present (0 when there is none)
    count spikes = 0;     // the sum of the letters
    /// bins + 1 entries: the non-zero letters of bin b are nonzero[bin_start[b]] .. nonzero[bin_start[b + 1] - 1],
    /// in ascending trial order.
    std::vector<std::uint32_t> bin_start;
    std::vector<entry> nonzero;

    /// The letter of `trial` in bin `b` (a search among that bin's non-zero letters).
    letter at(std::size_t b, std::size_t trial) const;
};

/// As bin_spikes (binning.hpp), straight into `out` (its buffers are reused): a spike at time t goes to
/// bin floor(t / bin_width) when that bin is below `bins`; with `binary`, letters are clipped to 0/1.
/// Expects each trial's spikes ascending. Throws insufficient_data when there are 2^32 non-zero letters
/// or more.
void bin_spikes_sparse(const std::vector<std::vector<seconds>>& trial_spikes, seconds bin_width, std::size_t bins,
                       bool binary, sparse_letters& out);

/// The non-zero letters of a letter matrix.
sparse_letters sparse_of(const letter_matrix& letters);

/// Rotates each trial's letters in time: new bin b of trial k holds old bin (b + offsets[k]) mod bins
/// (as the rotated-trial null needs, notes/methods.md 4.6). Holds the letters trial by trial, made
/// once, so that each rotation costs a pass over the non-zero letters and the bins, not over every
/// bin of every trial.
class trial_rotator {
public:
    /// `letters` must outlive the rotator's use (until the next start).
    void start(const sparse_letters& letters);
    /// The rotated letters into `out` (its buffers are reused). offsets.size() must be the trial count.
    void rotate(const std::vector<std::size_t>& offsets, sparse_letters& out);

private:
    struct spike_bin {
        std::uint32_t bin;
        letter value;
    };
    const sparse_letters* letters_ = nullptr;
    std::vector<std::uint32_t> trial_start_;  // trials + 1
    std::vector<spike_bin> by_trial_;         // each trial's non-zero letters in bin order
};

}  // namespace rastrum
