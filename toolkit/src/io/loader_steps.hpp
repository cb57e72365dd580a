#pragma once
// Steps every recording loader takes the same way, so that each format gives the same model:
// unit ids in natural order, spike times checked in the file's own order and then sorted.
#include <rastrum/recording.hpp>

#include <cstddef>
#include <functional>
#include <string>
#include <vector>

namespace rastrum {

/// Throws input_error naming `path` unless it is an existing regular file that can be opened for
/// reading; `kind` says what was expected ("HDF5 file", "recording file") and `article` is its
/// article ("an", "a").
void require_readable_file(const std::string& path, const std::string& kind, const std::string& article);

/// Natural order (notes/recording-layout.md, "Unit ids"): runs of decimal digits compare by value,
/// everything else byte by byte; names equal under that rule fall back to byte order.
bool natural_less(const std::string& a, const std::string& b);

/// Indices of `ids` in natural order of the ids (stable).
std::vector<std::size_t> natural_order(const std::vector<std::string>& ids);

/// Makes `times` the spike times of unit `id` as the model wants them: every time finite (an
/// input_error at `place_of(i)`, i the index as read, before anything moves), ascending (sorted
/// with a warning when they were not), and a warning when there are none.
void settle_spike_times(std::vector<double>& times, const std::string& id,
                        const std::function<place(std::size_t)>& place_of, std::vector<std::string>& warnings);

}  // namespace rastrum
