#pragma once
// Runs the real rastrum executable in a child process for end-to-end tests.
//
// Every process runs under a 2 GiB address-space limit (RLIMIT_AS, set in the child before exec;
// not in sanitized builds, whose shadow memory reserves terabytes of address space), so a request
// that escapes the memory estimates fails here as it would on a small machine. And every run is
// checked for how it ended: exit 1 (an unexpected failure: out of memory, an uncaught library
// error) or a signal fails the test, whatever the options, unless the test says it expects that.
#include <string>

namespace rastrum::testing {

struct process_result {
    int exit_code = -1;  // 128 + N when signal N ended it, as a shell reports
    std::string out;
    std::string err;
};

/// How a run may end beyond its own exit code, which the test checks itself.
enum class ending {
    ordinary,        // anything but exit 1 or a signal (the default)
    provoked,  // exit 1 or a signal too: for a run the test means to starve of memory or to kill
};

/// The address-space limit of every run: 2 GiB.
inline constexpr unsigned long default_memory_kib = 2UL * 1024 * 1024;

/// Runs `rastrum ARGS` (ARGS as typed in a shell) and collects its exit code and output.
process_result run_rastrum(const std::string& args, ending expected = ending::ordinary);

/// As run_rastrum, within `seconds` (exit code 124 when it takes longer) and `memory_kib` KiB of
/// virtual memory (an allocation beyond it fails; in a sanitized build the sanitizer enforces the limit):
/// for inputs that must neither hang nor ask for memory they cannot justify.
process_result run_rastrum_limited(const std::string& args, unsigned seconds, unsigned long memory_kib,
                                   ending expected = ending::ordinary);

/// As run_rastrum with `runner` in front, a command that runs what follows it (such as
/// "setpriv --reuid=nobody ... "), for tests of what another user may do.
process_result run_rastrum_via(const std::string& runner, const std::string& args, ending expected = ending::ordinary);

/// The same from the working directory `folder`.
process_result run_rastrum_in(const std::string& folder, const std::string& args, ending expected = ending::ordinary);

/// `rastrum ARGS` started in the background, for tests that signal it while it works.
struct background_rastrum {
    int pid = 0;
    std::string base;  // where its stdout and stderr go
    std::string args;
    ending expected = ending::ordinary;
};
background_rastrum start_rastrum(const std::string& args, ending expected = ending::ordinary);
/// The same with `runner` in front (as for run_rastrum_via).
background_rastrum start_rastrum_via(const std::string& runner, const std::string& args,
                                     ending expected = ending::ordinary);
/// Waits for it; exit_code is 128 + N when signal N ended it, as a shell reports.
process_result finish_rastrum(const background_rastrum& run);

/// A fresh, empty folder under the test build's tmp/ for one test.
std::string fresh_folder(const std::string& name);

std::string read_file(const std::string& path);
bool file_exists(const std::string& path);

}  // namespace rastrum::testing
