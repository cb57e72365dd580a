#pragma once
/// The memory an analysis may use, and the one check every analysis path makes against it: the
/// bytes a request needs are estimated from the request and the recording's size before anything
/// large is allocated, and a request that cannot fit is refused (insufficient_data, exit 4) with a
/// message naming the setting that makes it large and the bound (`--max-memory`).
#include <cstdint>
#include <string>

namespace rastrum {

/// What this process may use, and what limits it ("physical memory", "the address-space limit
/// (ulimit -v)" or "the cgroup's memory limit"): the least of the three.
struct available_memory {
    std::uint64_t bytes = 0;
    std::string limited_by;
};
available_memory memory_available();

/// The bound when none is asked for: half of memory_available(), leaving the rest for the program,
/// its libraries, thread stacks and what the estimates leave out. The one place the default lives.
std::uint64_t default_memory_bound();

/// "1.5 GiB", "640 MiB", "12 KiB", "300 B": three significant digits in powers of 1024.
std::string format_bytes(double bytes);

/// "8G", "512M", "1.5GiB", "2T" (K, M, G, T: powers of 1024, optionally followed by "iB" or "B")
/// -> bytes. Throws usage_error naming `option` for anything else, a plain number included: a bound
/// without its unit is too easy to misread.
std::uint64_t parse_memory_size(const std::string& text, const std::string& option);

/// A request's bound: `max_memory` bytes, or the default when it is 0.
std::uint64_t memory_bound_of(std::uint64_t max_memory);

/// The default bound as a message says it: "11.6 GiB (half of 23.2 GiB, physical memory)".
std::string default_memory_bound_text();

/// Throws insufficient_data "REQUEST, which needs about X, above --max-memory Y (...); ADVICE" when
/// `needed` bytes exceed the bound of `max_memory` (0: the default, which the message then explains).
/// REQUEST says what makes it large in the user's terms ("--bin-ms 1e-05 across 200 trials of 4 s
/// makes ..."); ADVICE what would make it fit.
void require_memory(double needed, std::uint64_t max_memory, const std::string& request, const std::string& advice);

}  // namespace rastrum
