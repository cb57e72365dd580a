#pragma once
/// The recording model every loader produces and every analysis consumes: spike-sorted units on
/// one session clock, and trials as half-open intervals [start, stop) with optional labels.
#include <rastrum/types.hpp>

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace rastrum {

struct unit_spikes {
    std::string id;
    std::vector<seconds> spike_times;  // session clock, ascending (loaders sort and warn)
};

struct recording {
    std::string source;                      // where it came from (a path), for messages
    std::vector<unit_spikes> units;
    std::vector<seconds> trial_start;        // ascending, trials do not overlap
    std::vector<seconds> trial_stop;         // trial_stop[k] > trial_start[k]
    std::vector<std::string> stimulus;       // empty, or one label per trial (integers as decimal text)
    std::vector<std::string> warnings;       // what the loader repaired or noticed (sorted spikes, empty units)

    std::size_t trial_count() const { return trial_start.size(); }
    bool has_stimulus() const { return !stimulus.empty(); }
    /// The unit with this id. Throws usage_error naming the ids that exist when there is none.
    const unit_spikes& unit(const std::string& id) const;
};

/// Checks the invariants above (finite times, stop > start, no overlap, labels sized like trials,
/// at least one unit and one trial). Throws input_error naming `recording.source` and the offending
/// object (for example "/trials/stop_time[4]"). Loaders call it; so may code that builds recordings.
void validate(const recording& rec);

/// Spike times of one unit relative to the start of each selected trial: result[i] holds the
/// spikes t with start[k] <= t < stop[k] for k = trials[i], as t - start[k], ascending.
/// Expects `spikes` ascending and the recording's trials validated. O(T log n), no per-spike allocation
/// beyond the result.
std::vector<std::vector<seconds>> align_to_trials(const std::vector<seconds>& spikes,
                                                  const recording& rec,
                                                  const std::vector<std::size_t>& trials);

/// Number of spikes that fall inside no trial at all.
std::size_t spikes_outside_trials(const std::vector<seconds>& spikes, const recording& rec);

/// Trial indices whose label equals `stimulus`, or every trial when `stimulus` is empty.
/// Throws usage_error when the recording has no labels or no trial carries that label
/// (listing the labels that exist).
std::vector<std::size_t> select_trials(const recording& rec, const std::optional<std::string>& stimulus);

/// Distinct labels in order of first appearance, with their trial counts.
std::vector<std::pair<std::string, std::size_t>> stimulus_labels(const recording& rec);

}  // namespace rastrum
