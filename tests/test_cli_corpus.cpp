// The robustness corpus (tests/data/bad, made by make_bad_files.py beside it): every file, broken
// in one way, through `rastrum survey` and `rastrum direct` as real processes. Each must exit 3 with
// a message naming the file, the object and the problem (design; README's exit codes), within 60 s
// and 1 GiB of virtual memory (design: sizes are checked against the file before anything is
// allocated, so no case may ask for more), and write no output.
#include "cli_runner.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <fstream>

using namespace rastrum::testing;
using nlohmann::json;

namespace {

const std::string corpus = std::string(RASTRUM_SOURCE_DIR) + "/tests/data/bad";

std::string in_quotes(const std::string& s) { return "'" + s + "'"; }

std::string options_of(const json& c) {
    std::string out;
    for (const auto& o: c["options"]) {
        std::string option = o.get<std::string>();
        const auto dir = option.find("{dir}");
        if (dir != std::string::npos) option.replace(dir, 5, corpus);
        out += " " + in_quotes(option);
    }
    return out;
}

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

}  // namespace

TEST(cli_corpus, every_broken_file_exits_3_naming_file_object_and_problem) {
    std::ifstream in(corpus + "/cases.json");
    ASSERT_TRUE(in) << "no cases.json in " << corpus;
    const json cases = json::parse(in);
    ASSERT_GE(cases.size(), 30u);
    const std::string folder = fresh_folder("cli-corpus");
    const std::string out = folder + "/out.json";
    for (const auto& c: cases) {
        const std::string file = corpus + "/" + c["file"].get<std::string>();
        const std::string message_file = c["message_file"];
        for (const std::string command: {"survey", "direct"}) {
            const std::string extra = command == "direct" ? " --bin-ms 2 --letters 1-2" : "";
            const auto r = run_rastrum_limited(command + " " + in_quotes(file) + options_of(c) + extra + " --json " +
                                                   in_quotes(out), 60, 1024 * 1024);
            const std::string where = command + " " + c["file"].get<std::string>() + ": " + r.err;
            EXPECT_EQ(r.exit_code, 3) << where;
            EXPECT_TRUE(contains(r.err, message_file)) << "names the file: " << where;
            EXPECT_TRUE(contains(r.err, c["object"].get<std::string>())) << "names " << c["object"] << ": " << where;
            EXPECT_TRUE(contains(r.err, c["problem"].get<std::string>())) << "says " << c["problem"] << ": " << where;
            EXPECT_FALSE(file_exists(out)) << where;
        }
    }
}
