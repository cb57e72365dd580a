#include "output_kinds.hpp"

#include <cerrno>
#include <chrono>
#include <cstdlib>
#include <cstring>
#include <fcntl.h>
#include <filesystem>
#include <fstream>
#include <stdexcept>
#include <sys/mount.h>
#include <sys/socket.h>
#include <sys/stat.h>
#include <sys/sysmacros.h>
#include <sys/un.h>
#include <unistd.h>

namespace rastrum::testing {

namespace fs = std::filesystem;

namespace {
constexpr const char* as_nobody = "setpriv --reuid=nobody --regid=nogroup --clear-groups ";

[[noreturn]] void fail(const std::string& what) { throw std::runtime_error(what + ": " + std::strerror(errno)); }
}  // namespace

bool running_as_root() { return ::geteuid() == 0; }

std::optional<test_user> root_user() {
    if (!running_as_root()) return std::nullopt;
    return test_user{"root", ""};
}

std::optional<test_user> unprivileged_user(std::string& why_not) {
    if (!running_as_root()) return test_user{"this user (not root)", ""};
    if (std::system((std::string(as_nobody) + "true >/dev/null 2>&1").c_str()) != 0) {
        why_not = "running as root, and 'setpriv --reuid=nobody' cannot run here to act as an unprivileged user";
        return std::nullopt;
    }
    // A checkout in a folder closed to others (root's home, /root, is 700 on Debian) keeps nobody from
    // the program and the tests' folders: what would fail then is the test's setting, not rastrum.
    const std::string reach = std::string(as_nobody) + "sh -c \"test -x '" + RASTRUM_BINARY + "' && cd '" +
                              RASTRUM_TEST_TMP + "'\" >/dev/null 2>&1";
    if (std::system(reach.c_str()) != 0) {
        why_not = std::string("running as root, and the unprivileged user nobody cannot reach ") + RASTRUM_BINARY +
                  " or " + RASTRUM_TEST_TMP + " (a folder above them is closed to others): build in a folder others " +
                  "may enter to run these checks";
        return std::nullopt;
    }
    return test_user{"nobody", as_nobody};
}

std::string open_folder(const std::string& name) {
    const std::string folder = std::string(RASTRUM_TEST_TMP) + "/" + name;
    fs::remove_all(folder);
    fs::create_directories(folder);
    fs::permissions(folder, fs::perms::all);
    return folder;
}

bool make_null_device(const std::string& path) {
    if (::mknod(path.c_str(), S_IFCHR | 0666, makedev(1, 3)) != 0) return false;
    ::chmod(path.c_str(), 0666);  // past the umask, so that an unprivileged user may write too
    const int fd = ::open(path.c_str(), O_WRONLY);  // a file system mounted nodev refuses
    if (fd < 0) {
        ::unlink(path.c_str());
        return false;
    }
    ::close(fd);
    return true;
}

void make_fifo(const std::string& path) {
    if (::mkfifo(path.c_str(), 0666) != 0) fail("mkfifo " + path);
    ::chmod(path.c_str(), 0666);
}

void make_socket(const std::string& path) {
    sockaddr_un address{};
    address.sun_family = AF_UNIX;
    if (path.size() >= sizeof address.sun_path) throw std::runtime_error("socket path too long: " + path);
    std::strcpy(address.sun_path, path.c_str());
    const int fd = ::socket(AF_UNIX, SOCK_STREAM, 0);
    if (fd < 0) fail("socket");
    if (::bind(fd, reinterpret_cast<const sockaddr*>(&address), sizeof address) != 0) fail("bind " + path);
    ::close(fd);
}

fifo_reader::fifo_reader(std::string path): path_(std::move(path)) {
    thread_ = std::thread([this] {
        const int fd = ::open(path_.c_str(), O_RDONLY);  // blocks until a writer opens it
        if (fd >= 0) {
            char buffer[65536];
            ssize_t n = 0;
            while ((n = ::read(fd, buffer, sizeof buffer)) > 0) got_.append(buffer, static_cast<std::size_t>(n));
            ::close(fd);
        }
        read_all_ = true;
    });
}

std::string fifo_reader::finish() {
    if (joined_) return got_;
    // A reader still waiting for a writer (rastrum never opened the FIFO) is let go by one that
    // opens and closes it; opening without blocking fails while no reader is there yet.
    while (!read_all_) {
        const int fd = ::open(path_.c_str(), O_WRONLY | O_NONBLOCK);
        if (fd >= 0) ::close(fd);
        std::this_thread::sleep_for(std::chrono::milliseconds(5));
    }
    thread_.join();
    joined_ = true;
    return got_;
}

fifo_reader::~fifo_reader() { finish(); }

small_file_system::small_file_system(std::string folder, const options& how): folder_(std::move(folder)) {
    if (!running_as_root()) {
        why_not_ = "not running as root, so no file system can be mounted";
        return;
    }
    fs::create_directories(folder_);
    const std::string data = "size=" + how.size + ",mode=0777";
    if (::mount("tmpfs", folder_.c_str(), "tmpfs", MS_NOSUID | MS_NODEV, data.c_str()) != 0) {
        why_not_ = std::string("mount -t tmpfs failed: ") + std::strerror(errno);
        return;
    }
    mounted_ = true;
    for (const auto& [name, text]: how.files) std::ofstream(folder_ + "/" + name, std::ios::binary) << text;
    if (how.full) {
        // Until the file system refuses: then not one more byte fits.
        std::ofstream filler(folder_ + "/filler", std::ios::binary);
        const std::string block(4096, 'x');
        while (filler.write(block.data(), static_cast<std::streamsize>(block.size())) && filler.flush()) {}
        std::ofstream last(folder_ + "/filler-tail", std::ios::binary);
        while (last.put('x') && last.flush()) {}
    }
    if (how.read_only &&
        ::mount(nullptr, folder_.c_str(), nullptr, MS_REMOUNT | MS_RDONLY | MS_NOSUID | MS_NODEV, data.c_str()) != 0) {
        why_not_ = std::string("remounting read-only failed: ") + std::strerror(errno);
    }
}

small_file_system::~small_file_system() {
    if (mounted_) ::umount2(folder_.c_str(), MNT_DETACH);
}

std::vector<std::string> temporaries_in(const std::string& folder) {
    std::vector<std::string> found;
    std::error_code ec;
    for (fs::directory_iterator it(folder, ec); !ec && it != fs::directory_iterator(); it.increment(ec)) {
        const std::string name = it->path().filename().string();
        if (name.find(".tmp-") != std::string::npos) found.push_back(name);
    }
    return found;
}

bool starts_like_hdf5(const std::string& bytes) { return bytes.rfind("\x89HDF\r\n\x1a\n", 0) == 0; }

}  // namespace rastrum::testing
