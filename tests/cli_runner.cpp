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

std::string output_base() {
    static int serial = 0;
    return std::string(RASTRUM_TEST_TMP) + "/run-" + std::to_string(::getpid()) + "-" + std::to_string(serial++);
}

// The shell command that runs rastrum with ARGS (through `runner`, such as "timeout 60 ", when
// given), its output going to BASE.out and BASE.err.
std::string shell_command(const std::string& args, const std::string& base, const std::string& runner = "") {
    return "exec " + runner + "'" + RASTRUM_BINARY + "' " + args + " </dev/null >'" + base + ".out' 2>'" + base + ".err'";
}

process_result collect(int status, const std::string& base) {
    process_result r;
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    r.out = read_file(base + ".out");
    r.err = read_file(base + ".err");
    std::filesystem::remove(base + ".out");
    std::filesystem::remove(base + ".err");
    return r;
}

}  // namespace

process_result run_rastrum(const std::string& args) {
    const std::string base = output_base();
    return collect(std::system(shell_command(args, base).c_str()), base);
}

process_result run_rastrum_via(const std::string& runner, const std::string& args) {
    const std::string base = output_base();
    return collect(std::system(shell_command(args, base, runner).c_str()), base);
}

process_result run_rastrum_limited(const std::string& args, unsigned seconds, unsigned long memory_kib) {
    const std::string base = output_base();
#ifdef RASTRUM_SANITIZED
    // AddressSanitizer reserves terabytes of address space for its shadow memory, so under `ulimit -v`
    // the sanitized rastrum could not start. The same bound through the sanitizer (notes/robustness.md):
    // an allocation beyond it, or resident memory beyond it, ends the process with a report (exit 1),
    // which fails the test as a refused allocation does under ulimit.
    const std::string mib = std::to_string((memory_kib + 1023) / 1024);
    const std::string limit = "export ASAN_OPTIONS=\"${ASAN_OPTIONS:+$ASAN_OPTIONS:}max_allocation_size_mb=" + mib +
                              ":hard_rss_limit_mb=" + mib + "\"; ";
#else
    // POSIX sh: the limit applies to the timeout process and the rastrum it starts.
    const std::string limit = "ulimit -v " + std::to_string(memory_kib) + "; ";
#endif
    const std::string command = limit + shell_command(args, base, "timeout " + std::to_string(seconds) + " ");
    return collect(std::system(command.c_str()), base);
}

process_result run_rastrum_in(const std::string& folder, const std::string& args) {
    const std::string base = output_base();
    return collect(std::system(("cd '" + folder + "' && " + shell_command(args, base)).c_str()), base);
}

background_rastrum start_rastrum(const std::string& args, const std::string& runner) {
    background_rastrum run{0, output_base()};
    const std::string command = shell_command(args, run.base, runner);
    run.pid = ::fork();
    if (run.pid == 0) {
        ::execl("/bin/sh", "sh", "-c", command.c_str(), static_cast<char*>(nullptr));
        ::_exit(127);
    }
    return run;
}

process_result finish_rastrum(const background_rastrum& run) {
    int status = 0;
    ::waitpid(run.pid, &status, 0);
    process_result r = collect(status, run.base);
    if (WIFSIGNALED(status)) r.exit_code = 128 + WTERMSIG(status);
    return r;
}

}  // namespace rastrum::testing
