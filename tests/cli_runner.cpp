#include "cli_runner.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <sys/resource.h>
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

// Starts `sh -c COMMAND` with at most `memory_kib` KiB of address space: the limit is set in the
// child before exec, so the shell, any `timeout` and rastrum (and the children a batch starts)
// all inherit it.
int spawn(const std::string& command, unsigned long memory_kib) {
    const int pid = ::fork();
    if (pid == 0) {
#ifndef RASTRUM_SANITIZED
        const rlim_t bytes = static_cast<rlim_t>(std::min(memory_kib, default_memory_kib)) * 1024;
        const rlimit limit{bytes, bytes};
        if (::setrlimit(RLIMIT_AS, &limit) != 0) ::_exit(126);
#else
        (void)memory_kib;
#endif
        ::execl("/bin/sh", "sh", "-c", command.c_str(), static_cast<char*>(nullptr));
        ::_exit(127);
    }
    return pid;
}

process_result collect(int status, const std::string& base) {
    process_result r;
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : WIFSIGNALED(status) ? 128 + WTERMSIG(status) : -1;
    r.out = read_file(base + ".out");
    r.err = read_file(base + ".err");
    std::filesystem::remove(base + ".out");
    std::filesystem::remove(base + ".err");
    return r;
}

// Exit 1 is rastrum's "unexpected failure"; a signal (or `timeout` reporting one as 128 + N) means
// it crashed or was killed. Neither may happen unless the test provoked it.
void check_ending(int status, const process_result& r, const std::string& args, ending expected) {
    if (expected == ending::provoked) return;
    const bool signalled = WIFSIGNALED(status) || (r.exit_code > 128 && r.exit_code < 128 + 65);
    if (signalled || r.exit_code == 1) {
        ADD_FAILURE() << "rastrum " << args << "\nended with " << (signalled ? "a signal, " : "") << "exit code "
                      << r.exit_code << " (under a " << default_memory_kib / 1024 << " MiB address-space limit); stderr:\n"
                      << r.err;
    }
}

process_result run(const std::string& command, const std::string& base, const std::string& args,
                   unsigned long memory_kib, ending expected) {
    int status = 0;
    ::waitpid(spawn(command, memory_kib), &status, 0);
    process_result r = collect(status, base);
    check_ending(status, r, args, expected);
    return r;
}

}  // namespace

process_result run_rastrum(const std::string& args, ending expected) {
    const std::string base = output_base();
    return run(shell_command(args, base), base, args, default_memory_kib, expected);
}

process_result run_rastrum_limited(const std::string& args, unsigned seconds, unsigned long memory_kib, ending expected) {
    const std::string base = output_base();
#ifdef RASTRUM_SANITIZED
    // AddressSanitizer reserves terabytes of address space for its shadow memory, so under an
    // address-space limit the sanitized rastrum could not start. The same bound through the
    // sanitizer (notes/robustness.md): an allocation beyond it, or resident memory beyond it, ends
    // the process with a report (exit 1), which fails the test as a refused allocation does.
    const std::string mib = std::to_string((memory_kib + 1023) / 1024);
    const std::string limit = "export ASAN_OPTIONS=\"${ASAN_OPTIONS:+$ASAN_OPTIONS:}max_allocation_size_mb=" + mib +
                              ":hard_rss_limit_mb=" + mib + "\"; ";
#else
    const std::string limit;
#endif
    const std::string command = limit + shell_command(args, base, "timeout " + std::to_string(seconds) + " ");
    return run(command, base, args, memory_kib, expected);
}

process_result run_rastrum_via(const std::string& runner, const std::string& args, ending expected) {
    const std::string base = output_base();
    return run(shell_command(args, base, runner), base, args, default_memory_kib, expected);
}

process_result run_rastrum_in(const std::string& folder, const std::string& args, ending expected) {
    const std::string base = output_base();
    return run("cd '" + folder + "' && " + shell_command(args, base), base, args, default_memory_kib, expected);
}

background_rastrum start_rastrum(const std::string& args, ending expected) {
    return start_rastrum_via("", args, expected);
}

background_rastrum start_rastrum_via(const std::string& runner, const std::string& args, ending expected) {
    background_rastrum r{0, output_base(), args, expected};
    r.pid = spawn(shell_command(args, r.base, runner), default_memory_kib);
    return r;
}

process_result finish_rastrum(const background_rastrum& run) {
    int status = 0;
    ::waitpid(run.pid, &status, 0);
    process_result r = collect(status, run.base);
    check_ending(status, r, run.args, run.expected);
    return r;
}

}  // namespace rastrum::testing
