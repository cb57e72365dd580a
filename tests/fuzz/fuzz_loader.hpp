#pragma once
// The shared part of the libFuzzer harnesses (notes/robustness.md): the input becomes a file (the
// loaders read paths), the recording is read through the one entry point every command uses,
// read_recording, and the file is described as `rastrum survey` does (describe_source). rastrum's
// own input_error and usage_error are the expected answers to a damaged file; any other exception,
// a crash, a hang or a sanitizer report is a finding.
#include <rastrum/errors.hpp>
#include <rastrum/recording_source.hpp>

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <fstream>
#include <string>
#include <unistd.h>

namespace rastrum::fuzz {

/// A file of this process for the input, on tmpfs when there is one (no disk traffic per input),
/// removed when the fuzzer exits normally (a crashing input is kept by libFuzzer as its artifact).
struct scratch_file {
    std::string path;
    explicit scratch_file(const std::string& name) {
        const char* tmp = std::getenv("TMPDIR");
        const std::string dir = access("/dev/shm", W_OK) == 0 ? "/dev/shm" : (tmp != nullptr ? tmp : "/tmp");
        path = dir + "/rastrum-fuzz-" + std::to_string(getpid()) + "-" + name;
    }
    ~scratch_file() { std::remove(path.c_str()); }
    scratch_file(const scratch_file&) = delete;
    scratch_file& operator=(const scratch_file&) = delete;
};

inline void write_bytes(const std::string& path, const std::uint8_t* data, std::size_t size) {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
    if (!out) {
        std::fprintf(stderr, "fuzz harness: cannot write %s\n", path.c_str());
        std::abort();
    }
}

/// Runs `f`; rastrum's input_error and usage_error are normal outcomes, anything else aborts (so
/// libFuzzer records the input as a crash).
template <class F>
void expecting_input_errors(const char* what, F&& f) {
    try {
        f();
    } catch (const rastrum::input_error&) {
    } catch (const rastrum::usage_error&) {
    } catch (const std::exception& e) {
        std::fprintf(stderr, "FINDING: %s threw an unexpected exception: %s\n", what, e.what());
        std::abort();
    } catch (...) {
        std::fprintf(stderr, "FINDING: %s threw something that is not a std::exception\n", what);
        std::abort();
    }
}

/// read_recording with the format fixed (so the loader is exercised whatever detection would say),
/// then describe_source with the format found from the content, as survey does.
inline void read_both_ways(recording_source source, recording_format format) {
    recording_source fixed = source;
    fixed.format = format;
    expecting_input_errors("read_recording", [&] { (void)read_recording(fixed); });
    expecting_input_errors("describe_source", [&] { (void)describe_source(source); });
}

}  // namespace rastrum::fuzz
