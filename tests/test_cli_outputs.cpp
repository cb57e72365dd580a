// Output paths (notes/robustness.md, "Output paths"): what is at an output's path before the run
// decides how it is written, for every file output of every command and for the figures folder,
// as root and as an unprivileged user. Design checks of the documented policy: a file (or a
// symlink's target) is replaced whole, a device or FIFO is written and stays what it was, a folder,
// socket or empty name is a usage error (exit 2). The outputs' numbers are other tests' business;
// here an output need only be whole.
#include "cli_runner.hpp"
#include "output_kinds.hpp"
#include "output_slots.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <functional>
#include <fstream>
#include <sys/stat.h>

using namespace rastrum::testing;
namespace fs = std::filesystem;

namespace {

bool is_char_device(const std::string& path) {
    struct stat st {};
    return ::stat(path.c_str(), &st) == 0 && S_ISCHR(st.st_mode);
}

bool is_socket(const std::string& path) {
    struct stat st {};
    return ::lstat(path.c_str(), &st) == 0 && S_ISSOCK(st.st_mode);
}

void write_text(const std::string& path, const std::string& text) {
    std::ofstream(path, std::ios::binary) << text;
    fs::permissions(path, fs::perms::owner_read | fs::perms::owner_write | fs::perms::group_read | fs::perms::group_write |
                              fs::perms::others_read | fs::perms::others_write);
}

// A symlink to a regular file: the file behind it is replaced, the link stays a link to it.
void replaced_through_a_link(const output_slot& slot, const test_user& user, const std::string& folder) {
    const std::string target = "real" + fs::path(slot.file_name).extension().string();
    write_text(folder + "/" + target, "old\n");
    fs::create_symlink(target, folder + "/" + slot.file_name);
    const auto r = run_rastrum_via(user.runner, slot.command(folder + "/" + slot.file_name));
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(fs::is_symlink(folder + "/" + slot.file_name));
    std::error_code ec;
    EXPECT_EQ(fs::read_symlink(folder + "/" + slot.file_name, ec), target);
    EXPECT_TRUE(looks_whole(slot, read_file(folder + "/" + target)));
    EXPECT_TRUE(temporaries_in(folder).empty());
}

// A link to nothing yet: the file it names is made, the link kept.
void made_through_a_dangling_link(const output_slot& slot, const test_user& user, const std::string& folder) {
    const std::string target = "made" + fs::path(slot.file_name).extension().string();
    fs::create_symlink(target, folder + "/" + slot.file_name);
    const auto r = run_rastrum_via(user.runner, slot.command(folder + "/" + slot.file_name));
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(fs::is_symlink(folder + "/" + slot.file_name));
    EXPECT_TRUE(looks_whole(slot, read_file(folder + "/" + target)));
}

// A device like /dev/null, made in the test's folder (the real /dev/null is never put at risk):
// written, and still a device afterwards.
void written_into_a_device(const output_slot& slot, const test_user& user, const std::string& folder) {
    const std::string device = folder + "/" + slot.file_name;
    if (!make_null_device(device)) {
        // Without root no device can be made; the real /dev/null is then safe to name (this user
        // cannot replace it), where the command takes any name.
        if (running_as_root() || !slot.may_be_standard_output) return;
        const auto r = run_rastrum_via(user.runner, slot.command("/dev/null"));
        EXPECT_EQ(r.exit_code, 0) << r.err;
        EXPECT_TRUE(is_char_device("/dev/null"));
        return;
    }
    const auto r = run_rastrum_via(user.runner, slot.command(device));
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(is_char_device(device)) << "replaced by a regular file";
    EXPECT_TRUE(temporaries_in(folder).empty());
}

// A FIFO: the whole output arrives through it (HDF5 through a scratch file), and it stays a FIFO.
void streamed_into_a_fifo(const output_slot& slot, const test_user& user, const std::string& folder) {
    const std::string fifo = folder + "/" + slot.file_name;
    make_fifo(fifo);
    fifo_reader reader(fifo);
    const auto r = run_rastrum_via(user.runner, slot.command(fifo));
    const std::string got = reader.finish();
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_TRUE(fs::is_fifo(fifo)) << "replaced by a regular file";
    EXPECT_TRUE(looks_whole(slot, got)) << got.substr(0, 200);
    EXPECT_TRUE(temporaries_in(folder).empty());
    if (slot.name == "synth --out" || slot.name == "convert --out") {
        // The recording that went through the FIFO reads back.
        write_text(folder + "/copy.h5", got);
        const auto survey = run_rastrum("survey " + shell_quoted(folder + "/copy.h5"));
        EXPECT_EQ(survey.exit_code, 0) << survey.err;
    }
}

// '-', /dev/fd/1 and /dev/stdout: the output is all that reaches standard output (the table stays
// away). /dev/stdout only for an unprivileged user, who could not replace it even where the
// check is missing (as a version without it did, run as root: the issue behind these tests).
void sent_to_standard_output(const output_slot& slot, const test_user& user) {
    std::vector<std::string> names = {"-", "/dev/fd/1"};
    if (!user.runner.empty() || !running_as_root()) names.push_back("/dev/stdout");
    for (const std::string& name: names) {
        SCOPED_TRACE(name);
        const auto r = run_rastrum_via(user.runner, slot.command(name));
        EXPECT_EQ(r.exit_code, 0) << r.err;
        EXPECT_TRUE(looks_whole(slot, r.out)) << r.out.substr(0, 200);
    }
}

// A folder, a socket or an empty name: exit 2 before any work, and the thing named left alone.
void refused(const output_slot& slot, const test_user& user, const std::string& folder) {
    const std::string path = folder + "/" + slot.file_name;
    fs::create_directory(path);
    const auto into_folder = run_rastrum_via(user.runner, slot.command(path));
    EXPECT_EQ(into_folder.exit_code, 2) << into_folder.err;
    EXPECT_NE(into_folder.err.find("is a folder"), std::string::npos) << into_folder.err;
    EXPECT_TRUE(fs::is_directory(path) && fs::is_empty(path));
    fs::remove(path);

    make_socket(path);
    const auto into_socket = run_rastrum_via(user.runner, slot.command(path));
    EXPECT_EQ(into_socket.exit_code, 2) << into_socket.err;
    EXPECT_NE(into_socket.err.find("is a socket"), std::string::npos) << into_socket.err;
    EXPECT_TRUE(is_socket(path));

    if (slot.path_is_named) {
        const auto empty = run_rastrum_via(user.runner, slot.command(""));
        EXPECT_EQ(empty.exit_code, 2) << empty.err;
        EXPECT_NE(empty.err.find(slot.option + ": empty path"), std::string::npos) << empty.err;
    }
}

void every_kind_of_path(const test_user& user, const std::string& tag) {
    const auto slots = file_output_slots();
    for (std::size_t i = 0; i < slots.size(); ++i) {
        const output_slot& slot = slots[i];
        const std::string base = "outputs-" + tag + "-" + std::to_string(i);
        SCOPED_TRACE(slot.name + " as " + user.name);
        replaced_through_a_link(slot, user, open_folder(base + "-link"));
        made_through_a_dangling_link(slot, user, open_folder(base + "-dangling"));
        written_into_a_device(slot, user, open_folder(base + "-device"));
        streamed_into_a_fifo(slot, user, open_folder(base + "-fifo"));
        if (slot.may_be_standard_output) sent_to_standard_output(slot, user);
        refused(slot, user, open_folder(base + "-refused"));
    }
}

}  // namespace

TEST(cli_outputs, every_kind_of_output_path_as_root) {
    const auto root = root_user();
    if (!root) GTEST_SKIP() << "not running as root: the root half of this test needs root (the other half runs)";
    every_kind_of_path(*root, "root");
}

TEST(cli_outputs, every_kind_of_output_path_as_an_unprivileged_user) {
    std::string why_not;
    const auto user = unprivileged_user(why_not);
    if (!user) GTEST_SKIP() << why_not;
    every_kind_of_path(*user, "user");
}

// A name in /dev that is not there is a typo (/dev/nul), never a new regular file among the devices.
// Run as an unprivileged user, who could not make one even where the check is missing.
TEST(cli_outputs, a_missing_name_in_dev_is_a_usage_error) {
    std::string why_not;
    const auto user = unprivileged_user(why_not);
    if (!user) GTEST_SKIP() << why_not;
    const auto r = run_rastrum_via(user->runner, "survey " + shell_quoted(conditions_recording()) + " --json /dev/rastrum-no-such-device");
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("makes no files in /dev"), std::string::npos) << r.err;
    EXPECT_FALSE(fs::exists("/dev/rastrum-no-such-device"));
}

// An output that is the input under another name (/dev/fd/N of the input, opened for writing by
// the shell) would append to the recording: refused before any work.
TEST(cli_outputs, an_output_that_is_an_input_by_another_name_is_refused) {
    const std::string folder = open_folder("outputs-input-by-descriptor");
    const std::string copy = folder + "/copy.h5";
    fs::copy_file(conditions_recording(), copy);
    const std::string before = read_file(copy);
    const auto r = run_rastrum("survey " + shell_quoted(copy) + " --json /dev/fd/3 3>>" + shell_quoted(copy));
    EXPECT_EQ(r.exit_code, 2) << r.err;
    EXPECT_NE(r.err.find("would overwrite an input"), std::string::npos) << r.err;
    EXPECT_EQ(read_file(copy), before);
}

// The figures folder: absent (made), an existing one of ours or a link to one (written into, the
// link kept), a link to a folder not made yet (made where it points, the link kept); a file, FIFO,
// device or socket in its place, or an empty name: exit 2.
TEST(cli_outputs, every_kind_of_figures_folder) {
    std::vector<test_user> users;
    if (const auto root = root_user()) users.push_back(*root);
    std::string why_not;
    if (const auto user = unprivileged_user(why_not)) users.push_back(*user);
    const std::string folder = open_folder("outputs-figures-input");
    const auto made = run_rastrum("direct " + shell_quoted(frozen_recording()) + " --bin-ms 10 --letters 1-2 --splits 2 --quiet --json " +
                                  shell_quoted(folder + "/d.json"));
    ASSERT_EQ(made.exit_code, 0) << made.err;
    const std::string figures = "figures " + shell_quoted(folder + "/d.json") + " --quiet --out ";
    for (const auto& user: users) {
        SCOPED_TRACE(user.name);
        const std::string f = open_folder("outputs-figures-" + std::string(user.runner.empty() ? "self" : "other"));
        EXPECT_EQ(run_rastrum_via(user.runner, figures + shell_quoted(f + "/new")).exit_code, 0);
        EXPECT_TRUE(fs::is_regular_file(f + "/new/index.html"));
        EXPECT_EQ(run_rastrum_via(user.runner, figures + shell_quoted(f + "/new")).exit_code, 0) << "again, into its own folder";
        fs::create_symlink("new", f + "/link");
        EXPECT_EQ(run_rastrum_via(user.runner, figures + shell_quoted(f + "/link")).exit_code, 0);
        EXPECT_TRUE(fs::is_symlink(f + "/link"));
        fs::create_symlink("later", f + "/dangling");
        EXPECT_EQ(run_rastrum_via(user.runner, figures + shell_quoted(f + "/dangling")).exit_code, 0);
        EXPECT_TRUE(fs::is_symlink(f + "/dangling")) << "the link was replaced by a folder";
        EXPECT_TRUE(fs::is_regular_file(f + "/later/index.html"));
        EXPECT_TRUE(temporaries_in(f).empty());
        write_text(f + "/file", "mine\n");
        make_fifo(f + "/fifo");
        make_socket(f + "/socket");
        std::vector<std::string> not_folders = {"file", "fifo", "socket"};
        if (make_null_device(f + "/device")) not_folders.push_back("device");
        for (const auto& name: not_folders) {
            const auto r = run_rastrum_via(user.runner, figures + shell_quoted(f + "/" + name));
            EXPECT_EQ(r.exit_code, 2) << name << ": " << r.err;
            EXPECT_NE(r.err.find("not a folder"), std::string::npos) << r.err;
        }
        EXPECT_EQ(read_file(f + "/file"), "mine\n");
        EXPECT_TRUE(fs::is_fifo(f + "/fifo") && is_socket(f + "/socket"));
        EXPECT_EQ(run_rastrum_via(user.runner, figures + "''").exit_code, 2);
    }
}

// The batch's outputs: its folder must be a folder (exit 2 for a file, FIFO or socket in its
// place); in it, something other than a file of its own where a task's result goes (a FIFO, which
// would stop the task until read; a link) fails that task, which names it, and nothing waits.
TEST(cli_outputs, batch_outputs_are_its_own_files) {
    const std::string folder = open_folder("outputs-batch");
    const std::string plan = stiminfo_plan(folder, "results");
    for (const auto& make: std::vector<std::function<void(const std::string&)>>{
             [](const std::string& p) { std::ofstream(p) << "mine\n"; }, make_fifo, make_socket}) {
        fs::remove(folder + "/results");
        make(folder + "/results");
        const auto r = run_rastrum("batch " + shell_quoted(plan));
        EXPECT_EQ(r.exit_code, 2) << r.err;
        EXPECT_NE(r.err.find("is not a folder"), std::string::npos) << r.err;
    }
    fs::remove(folder + "/results");
    ASSERT_EQ(run_rastrum("batch " + shell_quoted(plan) + " --quiet").exit_code, 0);
    fs::remove(folder + "/results/c/stiminfo.json");
    make_fifo(folder + "/results/c/stiminfo.json");
    fs::remove(folder + "/results/c/stiminfo.csv");
    fs::create_symlink("../elsewhere.csv", folder + "/results/c/stiminfo.csv");
    const auto r = run_rastrum_limited("batch " + shell_quoted(plan) + " --force", 120, 4UL << 20);
    EXPECT_EQ(r.exit_code, 5) << r.err;
    EXPECT_NE(r.err.find("results/c/stiminfo.json is not a regular file"), std::string::npos) << r.err;
    EXPECT_TRUE(fs::is_fifo(folder + "/results/c/stiminfo.json"));
    EXPECT_FALSE(fs::exists(folder + "/results/elsewhere.csv"));
}
