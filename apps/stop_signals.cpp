#include "stop_signals.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/temporary_files.hpp>

#include <csignal>
#include <cstring>
#include <pthread.h>
#include <string>
#include <thread>
#include <unistd.h>

namespace rastrum::app {

namespace {

// The three, but not one this process was started with ignored (nohup ignores SIGHUP, a shell
// SIGINT for a background job): a blocked signal is kept pending even when ignored, so sigwait
// would otherwise end the run on a signal it was meant not to see.
sigset_t stop_set() {
    sigset_t set;
    sigemptyset(&set);
    for (const int s: {SIGINT, SIGTERM, SIGHUP}) {
        struct sigaction current {};
        if (::sigaction(s, nullptr, &current) == 0 && current.sa_handler == SIG_IGN) continue;
        sigaddset(&set, s);
    }
    return set;
}

[[noreturn]] void end_by(const std::string& command, int signo) {
    // The registry stays held: no other thread renames an output into place from here on.
    const std::size_t removed = remove_temporaries_and_hold();
    const std::string line = "rastrum " + command + ": stopped by signal " + std::to_string(signo) + " (" + strsignal(signo) + ")" +
                             (removed ? "; its unfinished outputs were removed" : "") + "\n";
    [[maybe_unused]] const auto ignored = ::write(2, line.data(), line.size());
    // Ended by the signal itself, so that a shell or a batch sees what stopped it (128 + N).
    std::signal(signo, SIG_DFL);
    sigset_t only;
    sigemptyset(&only);
    sigaddset(&only, signo);
    ::pthread_sigmask(SIG_UNBLOCK, &only, nullptr);
    ::raise(signo);
    ::_exit(128 + signo);  // not reached: the default action of all three ends the process
}

}  // namespace

void end_cleanly_on_stop_signals(const std::string& command) {
    std::signal(SIGPIPE, SIG_IGN);
    const sigset_t set = stop_set();
    if (const int e = ::pthread_sigmask(SIG_BLOCK, &set, nullptr); e != 0) {
        throw internal_error(std::string("cannot block the stop signals: ") + std::strerror(e));
    }
    std::thread([set, command] {
        int signo = 0;
        while (::sigwait(&set, &signo) != 0) {}
        end_by(command, signo);
    }).detach();
}

}  // namespace rastrum::app
