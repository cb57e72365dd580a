#pragma once
// Runs the real rastrum executable in a child process for end-to-end tests.
#include <string>

namespace rastrum::testing {

struct process_result {
    int exit_code = -1;
    std::string out;
    std::string err;
};

/// Runs `rastrum ARGS` (ARGS as typed in a shell) and collects its exit code and output.
process_result run_rastrum(const std::string& args);

/// As run_rastrum, within `seconds` (exit code 124 when it takes longer) and `memory_kib` KiB of
/// virtual memory (an allocation beyond it fails; in a sanitized build the sanitizer enforces the limit):
/// for inputs that must neither hang nor ask for memory they cannot justify.
process_result run_rastrum_limited(const std::string& args, unsigned seconds, unsigned long memory_kib);

/// As run_rastrum with `runner` in front, a command that runs what follows it (such as
/// "setpriv --reuid=nobody ... "), for tests of what another user may do.
process_result run_rastrum_via(const std::string& runner, const std::string& args);

/// The same from the working directory `folder`.
process_result run_rastrum_in(const std::string& folder, const std::string& args);

/// `rastrum ARGS` started in the background, for tests that signal it while it works.
struct background_rastrum {
    int pid = 0;
    std::string base;  // where its stdout and stderr go
};
background_rastrum start_rastrum(const std::string& args, const std::string& runner = "");
/// Waits for it; exit_code is 128 + N when signal N ended it, as a shell reports.
process_result finish_rastrum(const background_rastrum& run);

/// A fresh, empty folder under the test build's tmp/ for one test.
std::string fresh_folder(const std::string& name);

std::string read_file(const std::string& path);
bool file_exists(const std::string& path);

}  // namespace rastrum::testing
