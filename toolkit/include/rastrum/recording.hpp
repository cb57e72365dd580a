#pragma once
/// The recording model every loader produces and every analysis consumes: spike-sorted units on
/// one session clock, and trials as half-open intervals [start, stop) with optional labels.
#include <rastrum/types.hpp>

#include <cstddef>
#include <functional>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <vector>

namespace rastrum {

/// A file and the object in it, as an input_error names them.
struct place {
    std::string file;
    std::string object;
};

/// What a recording was read from, for provenance and messages. A file left empty is `source`.
struct recording_origin {
    std::string format;                          // "native", "nwb", "mat", "text"; empty when built in memory
    std::string format_detail;                   // "an NWB 2.7.0 file", "a MATLAB 7.3 MAT-file", ...
    place units{"", "/units"};                   // the units (and how their ids were chosen)
    place trials{"", "/trials"};
    place labels{"", "/trials/stimulus"};        // where the labels are, or where they were looked for
    std::string labels_hint;                     // when there are none: how to give them, starting "; "
};

struct unit_spikes {
    std::string id;
    std::vector<seconds> spike_times;  // session clock, ascending (loaders sort and warn)
};

/// Reads one unit's spike times at a time from the file a recording was opened from
/// (notes/recording-layout.md, "Reading unit by unit"). One per format; `unit_store` calls it one
/// call at a time.
class unit_loader {
public:
    virtual ~unit_loader() = default;
    /// How many spike times unit u has in the file, known when the recording was opened.
    virtual std::size_t spike_count(std::size_t u) const = 0;
    /// Unit u's spike times as the model wants them: every time checked finite in the file's order
    /// (input_error naming the file and the object, as the whole-file read does), then ascending
    /// (sorted, with a warning). What it notices about the unit is appended to `warnings`.
    virtual std::vector<seconds> load(std::size_t u, std::vector<std::string>& warnings) = 0;
};

/// The units of a recording opened for reading on demand: reads go through the loader one at a
/// time (HDF5 files are read serially), from any thread. Keeps the warnings of every unit read.
class unit_store {
public:
    unit_store(std::unique_ptr<unit_loader> loader, std::size_t units);
    std::size_t spike_count(std::size_t u) const { return loader_->spike_count(u); }
    /// Unit u's spike times, read now; the unit's warnings are kept the first time it is read.
    std::vector<seconds> read(std::size_t u);
    /// The warnings of the units read so far, in the recording's order of units.
    std::vector<std::string> warnings() const;
    /// Whether unit u has been read (and so passed its checks) at least once.
    bool was_read(std::size_t u) const;

private:
    std::unique_ptr<unit_loader> loader_;
    mutable std::mutex mutex_;
    std::vector<std::optional<std::vector<std::string>>> warnings_;  // per unit, once read
};

/// Unit u's spike times, shared by whoever needs them while they are needed.
using shared_spikes = std::shared_ptr<const std::vector<seconds>>;

struct recording {
    std::string source;                      // where it came from (a path), for messages
    std::vector<unit_spikes> units;          // ids; the spike times too unless `on_demand()`
    std::vector<seconds> trial_start;        // ascending, trials do not overlap
    std::vector<seconds> trial_stop;         // trial_stop[k] > trial_start[k]
    std::vector<std::string> stimulus;       // empty, or one label per trial (integers as decimal text)
    std::vector<std::string> warnings;       // what the loader repaired or noticed (sorted spikes, empty units)
    recording_origin origin;
    /// Set when the spike times stay in the file until asked for (open_recording): then every
    /// units[u].spike_times is empty and `spikes(u)` reads them.
    std::shared_ptr<unit_store> store;

    bool on_demand() const { return store != nullptr; }
    /// Spike times of unit u: those held, or read now from the file (from any thread).
    shared_spikes spikes(std::size_t u) const;
    std::size_t spike_count(std::size_t u) const;
    /// Every warning so far: the loader's at opening, then those of each unit read on demand.
    std::vector<std::string> all_warnings() const;
    /// Index of the unit with this id. Throws usage_error naming the ids that exist when there is none.
    std::size_t unit_index(const std::string& id) const;

    std::size_t trial_count() const { return trial_start.size(); }
    bool has_stimulus() const { return !stimulus.empty(); }
    /// Where the labels are (or would be), for messages: `origin.labels` in `source` unless it names a file.
    place labels_place() const { return {origin.labels.file.empty() ? source : origin.labels.file, origin.labels.object}; }
    /// The unit with this id, spike times included; internal_error for a recording read on demand.
    /// Throws usage_error naming the ids that exist when there is none.
    const unit_spikes& unit(const std::string& id) const;
};

/// Reads every unit of a recording opened on demand into `rec.units` (in order, each unit's warnings
/// added to rec.warnings as it is read) and drops the store; a recording held whole is left as it is.
void read_all_units(recording& rec);

/// Reads, and lets go, every unit of a recording opened on demand that has not been read yet, one at
/// a time, so that a damaged unit is reported (input_error) even when the analysis stopped before it:
/// input errors then come before a shortage of data, as when the whole file was read first.
void check_unread_units(const recording& rec);

/// Where the parts of a recording sit in the file(s) it came from, so that validate() can name
/// them in the source's own terms (an NWB dataset, a MATLAB variable, a CSV line). The default
/// names the native layout's objects in `rec.source` ("/units/u3/spike_times[17]").
class recording_places {
public:
    explicit recording_places(const recording& rec): rec_(rec) {}
    virtual ~recording_places() = default;
    recording_places(const recording_places&) = delete;
    recording_places& operator=(const recording_places&) = delete;

    virtual place units() const;                                   // the list of units
    virtual place unit(std::size_t u) const;                        // the id of unit u
    virtual place spike(std::size_t u, std::size_t i) const;        // spike i of unit u
    virtual place trial_starts() const;
    virtual place trial_start(std::size_t k) const;
    virtual place trial_stops() const;
    virtual place trial_stop(std::size_t k) const;
    virtual place labels() const;

protected:
    const recording& rec_;
};

/// Checks the invariants above (finite times, stop > start, no overlap, labels sized like trials,
/// at least one unit and one trial). Throws input_error naming the offending object through
/// `places` (by default the native layout's, for example "/trials/stop_time[4]" in
/// `recording.source`). Loaders call it; so may code that builds recordings.
void validate(const recording& rec);
void validate(const recording& rec, const recording_places& places);

/// Spike times of one unit relative to the start of each selected trial: result[i] holds the
/// spikes t with start[k] <= t < stop[k] for k = trials[i], as t - start[k], ascending.
/// Expects `spikes` ascending and the recording's trials validated. O(T log n), no per-spike allocation
/// beyond the result.
std::vector<std::vector<seconds>> align_to_trials(const std::vector<seconds>& spikes,
                                                  const recording& rec,
                                                  const std::vector<std::size_t>& trials);

/// Number of spikes that fall inside no trial at all.
std::size_t spikes_outside_trials(const std::vector<seconds>& spikes, const recording& rec);

/// Which trials an analysis may use, for scripting repeated-trial subsets (first half against second
/// half, stable epochs): `only` (when set) minus `excluded`. Indices count from 0, as in /trials.
struct trial_selection {
    std::optional<std::vector<std::size_t>> only;
    std::vector<std::size_t> excluded;
    bool everything() const { return !only && excluded.empty(); }
};

/// Trial indices in `selection` whose label equals `stimulus` (any label when empty), ascending.
/// Throws usage_error for an index past the last trial, when the recording has no labels or no
/// selected trial carries that label (listing the labels that exist), or when no trial is left.
std::vector<std::size_t> select_trials(const recording& rec, const std::optional<std::string>& stimulus,
                                       const trial_selection& selection = {});

/// "0-49,60,70-79" -> {0, ..., 49, 60, 70, ..., 79}: indices and inclusive ranges, comma-separated.
/// Throws usage_error naming `option` for anything else (negative, reversed or empty parts).
std::vector<std::size_t> parse_trial_list(const std::string& text, const std::string& option);

/// Distinct labels in order of first appearance, with their trial counts.
std::vector<std::pair<std::string, std::size_t>> stimulus_labels(const recording& rec);

}  // namespace rastrum
