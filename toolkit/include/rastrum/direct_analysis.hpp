#pragma once
/// The direct method over a recording: every chosen unit at every chosen bin width, in parallel,
/// with the same numbers for any thread count.
#include <rastrum/direct_method.hpp>
#include <rastrum/direct_null.hpp>
#include <rastrum/parallel.hpp>
#include <rastrum/recording.hpp>

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace rastrum {

struct direct_request {
    std::vector<std::string> units;         // empty: every unit, in the recording's order
    std::optional<std::string> stimulus;    // only trials with this label; all trials when empty
    trial_selection trials;                 // only these trials (and of them, those with the label)
    std::vector<double> bin_ms;             // [ms] each > 0
    bool binary = false;                    // clip letters to 0/1
    direct_settings settings;
    unsigned null_rotations = 0;            // rotated-trial null estimates per unit and bin width
    unsigned threads = 1;                   // 0: one per core
    std::uint64_t max_memory = 0;           // [bytes] the bound of memory_bound.hpp; 0: its default
    progress_callback progress;             // told after each unit and bin width
};

struct direct_record {
    std::string unit;
    std::optional<std::string> stimulus;
    double bin_ms = 0;
    std::size_t trials = 0;
    seconds trial_duration = 0;  // the common duration all trials were cut to
    double mean_rate_hz = 0;     // spikes per second in the analysed bins
    direct_estimate estimate;
    double bits_per_spike = 0;    // info rate / mean rate; NaN when there are no spikes
    double coding_efficiency = 0; // info rate / total entropy rate; NaN when the latter is 0
    rotation_null null;           // empty when request.null_rotations == 0
    std::vector<std::string> warnings;  // the estimate's warnings and the unit's own
};

/// Throws usage_error for unknown units, labels or bad settings (before any work), and
/// insufficient_data when the trials cannot support the analysis or, before anything large is
/// allocated, when it would need more memory than `max_memory` allows.
std::vector<direct_record> run_direct(const recording& rec, const direct_request& request);

/// Checks a request against nothing but itself (option ranges). Throws usage_error.
void check_direct_request(const direct_request& request);

}  // namespace rastrum
