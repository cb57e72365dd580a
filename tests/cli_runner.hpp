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

/// A fresh, empty folder under the test build's tmp/ for one test.
std::string fresh_folder(const std::string& name);

std::string read_file(const std::string& path);
bool file_exists(const std::string& path);

}  // namespace rastrum::testing
