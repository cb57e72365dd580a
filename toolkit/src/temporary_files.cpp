#include <rastrum/temporary_files.hpp>

#include <atomic>
#include <cerrno>
#include <csignal>
#include <filesystem>
#include <mutex>
#include <set>
#include <sys/types.h>
#include <unistd.h>

namespace rastrum {

namespace fs = std::filesystem;

namespace {

// Never destroyed: a signal may arrive while static objects are being torn down at exit.
struct registry {
    std::recursive_mutex lock;
    std::set<std::string> paths;
};

registry& the_registry() {
    static registry* const r = new registry;
    return *r;
}

bool all_digits(const std::string& text) {
    return !text.empty() && text.find_first_not_of("0123456789") == std::string::npos;
}

// The PID of a temporary of `name` ("NAME.tmp-PID-N" or "NAME.tmp-PID"), 0 when `file` is not one.
pid_t owner_of(const std::string& file, const std::string& name) {
    const std::string prefix = name + ".tmp-";
    if (file.size() <= prefix.size() || file.compare(0, prefix.size(), prefix) != 0) return 0;
    const std::string rest = file.substr(prefix.size());
    const auto dash = rest.find('-');
    const std::string pid = rest.substr(0, dash);
    if (!all_digits(pid) || pid.size() > 9) return 0;
    if (dash != std::string::npos && !all_digits(rest.substr(dash + 1))) return 0;
    return static_cast<pid_t>(std::stol(pid));
}

// EPERM: the process exists but belongs to someone else, so it is alive.
bool running(pid_t pid) { return ::kill(pid, 0) == 0 || errno == EPERM; }

}  // namespace

std::string temporary_name_for(const std::string& final_path) {
    static std::atomic<unsigned long> serial{0};
    return final_path + ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(serial.fetch_add(1));
}

void register_temporary(const std::string& path) {
    registry& r = the_registry();
    const std::lock_guard<std::recursive_mutex> hold(r.lock);
    r.paths.insert(path);
}

void forget_temporary(const std::string& path) {
    registry& r = the_registry();
    const std::lock_guard<std::recursive_mutex> hold(r.lock);
    r.paths.erase(path);
}

temporaries_held::temporaries_held() { the_registry().lock.lock(); }
temporaries_held::~temporaries_held() { the_registry().lock.unlock(); }

std::size_t remove_temporaries_and_hold() {
    registry& r = the_registry();
    r.lock.lock();  // never unlocked: the process ends next
    std::size_t removed = 0;
    for (const auto& path: r.paths) {
        std::error_code ec;
        const auto status = fs::symlink_status(path, ec);
        if (fs::is_directory(status)) {
            removed += fs::remove_all(path, ec) > 0;
        } else {
            removed += fs::remove(path, ec);
        }
    }
    r.paths.clear();
    return removed;
}

void remove_stale_temporaries(const std::string& folder, const std::string& name) {
    std::error_code ec;
    fs::directory_iterator it(folder.empty() ? "." : folder, ec);
    for (; !ec && it != fs::directory_iterator(); it.increment(ec)) {
        const pid_t pid = owner_of(it->path().filename().string(), name);
        if (pid <= 0 || running(pid)) continue;
        std::error_code ignored;
        // A folder only when it is a real one (a figures folder under way), never through a link.
        if (fs::is_directory(it->symlink_status(ignored))) {
            fs::remove_all(it->path(), ignored);
        } else {
            fs::remove(it->path(), ignored);
        }
    }
}

}  // namespace rastrum
