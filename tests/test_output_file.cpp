// The library side of outputs (output_file.hpp, temporary_files.hpp): how a path is classified,
// several outputs finished all or none, unique temporary names from many threads, the registry a
// command empties on a signal, and the removal of stale temporaries. Design checks of the contract
// in the headers (common practice for atomic replacement: write beside, rename over).
#include <rastrum/errors.hpp>
#include <rastrum/output_file.hpp>
#include <rastrum/temporary_files.hpp>

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <sys/stat.h>
#include <sys/sysmacros.h>
#include <sys/wait.h>
#include <thread>
#include <unistd.h>

using namespace rastrum;
namespace fs = std::filesystem;

namespace {

std::string fresh(const std::string& name) {
    const std::string folder = std::string(RASTRUM_TEST_TMP) + "/output-file-" + name;
    fs::remove_all(folder);
    fs::create_directories(folder);
    return folder;
}

std::string text_of(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

std::vector<std::string> temporaries(const std::string& folder) {
    std::vector<std::string> found;
    for (const auto& e: fs::directory_iterator(folder)) {
        if (e.path().filename().string().find(".tmp-") != std::string::npos) found.push_back(e.path().filename().string());
    }
    return found;
}

}  // namespace

TEST(output_file, paths_are_classified_by_what_is_there) {
    const std::string f = fresh("classify");
    std::ofstream(f + "/file.json") << "old";
    fs::create_symlink("file.json", f + "/link.json");
    fs::create_symlink("later.json", f + "/dangling.json");
    fs::create_directory(f + "/folder");
    ASSERT_EQ(::mkfifo((f + "/fifo").c_str(), 0600), 0);

    const output_target absent = resolve_output(f + "/new.json", "--json");
    EXPECT_EQ(absent.method, output_method::replace);
    EXPECT_EQ(resolve_output(f + "/file.json", "--json").method, output_method::replace);
    const output_target link = resolve_output(f + "/link.json", "--json");
    EXPECT_EQ(link.method, output_method::replace);
    EXPECT_EQ(fs::path(link.final_path).filename(), "file.json") << "the link's target is what is replaced";
    EXPECT_EQ(fs::path(resolve_output(f + "/dangling.json", "--json").final_path).filename(), "later.json");
    EXPECT_EQ(resolve_output(f + "/fifo", "--json").method, output_method::stream);
    const output_target dash = resolve_output("-", "--json");
    EXPECT_EQ(dash.method, output_method::stream);
    EXPECT_EQ(dash.descriptor, 1);
    EXPECT_EQ(resolve_output("/dev/stdout", "--json").descriptor, 1);
    EXPECT_THROW(resolve_output(f + "/folder", "--json"), usage_error);
    EXPECT_THROW(resolve_output(f + "/", "--json"), usage_error);
    EXPECT_THROW(resolve_output("", "--json"), usage_error);
    EXPECT_THROW(resolve_output(f + "/no/such.json", "--json"), output_error);
    EXPECT_THROW(resolve_output("/dev/rastrum-no-such-device", "--json"), usage_error);
}

// A block device is refused before anything is opened (resolve_output writes nothing): made in the
// test's folder, as root only.
TEST(output_file, a_block_device_is_refused) {
    const std::string f = fresh("block");
    if (::mknod((f + "/disk").c_str(), S_IFBLK | 0600, makedev(7, 0)) != 0) GTEST_SKIP() << "cannot make a device node here (root only)";
    EXPECT_THROW(resolve_output(f + "/disk", "--h5"), usage_error);
    struct stat st {};
    EXPECT_TRUE(::stat((f + "/disk").c_str(), &st) == 0 && S_ISBLK(st.st_mode));
    fs::remove(f + "/disk");
}

TEST(output_file, outputs_finished_together_change_all_or_none) {
    const std::string f = fresh("together");
    std::ofstream(f + "/a.json") << "old a";
    std::ofstream(f + "/b.json") << "old b";
    {
        output_file a(resolve_output(f + "/a.json", "--json")), b(resolve_output(f + "/b.json", "--csv"));
        EXPECT_EQ(temporaries(f).size(), 2u) << "made before any work";
        // b's temporary becomes something that cannot be written: its write fails after a's.
        const std::string b_temporary = f + "/" + [&] {
            for (const auto& t: temporaries(f)) {
                if (t.rfind("b.json", 0) == 0) return t;
            }
            return std::string();
        }();
        fs::remove(b_temporary);
        fs::create_directory(b_temporary);
        const std::string new_a = "new a", new_b = "new b";
        EXPECT_THROW(finish_outputs({{&a, &new_a}, {&b, &new_b}}), output_error);
        fs::remove(b_temporary);
    }
    EXPECT_EQ(text_of(f + "/a.json"), "old a") << "renamed although b failed";
    EXPECT_EQ(text_of(f + "/b.json"), "old b");
    EXPECT_TRUE(temporaries(f).empty());
    {
        output_file a(resolve_output(f + "/a.json", "--json")), b(resolve_output(f + "/b.json", "--csv"));
        const std::string new_a = "new a", new_b = "new b";
        finish_outputs({{&a, &new_a}, {&b, &new_b}});
    }
    EXPECT_EQ(text_of(f + "/a.json"), "new a");
    EXPECT_EQ(text_of(f + "/b.json"), "new b");
    EXPECT_TRUE(temporaries(f).empty());
}

// The counter behind OUT.tmp-PID-N is shared by every thread: no two names alike.
TEST(output_file, temporary_names_are_unique_across_threads) {
    constexpr int threads = 8, each = 20000;
    std::vector<std::vector<std::string>> names(threads);
    std::vector<std::thread> workers;
    for (int t = 0; t < threads; ++t) {
        workers.emplace_back([&names, t] {
            for (int i = 0; i < each; ++i) names[t].push_back(temporary_name_for("out.json"));
        });
    }
    for (auto& w: workers) w.join();
    std::set<std::string> distinct;
    for (const auto& list: names) distinct.insert(list.begin(), list.end());
    EXPECT_EQ(distinct.size(), static_cast<std::size_t>(threads * each));
    EXPECT_EQ(names[0][0].rfind("out.json.tmp-" + std::to_string(::getpid()) + "-", 0), 0u) << names[0][0];
}

// What a command's signal handling calls: every registered temporary removed (a folder with its
// contents), none after forget_temporary. In a child process, since the registry stays held.
TEST(output_file, registered_temporaries_are_removed_for_a_signal) {
    const std::string f = fresh("registry");
    std::ofstream(f + "/x.tmp-1-0") << "x";
    std::ofstream(f + "/kept.tmp-1-1") << "renamed already";
    fs::create_directory(f + "/report.tmp-1-2");
    std::ofstream(f + "/report.tmp-1-2/index.html") << "partial";
    const pid_t child = ::fork();
    if (child == 0) {
        register_temporary(f + "/x.tmp-1-0");
        register_temporary(f + "/kept.tmp-1-1");
        register_temporary(f + "/report.tmp-1-2");
        forget_temporary(f + "/kept.tmp-1-1");
        ::_exit(remove_temporaries_and_hold() == 2 ? 0 : 1);
    }
    int status = 0;
    ASSERT_EQ(::waitpid(child, &status, 0), child);
    EXPECT_TRUE(WIFEXITED(status) && WEXITSTATUS(status) == 0);
    EXPECT_FALSE(fs::exists(f + "/x.tmp-1-0"));
    EXPECT_FALSE(fs::exists(f + "/report.tmp-1-2"));
    EXPECT_TRUE(fs::exists(f + "/kept.tmp-1-1"));
}

TEST(output_file, stale_temporaries_of_dead_processes_only_are_removed) {
    const std::string f = fresh("stale");
    // A child that has ended and been reaped: its PID names no process (until the kernel reuses it,
    // which it does only after going round every other PID).
    const pid_t dead = ::fork();
    if (dead == 0) ::_exit(0);
    ::waitpid(dead, nullptr, 0);
    const std::string d = std::to_string(dead), alive = std::to_string(::getpid());
    for (const std::string& name: std::vector<std::string>{"r.json.tmp-" + d + "-0", "r.json.tmp-" + d, "r.json.tmp-" + alive + "-3",
                                                           "r.json.tmp-" + d + "-x", "r.json.tmp-", "q.json.tmp-" + d + "-0"}) {
        std::ofstream(f + "/" + name) << "x";
    }
    remove_stale_temporaries(f, "r.json");
    auto left = temporaries(f);
    std::sort(left.begin(), left.end());
    EXPECT_EQ(left, (std::vector<std::string>{"q.json.tmp-" + d + "-0", "r.json.tmp-", "r.json.tmp-" + alive + "-3", "r.json.tmp-" + d + "-x"}));
}
