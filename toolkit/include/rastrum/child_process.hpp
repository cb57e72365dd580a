#pragma once
/// Running another program as a child process and stopping it cleanly, so that a crash in one
/// analysis cannot take down the process that started it (POSIX, with Linux's parent-death signal).
#include <optional>
#include <string>
#include <vector>

namespace rastrum {

/// While an `interruption` lives, SIGINT, SIGTERM and SIGHUP are recorded instead of ending the
/// process, so that it can stop its child, record what finished and exit in order. One at a time.
class interruption {
public:
    interruption();
    ~interruption();
    interruption(const interruption&) = delete;
    interruption& operator=(const interruption&) = delete;

    /// The first signal received, 0 while none.
    int signal() const;
    /// Becomes readable when a signal arrives (for poll).
    int wake_fd() const;
};

struct child_result {
    std::optional<int> exit_code;  // when it exited
    std::optional<int> signal;     // when a signal ended it
    std::string out;               // what it wrote to stdout (the last 64 KiB)
    std::string err;               // what it wrote to stderr (the last 64 KiB)
    bool interrupted = false;      // `stop` fired while it ran and it was sent SIGTERM
    int pid = 0;
    double seconds = 0;
};

/// Runs `program` with `args` (args[0] is the name the child sees) in `folder`, stdin from
/// /dev/null, and waits for it. When `stop` fires, the child is sent SIGTERM (SIGKILL on a second
/// signal); if this process dies, the child is sent SIGTERM too. Throws error when the program
/// cannot be started.
child_result run_child(const std::string& program, const std::vector<std::string>& args, const std::string& folder,
                       const interruption* stop);

/// "exit code 3", "killed by signal 9 (Killed)".
std::string describe_ending(const child_result& result);

}  // namespace rastrum
