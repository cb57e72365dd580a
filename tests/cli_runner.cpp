#include "cli_runner.hpp"

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <sys/wait.h>
#include <unistd.h>

namespace rastrum::testing {

std::string read_file(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

bool file_exists(const std::string& path) { return std::filesystem::exists(path); }

std::string fresh_folder(const std::string& name) {
    const std::string folder = std::string(RASTRUM_TEST_TMP) + "/" + name;
    std::filesystem::remove_all(folder);
    std::filesystem::create_directories(folder);
    return folder;
}

namespace {
process_result run_with(const std::string& prefix, const std::string& args) {
    static int serial = 0;
    const std::string base = std::string(RASTRUM_TEST_TMP) + "/run-" + std::to_string(::getpid()) + "-" +
                             std::to_string(serial++);
    const std::string command = prefix + "'" + RASTRUM_BINARY + "' " + args + " </dev/null >'" + base +
                                ".out' 2>'" + base + ".err'";
    const int status = std::system(command.c_str());
    process_result r;
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    r.out = read_file(base + ".out");
    r.err = read_file(base + ".err");
    std::filesystem::remove(base + ".out");
    std::filesystem::remove(base + ".err");
    return r;
}
}  // namespace

process_result run_rastrum(const std::string& args) { return run_with("", args); }

process_result run_rastrum_limited(const std::string& args, unsigned seconds, unsigned long memory_kib) {
    // POSIX sh: the limit applies to the timeout process and the rastrum it starts.
    return run_with("ulimit -v " + std::to_string(memory_kib) + "; timeout " + std::to_string(seconds) + " ", args);
}

}  // namespace rastrum::testing
