#pragma once
/// Two roots: `internal_error` is a bug in rastrum; `error` is something the user can act on.
/// The command maps them to exit codes in one place (apps/main.cpp):
/// input_error -> 3, insufficient_data -> 4, usage_error -> 2, output_error -> 6, anything else -> 1.
#include <stdexcept>
#include <string>

namespace rastrum {

struct internal_error: std::logic_error {
    explicit internal_error(const std::string& what);
};

struct error: std::runtime_error {
    explicit error(const std::string& what);
};

/// Options that contradict each other or are out of range.
struct usage_error: error {
    explicit usage_error(const std::string& what);
};

/// An input file that cannot be read or does not follow the expected layout.
/// `file` is the path, `object` the HDF5 path (or line) inside it, `expected` and `found` what the
/// loader looked for and what it saw.
struct input_error: error {
    input_error(std::string file, std::string object, std::string expected, std::string found);
    std::string file;
    std::string object;
    std::string expected;
    std::string found;
};

/// The data are valid but cannot support the analysis asked for (too few trials, word space
/// too large to encode, ...). `what` says which and what would be needed.
struct insufficient_data: error {
    explicit insufficient_data(const std::string& what);
};

/// An output that cannot be created or written: a folder without write permission, a missing
/// folder, a read-only or full file system, a closed pipe. `path` is the output as the user named
/// it, `reason` what the system said ("Permission denied").
struct output_error: error {
    output_error(std::string path, std::string reason);
    std::string path;
    std::string reason;
};

}  // namespace rastrum
