#pragma once
// What each analysis path holds at its largest, estimated from the request and the recording's size
// (trials, spike counts the file declares) before anything large is allocated, and checked against
// the request's memory bound (memory_bound.hpp). The bytes per item are measured peak resident sizes,
// rounded up (notes/robustness.md, "Resource bounds"): an estimate errs high, never low.
#include <rastrum/direct_analysis.hpp>
#include <rastrum/stiminfo_analysis.hpp>

#include <cstddef>
#include <vector>

namespace rastrum {

/// The direct method over `units` at every bin width of `q` on `trials` trials cut to `duration`:
/// each thread holds one unit at one bin width (its letters, a rotated copy with --null-rotations,
/// its words that hold a spike, the subset tallies), and the results grow with units x bin widths x
/// word lengths. Throws insufficient_data naming the setting when that exceeds the bound, or when a
/// word length would have 2^32 words or more (the counting's limit).
void check_direct_memory(const recording& rec, const direct_request& q, const std::vector<std::size_t>& units,
                         std::size_t trials, seconds duration);

/// Before anything is read: the word code's letters must fit in 64 bits (at most 64 across the
/// window, with binary letters) and the latency code's bins must be countable (below 2^53).
/// Throws insufficient_data naming --bin-ms and --window-ms (or --slide-ms).
void check_stiminfo_size(const stiminfo_request& q);

/// How many sliding windows (or 1) the request makes, as a double so that any --slide-ms is counted.
double stiminfo_window_count(const stiminfo_request& q);

/// Stimulus information for `groups` (indices into rec.units; a population has several) on the
/// trials counted in `per_condition`, in `windows` windows each: each thread holds one group's units
/// and responses and its null and bootstrap values; the results grow with groups x windows. Throws
/// insufficient_data naming the setting when that exceeds the bound. The joint responses of a
/// population's independent-units information depend on the data (the product of its units' distinct
/// responses), so they get what the bound leaves: returned is how many one thread may hold (at most
/// independent_joint_limit), checked by independent_information before it builds them.
std::size_t check_stiminfo_memory(const recording& rec, const stiminfo_request& q,
                           const std::vector<std::vector<std::size_t>>& groups,
                           const std::vector<std::size_t>& per_condition, double windows);

}  // namespace rastrum
