#pragma once
// What the output tests write to: every kind of path an output may name (char devices, FIFOs,
// sockets, links), the users they run rastrum as, and small file systems that are full or
// read-only. Nothing here touches a system path: devices are made in the test's own folder.
#include <atomic>
#include <optional>
#include <string>
#include <thread>
#include <vector>

namespace rastrum::testing {

/// Who runs rastrum: the tests' own user, or nobody (through setpriv) when the tests run as root.
struct test_user {
    std::string name;    // for messages
    std::string runner;  // put in front of rastrum: "" or "setpriv --reuid=nobody ... "
};

bool running_as_root();
/// Root itself; nullopt when the tests do not run as root.
std::optional<test_user> root_user();
/// A user without root's power over files: this one when not root, else nobody through setpriv.
/// nullopt, with the reason in `why_not`, when setpriv cannot run.
std::optional<test_user> unprivileged_user(std::string& why_not);

/// A fresh folder that every user may write in (mode 0777).
std::string open_folder(const std::string& name);

/// A character device like /dev/null (1,3), made at `path` with mknod; false (nothing made) when
/// this process may not make devices or the file system does not allow writing to them.
bool make_null_device(const std::string& path);
void make_fifo(const std::string& path);
/// A bound Unix socket at `path` (left in place, closed).
void make_socket(const std::string& path);

/// Reads all that is written into a FIFO, on a thread of its own, from construction until
/// finish() (which unblocks a reader that no writer ever opened).
class fifo_reader {
public:
    explicit fifo_reader(std::string path);
    ~fifo_reader();
    std::string finish();

private:
    std::string path_;
    std::string got_;
    std::atomic<bool> read_all_{false};
    bool joined_ = false;
    std::thread thread_;
};

/// A tmpfs of `size` (such as "64k") mounted on `folder` for one test: `read_only` after `files`
/// (name, text) are written into it, or filled up to the last byte with `full`. Unmounted, lazily
/// if it is still in use, whatever the test does. Needs root; `why_not` says why when not mounted.
class small_file_system {
public:
    struct options {
        std::string size = "64k";
        std::vector<std::pair<std::string, std::string>> files;
        bool read_only = false;
        bool full = false;
    };
    small_file_system(std::string folder, const options& how);
    ~small_file_system();
    small_file_system(const small_file_system&) = delete;
    small_file_system& operator=(const small_file_system&) = delete;
    bool mounted() const { return mounted_ && why_not_.empty(); }
    const std::string& why_not() const { return why_not_; }

private:
    std::string folder_;
    bool mounted_ = false;
    std::string why_not_;
};

/// Names in `folder` (not below) that look like a temporary of rastrum's (".tmp-").
std::vector<std::string> temporaries_in(const std::string& folder);
/// The HDF5 file signature at the start of `bytes`.
bool starts_like_hdf5(const std::string& bytes);

}  // namespace rastrum::testing
