#include <rastrum/child_process.hpp>
#include <rastrum/errors.hpp>

#include <cerrno>
#include <chrono>
#include <csignal>
#include <cstring>
#include <fcntl.h>
#include <poll.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <unistd.h>

namespace rastrum {

namespace {

constexpr std::size_t kept_output = 64 * 1024;
const int stop_signals[] = {SIGINT, SIGTERM, SIGHUP};

volatile std::sig_atomic_t received_signal = 0;
int wake_pipe[2] = {-1, -1};
bool interruption_alive = false;
struct sigaction previous_actions[3];

extern "C" void note_signal(int signo) {
    if (received_signal == 0) received_signal = signo;
    const int saved = errno;
    const char byte = 1;
    [[maybe_unused]] const auto ignored = ::write(wake_pipe[1], &byte, 1);
    errno = saved;
}

void close_fd(int& fd) {
    if (fd >= 0) ::close(fd);
    fd = -1;
}

void keep_tail(std::string& text, const char* data, std::size_t size) {
    text.append(data, size);
    if (text.size() > 2 * kept_output) text.erase(0, text.size() - kept_output);
}

[[noreturn]] void report_and_exit(int report) {
    const int code = errno;
    [[maybe_unused]] const auto ignored = ::write(report, &code, sizeof code);
    ::_exit(127);
}

// What the child does between fork and exec: only async-signal-safe calls. Any failure is
// reported through `report` (close-on-exec, so a successful exec closes it unwritten).
[[noreturn]] void become_child(const char* program, char* const* argv, const char* folder, int out, int err, int report,
                               pid_t parent) {
    // The child must not outlive a batch that was killed outright.
    if (::prctl(PR_SET_PDEATHSIG, SIGTERM) != 0) report_and_exit(report);
    if (::getppid() != parent) ::_exit(128 + SIGTERM);
    sigset_t none;
    sigemptyset(&none);
    ::sigprocmask(SIG_SETMASK, &none, nullptr);
    const int null_in = ::open("/dev/null", O_RDONLY);
    if (null_in < 0 || ::dup2(null_in, 0) < 0 || ::dup2(out, 1) < 0 || ::dup2(err, 2) < 0) report_and_exit(report);
    if (folder[0] && ::chdir(folder) != 0) report_and_exit(report);
    ::execv(program, argv);
    report_and_exit(report);
}

}  // namespace

interruption::interruption() {
    if (interruption_alive) throw internal_error("only one interruption at a time");
    if (::pipe2(wake_pipe, O_CLOEXEC | O_NONBLOCK) != 0) throw error(std::string("cannot make a pipe: ") + std::strerror(errno));
    received_signal = 0;
    struct sigaction action {};
    action.sa_handler = note_signal;
    sigemptyset(&action.sa_mask);
    action.sa_flags = 0;  // no SA_RESTART: a blocking call returns, and the batch looks at the signal
    for (int i = 0; i < 3; ++i) ::sigaction(stop_signals[i], &action, &previous_actions[i]);
    interruption_alive = true;
}

interruption::~interruption() {
    for (int i = 0; i < 3; ++i) ::sigaction(stop_signals[i], &previous_actions[i], nullptr);
    close_fd(wake_pipe[0]);
    close_fd(wake_pipe[1]);
    interruption_alive = false;
}

int interruption::signal() const { return received_signal; }
int interruption::wake_fd() const { return wake_pipe[0]; }

child_result run_child(const std::string& program, const std::vector<std::string>& args, const std::string& folder,
                       const interruption* stop) {
    if (args.empty()) throw internal_error("run_child needs the child's name as args[0]");
    std::vector<std::string> owned(args);
    std::vector<char*> argv;
    for (auto& a: owned) argv.push_back(a.data());
    argv.push_back(nullptr);

    int out[2], err[2], report[2];
    if (::pipe2(out, O_CLOEXEC) != 0 || ::pipe2(err, O_CLOEXEC) != 0 || ::pipe2(report, O_CLOEXEC) != 0) {
        throw error(std::string("cannot make a pipe: ") + std::strerror(errno));
    }
    const auto started = std::chrono::steady_clock::now();
    const pid_t parent = ::getpid();
    const pid_t pid = ::fork();
    if (pid < 0) throw error(std::string("cannot start ") + program + ": " + std::strerror(errno));
    if (pid == 0) become_child(program.c_str(), argv.data(), folder.c_str(), out[1], err[1], report[1], parent);
    close_fd(out[1]);
    close_fd(err[1]);
    close_fd(report[1]);

    int exec_errno = 0;
    ssize_t got;
    do {
        got = ::read(report[0], &exec_errno, sizeof exec_errno);
    } while (got < 0 && errno == EINTR);
    close_fd(report[0]);

    child_result result;
    result.pid = pid;
    int signals_sent = 0;
    // The first signal asks the child to stop; another one while it is still running ends it.
    auto pass_on_stop = [&]() {
        char drain[64];
        while (::read(stop->wake_fd(), drain, sizeof drain) > 0) {}
        ::kill(pid, signals_sent++ == 0 ? SIGTERM : SIGKILL);
        result.interrupted = true;
    };
    pollfd fds[3] = {{out[0], POLLIN, 0}, {err[0], POLLIN, 0}, {stop ? stop->wake_fd() : -1, POLLIN, 0}};
    std::string* sinks[2] = {&result.out, &result.err};
    char buffer[8192];
    while (fds[0].fd >= 0 || fds[1].fd >= 0) {
        if (::poll(fds, 3, -1) < 0) {
            if (errno == EINTR) continue;
            break;
        }
        if (fds[2].revents & POLLIN) pass_on_stop();
        for (int i = 0; i < 2; ++i) {
            if (fds[i].fd < 0 || !(fds[i].revents & (POLLIN | POLLHUP | POLLERR))) continue;
            const ssize_t n = ::read(fds[i].fd, buffer, sizeof buffer);
            if (n > 0) {
                keep_tail(*sinks[i], buffer, static_cast<std::size_t>(n));
            } else if (n == 0 || errno != EINTR) {
                close_fd(fds[i].fd);
            }
        }
    }
    close_fd(fds[0].fd);
    close_fd(fds[1].fd);
    int status = 0;
    while (::waitpid(pid, &status, 0) < 0 && errno == EINTR) {
        if (stop && stop->signal()) pass_on_stop();
    }
    result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    if (exec_errno != 0) throw error("cannot run " + program + ": " + std::strerror(exec_errno));
    if (WIFEXITED(status)) result.exit_code = WEXITSTATUS(status);
    if (WIFSIGNALED(status)) result.signal = WTERMSIG(status);
    for (auto* text: sinks) {
        if (text->size() > kept_output) text->erase(0, text->size() - kept_output);
    }
    return result;
}

std::string describe_ending(const child_result& result) {
    if (result.exit_code) return "exit code " + std::to_string(*result.exit_code);
    if (result.signal) return "killed by signal " + std::to_string(*result.signal) + " (" + strsignal(*result.signal) + ")";
    return "ended in an unknown way";
}

}  // namespace rastrum
