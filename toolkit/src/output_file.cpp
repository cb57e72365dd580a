#include <rastrum/errors.hpp>
#include <rastrum/output_file.hpp>
#include <rastrum/temporary_files.hpp>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <fcntl.h>
#include <filesystem>
#include <iostream>
#include <set>
#include <sys/stat.h>
#include <unistd.h>

namespace rastrum {

namespace fs = std::filesystem;

namespace {

constexpr int max_links = 40;  // as the kernel's own limit on a path's symbolic links

std::string system_reason(int code) { return std::strerror(code); }

// Paths that name one of this process's open files (/dev/stdout -> /proc/self/fd/1) rather than a
// place in a folder: their links lead to "pipe:[N]" or to a file someone else opened, which a
// rename must never replace.
bool names_an_open_file(const std::string& path) {
    return path.rfind("/proc/", 0) == 0 || path.rfind("/dev/fd/", 0) == 0 || path == "/dev/stdout" ||
           path == "/dev/stderr" || path == "/dev/stdin";
}

// The descriptor `path` names when it is one of this process's own (/dev/stdout, /dev/stderr, and
// /proc/PID/fd/N, which /dev/fd/N and /proc/self/fd/N become with their folder made canonical);
// -1 otherwise.
int own_descriptor(const std::string& path) {
    if (path == "/dev/stdout") return 1;
    if (path == "/dev/stderr") return 2;
    if (path == "/dev/stdin") return 0;  // refused below unless it was opened for writing
    const std::string prefix = "/proc/" + std::to_string(::getpid()) + "/fd/";
    if (path.compare(0, prefix.size(), prefix) != 0) return -1;
    const std::string number = path.substr(prefix.size());
    if (number.empty() || number.size() > 9 || number.find_first_not_of("0123456789") != std::string::npos) return -1;
    return std::stoi(number);
}

// A stream to descriptor `fd`, which must be open for writing.
output_target descriptor_target(const std::string& path, const std::string& final_path, int fd) {
    const int flags = ::fcntl(fd, F_GETFL);
    if (flags < 0) throw output_error(path, "not an open file of this process (descriptor " + std::to_string(fd) + ")");
    if ((flags & O_ACCMODE) == O_RDONLY) throw output_error(path, "descriptor " + std::to_string(fd) + " is open for reading only");
    return {path, final_path, output_method::stream, fd};
}

// `path` with its folder made canonical (every link on the way resolved), the last part kept. A
// folder that is missing or cannot be reached is the file system's answer, not a usage error.
fs::path with_canonical_folder(const fs::path& path, const std::string& shown) {
    const fs::path folder = path.has_parent_path() ? path.parent_path() : fs::path(".");
    std::error_code ec;
    const fs::path canonical = fs::canonical(folder, ec);
    if (ec == std::errc::permission_denied) throw output_error(shown, "cannot reach folder " + folder.string() + ": " + ec.message());
    if (ec || !fs::is_directory(canonical, ec)) throw output_error(shown, "folder " + folder.string() + " does not exist");
    return canonical / path.filename();
}

void write_all(int fd, const char* data, std::size_t size, const std::string& shown) {
    while (size > 0) {
        const ssize_t n = ::write(fd, data, size);
        if (n < 0) {
            if (errno == EINTR) continue;
            throw output_error(shown, system_reason(errno));
        }
        data += n;
        size -= static_cast<std::size_t>(n);
    }
}

void close_checked(int fd, const std::string& shown) {
    // A network file system may report a failed write only here.
    if (::close(fd) != 0 && errno != EINTR) throw output_error(shown, system_reason(errno));
}

// Makes an empty file at `path` that did not exist, registered before it exists so that a signal
// in between finds nothing to remove rather than missing it.
void create_temporary(const std::string& path, const std::string& shown, const std::string& where) {
    register_temporary(path);
    const int fd = ::open(path.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
    if (fd < 0) {
        const int code = errno;
        forget_temporary(path);
        throw output_error(shown, where + system_reason(code));
    }
    close_checked(fd, shown);
}

std::string scratch_folder() {
    std::error_code ec;
    const fs::path folder = fs::temp_directory_path(ec);  // $TMPDIR, else /tmp
    return ec ? std::string("/tmp") : folder.string();
}

constexpr const char* scratch_name = "rastrum-scratch";

}  // namespace

output_target output_target::replacing(const std::string& path) { return {path, path, output_method::replace}; }

bool output_target::is_standard_output() const {
    if (method != output_method::stream) return false;
    if (descriptor == 1) return true;
    struct stat named {}, out {};
    const int found = descriptor >= 0 ? ::fstat(descriptor, &named) : ::stat(final_path.c_str(), &named);
    return found == 0 && ::fstat(1, &out) == 0 && named.st_dev == out.st_dev && named.st_ino == out.st_ino;
}

output_target resolve_output(const std::string& path, const std::string& option) {
    if (path.empty()) throw usage_error(option + ": empty path; name a file, or '-' for standard output");
    if (path == "-") return descriptor_target(path, "standard output", 1);
    if (fs::path(path).filename().empty()) throw usage_error(option + " " + path + " names a folder; name a file");
    // The links of the last part are followed one at a time: a link's target is what a rename
    // must replace, so that the link itself is kept.
    fs::path p = with_canonical_folder(path, path);
    bool open_file = names_an_open_file(p.string());
    for (int hop = 0; !open_file; ++hop) {
        std::error_code ec;
        if (!fs::is_symlink(fs::symlink_status(p, ec))) break;
        if (hop == max_links) throw usage_error(option + " " + path + ": too many levels of symbolic links");
        const fs::path target = fs::read_symlink(p, ec);
        if (ec) throw output_error(path, "cannot read the link " + p.string() + ": " + ec.message());
        p = with_canonical_folder(target.is_absolute() ? target : p.parent_path() / target, path);
        open_file = names_an_open_file(p.string());
    }
    if (const int fd = own_descriptor(p.string()); fd >= 0) return descriptor_target(path, p.string(), fd);
    struct stat st {};
    if (::stat(p.c_str(), &st) != 0) {
        const int code = errno;
        if (code == ENOENT && p.parent_path() == "/dev") {
            // /dev/nul for /dev/null: a regular file among the devices would stand in for one.
            throw usage_error(option + " " + path + " does not exist, and rastrum makes no files in /dev (a device name mistyped?)");
        }
        if (code == ENOENT && !open_file) return {path, p.string(), output_method::replace};  // made by the run
        throw output_error(path, system_reason(code));
    }
    if (S_ISDIR(st.st_mode)) throw usage_error(option + " " + path + " is a folder; name a file");
    if (S_ISSOCK(st.st_mode)) throw usage_error(option + " " + path + " is a socket; name a file, a FIFO or a character device");
    if (S_ISBLK(st.st_mode)) throw usage_error(option + " " + path + " is a block device (a disk); rastrum does not write to disks directly");
    if (S_ISREG(st.st_mode) && !open_file) return {path, p.string(), output_method::replace};
    return {path, p.string(), output_method::stream};
}

void check_output_targets(const std::vector<output_target>& targets, const std::vector<std::string>& inputs) {
    std::set<fs::path> input_paths, replaced;
    std::set<std::pair<dev_t, ino_t>> input_files;  // also reached by another name: a hard link, /dev/fd/N
    std::error_code ec;
    for (const auto& in: inputs) {
        input_paths.insert(fs::weakly_canonical(in, ec));
        struct stat st {};
        if (::stat(in.c_str(), &st) == 0 && S_ISREG(st.st_mode)) input_files.emplace(st.st_dev, st.st_ino);
    }
    for (const auto& t: targets) {
        struct stat st {};
        const int found = t.descriptor >= 0 ? ::fstat(t.descriptor, &st) : ::stat(t.final_path.c_str(), &st);
        if (found == 0 && input_files.count({st.st_dev, st.st_ino})) {
            throw usage_error("output " + t.path + " would overwrite an input");
        }
        if (t.method != output_method::replace) continue;
        const fs::path final_path = fs::weakly_canonical(t.final_path, ec);
        if (input_paths.count(final_path)) throw usage_error("output " + t.path + " would overwrite an input");
        if (!replaced.insert(final_path).second) throw usage_error("output " + t.path + " is named twice");
    }
}

output_file::output_file(output_target target, content kind): target_(std::move(target)), kind_(kind) {
    if (target_.method == output_method::replace) {
        const fs::path final_path(target_.final_path);
        const std::string folder = final_path.has_parent_path() ? final_path.parent_path().string() : ".";
        remove_stale_temporaries(folder, final_path.filename().string());
        temporary_ = temporary_name_for(target_.final_path);
        create_temporary(temporary_, target_.path, "");
        return;
    }
    if (target_.descriptor < 0 && ::access(target_.final_path.c_str(), W_OK) != 0) {
        throw output_error(target_.path, system_reason(errno));
    }
    if (kind_ == content::by_path) {
        const std::string folder = scratch_folder();
        remove_stale_temporaries(folder, scratch_name);
        temporary_ = temporary_name_for((fs::path(folder) / scratch_name).string());
        create_temporary(temporary_, target_.path, "cannot make a scratch file in " + folder + ": ");
    }
}

output_file::output_file(output_file&& other) noexcept:
    target_(std::move(other.target_)), kind_(other.kind_), temporary_(std::move(other.temporary_)), finished_(other.finished_) {
    other.finished_ = true;  // the moved-from object owns nothing to clean up
}

output_file::~output_file() { discard(); }

void output_file::discard() {
    if (finished_ || temporary_.empty()) return;
    std::remove(temporary_.c_str());
    forget_temporary(temporary_);
    finished_ = true;
}

void output_file::write_temporary(const std::string& text) {
    const int fd = ::open(temporary_.c_str(), O_WRONLY | O_TRUNC | O_CLOEXEC);
    if (fd < 0) throw output_error(target_.path, system_reason(errno));
    try {
        write_all(fd, text.data(), text.size(), target_.path);
    } catch (...) {
        ::close(fd);
        throw;
    }
    close_checked(fd, target_.path);
}

void output_file::send(const std::string* text) {
    const bool own = target_.descriptor >= 0;
    int fd = target_.descriptor;
    if (own) {
        std::cout.flush();  // what the command printed before comes first
    } else {
        // Appending, never truncating: what a FIFO's or device's other writers wrote stays.
        fd = ::open(target_.final_path.c_str(), O_WRONLY | O_APPEND | O_NOCTTY | O_CLOEXEC);
        if (fd < 0) throw output_error(target_.path, system_reason(errno));
    }
    try {
        if (text) {
            write_all(fd, text->data(), text->size(), target_.path);
        } else {
            const int in = ::open(temporary_.c_str(), O_RDONLY | O_CLOEXEC);
            if (in < 0) throw output_error(target_.path, "cannot read back its scratch file: " + system_reason(errno));
            char buffer[1 << 16];
            ssize_t n = 0;
            while ((n = ::read(in, buffer, sizeof buffer)) != 0) {
                if (n < 0 && errno == EINTR) continue;
                if (n < 0) {
                    const int code = errno;
                    ::close(in);
                    throw output_error(target_.path, "cannot read back its scratch file: " + system_reason(code));
                }
                try {
                    write_all(fd, buffer, static_cast<std::size_t>(n), target_.path);
                } catch (...) {
                    ::close(in);
                    throw;
                }
            }
            ::close(in);
        }
    } catch (...) {
        if (!own) ::close(fd);
        throw;
    }
    if (!own) close_checked(fd, target_.path);
    discard();  // the scratch file, if any
    finished_ = true;
}

void output_file::rename_into_place() {
    if (std::rename(temporary_.c_str(), target_.final_path.c_str()) != 0) throw output_error(target_.path, system_reason(errno));
    forget_temporary(temporary_);
    finished_ = true;
}

void finish_outputs(const std::vector<std::pair<output_file*, const std::string*>>& outputs) {
    for (const auto& [file, text]: outputs) {
        if ((file->kind_ == output_file::content::text) != (text != nullptr)) {
            throw internal_error("finish_outputs: text given for a file written by path, or missing for a text output");
        }
        if (file->finished_) throw internal_error("finish_outputs: " + file->target().path + " is finished already");
        if (text && file->target().method == output_method::replace) file->write_temporary(*text);
    }
    for (const auto& [file, text]: outputs) {
        if (file->target().method != output_method::replace) file->send(text);
    }
    const temporaries_held hold;  // every rename, or none if a signal came first
    for (const auto& [file, text]: outputs) {
        if (file->target().method == output_method::replace) file->rename_into_place();
    }
}

}  // namespace rastrum
