// Outputs that cannot be written (notes/robustness.md, "Write errors"): a folder without write
// permission, a missing folder, a read-only or a full file system. Every command exits 6 with a
// message naming the output as the user named it (never a temporary) and the system's reason,
// before any work where the file system allows it, leaves what was at the output's path as it was
// and leaves no temporary. Design checks; the full and read-only file systems are small tmpfs
// mounts of the test's own (root only), unmounted whatever happens.
#include "cli_runner.hpp"
#include "output_kinds.hpp"
#include "output_slots.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>

using namespace rastrum::testing;
namespace fs = std::filesystem;

namespace {

void expect_refused(const process_result& r, const std::string& out, const std::string& reason) {
    EXPECT_EQ(r.exit_code, 6) << r.err;
    EXPECT_NE(r.err.find("cannot write " + out), std::string::npos) << r.err;
    EXPECT_NE(r.err.find(reason), std::string::npos) << r.err;
    EXPECT_EQ(r.err.find(".tmp-"), std::string::npos) << "a temporary's name shown to the user: " << r.err;
    EXPECT_EQ(r.err.find("filesystem error"), std::string::npos) << "a library's message: " << r.err;
}

// The output that a slot's command names first: synth's answers file follows its recording.
std::string first_output(const output_slot& slot, const std::string& folder) {
    return slot.path_is_named ? folder + "/" + slot.file_name : folder + "/s.h5";
}

std::string direct_result() {
    static const std::string path = [] {
        const std::string p = open_folder("write-errors-result") + "/d.json";
        const auto r = run_rastrum("direct " + shell_quoted(frozen_recording()) + " --bin-ms 10 --letters 1-2 --splits 2 --quiet --json " + shell_quoted(p));
        EXPECT_EQ(r.exit_code, 0) << r.err;
        return p;
    }();
    return path;
}

}  // namespace

// Permission denied, found by making the temporary first: the input (absent here) is not even
// read, which shows that the refusal comes before any work.
TEST(cli_write_errors, an_unwritable_folder_exits_6_before_the_input_is_read) {
    std::string why_not;
    const auto user = unprivileged_user(why_not);
    if (!user) GTEST_SKIP() << why_not;
    const std::string absent = open_folder("write-errors-absent") + "/absent.h5";
    const auto slots = file_output_slots(absent);
    for (std::size_t i = 0; i < slots.size(); ++i) {
        const output_slot& slot = slots[i];
        SCOPED_TRACE(slot.name + " as " + user->name);
        const std::string folder = open_folder("write-errors-denied-" + std::to_string(i));
        std::ofstream(folder + "/" + slot.file_name) << "old\n";
        fs::permissions(folder, fs::perms::owner_all | fs::perms::group_read | fs::perms::group_exec |
                                    fs::perms::others_read | fs::perms::others_exec);  // 0755 root's or 0555 own
        if (!running_as_root()) fs::permissions(folder, fs::perms::owner_write, fs::perm_options::remove);
        const auto r = run_rastrum_via(user->runner, slot.command(folder + "/" + slot.file_name));
        expect_refused(r, first_output(slot, folder), "Permission denied");
        EXPECT_EQ(read_file(folder + "/" + slot.file_name), "old\n");
        EXPECT_TRUE(temporaries_in(folder).empty());
        fs::permissions(folder, fs::perms::all);
    }
    // figures (a new folder, and an existing one it may not write in) and batch (its output folder).
    const std::string locked = open_folder("write-errors-denied-figures");
    fs::create_directory(locked + "/report");
    fs::permissions(locked, fs::perms::all & ~(fs::perms::group_write | fs::perms::others_write | fs::perms::owner_write));
    fs::permissions(locked + "/report", fs::perms::all & ~(fs::perms::group_write | fs::perms::others_write | fs::perms::owner_write));
    for (const std::string& out: {locked + "/new", locked + "/report"}) {
        const auto r = run_rastrum_via(user->runner, "figures " + shell_quoted(direct_result()) + " --out " + shell_quoted(out));
        expect_refused(r, out, "Permission denied");
    }
    EXPECT_TRUE(fs::is_empty(locked + "/report"));
    const std::string plan_folder = open_folder("write-errors-denied-batch");
    const auto batch = run_rastrum_via(user->runner, "batch " + shell_quoted(stiminfo_plan(plan_folder, locked + "/results")));
    expect_refused(batch, locked + "/results", "Permission denied");
    fs::permissions(locked + "/report", fs::perms::all);
    fs::permissions(locked, fs::perms::all);
}

TEST(cli_write_errors, a_missing_folder_exits_6) {
    const std::string folder = open_folder("write-errors-missing");
    for (const auto& slot: file_output_slots()) {
        SCOPED_TRACE(slot.name);
        const std::string out = folder + "/no/such/" + slot.file_name;
        const auto r = run_rastrum(slot.command(out));
        expect_refused(r, first_output(slot, folder + "/no/such"), "folder " + folder + "/no/such does not exist");
        EXPECT_FALSE(fs::exists(folder + "/no"));
    }
    const auto figures = run_rastrum("figures " + shell_quoted(direct_result()) + " --out " + shell_quoted(folder + "/no/report"));
    expect_refused(figures, folder + "/no/report", "does not exist");
}

// A file system with not one byte free: the write fails (the temporary itself could be made), the
// old output stays, and nothing of the run is left on it.
TEST(cli_write_errors, a_full_file_system_exits_6_and_keeps_the_old_output) {
    const auto slots = file_output_slots();
    for (std::size_t i = 0; i < slots.size(); ++i) {
        const output_slot& slot = slots[i];
        SCOPED_TRACE(slot.name);
        const std::string mount = open_folder("write-errors-full-" + std::to_string(i)) + "/fs";
        const small_file_system full(mount, {"64k", {{slot.file_name, "old\n"}}, false, true});
        if (!full.mounted()) GTEST_SKIP() << full.why_not();
        const auto r = run_rastrum(slot.command(mount + "/" + slot.file_name));
        expect_refused(r, first_output(slot, mount), "No space left on device");
        EXPECT_EQ(read_file(mount + "/" + slot.file_name), "old\n");
        EXPECT_TRUE(temporaries_in(mount).empty());
    }
    const std::string mount = open_folder("write-errors-full-others") + "/fs";
    const small_file_system full(mount, {"64k", {}, false, true});
    if (!full.mounted()) GTEST_SKIP() << full.why_not();
    const auto figures = run_rastrum("figures " + shell_quoted(direct_result()) + " --out " + shell_quoted(mount + "/report"));
    expect_refused(figures, mount + "/report", "No space left on device");
    EXPECT_FALSE(fs::exists(mount + "/report"));
    const auto batch = run_rastrum("batch " + shell_quoted(stiminfo_plan(open_folder("write-errors-full-batch"), mount + "/results")));
    expect_refused(batch, mount + "/results", "No space left on device");
    EXPECT_TRUE(temporaries_in(mount).empty());
}

TEST(cli_write_errors, a_read_only_file_system_exits_6_before_any_work) {
    std::vector<std::pair<std::string, std::string>> old;
    for (const auto& slot: file_output_slots()) old.emplace_back(slot.file_name, "old\n");
    const std::string mount = open_folder("write-errors-read-only") + "/fs";
    const small_file_system read_only(mount, {"64k", old, true, false});
    if (!read_only.mounted()) GTEST_SKIP() << read_only.why_not();
    for (const auto& slot: file_output_slots(mount + "/absent.h5")) {
        SCOPED_TRACE(slot.name);
        const auto r = run_rastrum(slot.command(mount + "/" + slot.file_name));
        expect_refused(r, first_output(slot, mount), "Read-only file system");
        EXPECT_EQ(read_file(mount + "/" + slot.file_name), "old\n");
    }
    const auto figures = run_rastrum("figures " + shell_quoted(direct_result()) + " --out " + shell_quoted(mount + "/report"));
    expect_refused(figures, mount + "/report", "Read-only file system");
}

// The code is documented where users look: the overview, each command's help, batch's own codes.
TEST(cli_write_errors, help_documents_exit_code_6) {
    for (const std::string command: {"--help", "direct --help", "survey --help", "figures --help", "batch --help"}) {
        const auto r = run_rastrum(command);
        EXPECT_EQ(r.exit_code, 0) << command;
        EXPECT_NE(r.out.find("6 an output cannot be written"), std::string::npos) << command << "\n" << r.out;
        EXPECT_NE(r.out.find("128 + N"), std::string::npos) << command;
    }
    EXPECT_NE(run_rastrum("batch --help").out.find("6 the batch cannot write its output folder"), std::string::npos);
}
