#include "output_slots.hpp"

#include "cli_runner.hpp"
#include "output_kinds.hpp"

#include <nlohmann/json.hpp>

#include <filesystem>
#include <fstream>
#include <stdexcept>
#include <unistd.h>
#include <vector>

namespace rastrum::testing {

namespace {

// The inputs' folder is this test program's own (named by its process): ctest runs the programs
// that use these inputs in parallel, and a shared folder was emptied by one while another read it.
struct removed_at_exit {
    std::vector<std::string> folders;
    ~removed_at_exit() {
        std::error_code ec;
        for (const auto& f: folders) std::filesystem::remove_all(f, ec);
    }
};

std::string made_once(const std::string& name, const std::string& synth_args) {
    const std::string folder = open_folder("output-slots-inputs-" + name + "-" + std::to_string(::getpid()));
    static removed_at_exit removal;
    removal.folders.push_back(folder);
    const std::string path = folder + "/" + name + ".h5";
    const auto r = run_rastrum("synth " + synth_args + " --out " + shell_quoted(path));
    if (r.exit_code != 0) throw std::runtime_error("cannot make " + path + ": " + r.err);
    return path;
}

}  // namespace

std::string shell_quoted(const std::string& text) { return "'" + text + "'"; }

const std::string& conditions_recording() {
    static const std::string path =
        made_once("conditions", "conditions --trials-per-condition 10 --duration-s 0.2 --means 1,3,5,8");
    return path;
}

const std::string& frozen_recording() {
    static const std::string path = made_once("frozen", "frozen-bins --trials 16 --duration-s 0.5 --rate-hz 30 --seed 2");
    return path;
}

std::vector<output_slot> file_output_slots(const std::string& input) {
    using content = output_slot::content;
    const std::string labelled = shell_quoted(input.empty() ? conditions_recording() : input);
    const std::string frozen = shell_quoted(input.empty() ? frozen_recording() : input);
    const std::string direct = "direct " + frozen + " --bin-ms 10 --letters 1-2 --splits 2 --threads 1";
    const std::string stiminfo =
        "stiminfo " + labelled + " --window-ms 0:200 --code count --null-shuffles 4 --bootstrap 4 --threads 1";
    std::vector<output_slot> slots;
    slots.push_back({"survey --json", "--json", "out.json", content::json,
                     [labelled](const std::string& out) { return "survey " + labelled + " --json " + shell_quoted(out); }});
    for (const auto& [analysis, base]: {std::make_pair(std::string("direct"), direct), std::make_pair(std::string("stiminfo"), stiminfo)}) {
        for (const auto& [option, file, what]: {std::make_tuple("--json", "out.json", content::json),
                                                std::make_tuple("--csv", "out.csv", content::csv),
                                                std::make_tuple("--curves-csv", "curves.csv", content::csv),
                                                std::make_tuple("--h5", "results.h5", content::hdf5)}) {
            const std::string opt = option;
            slots.push_back({analysis + " " + opt, opt, file, what,
                             [base = base, opt](const std::string& out) { return base + " " + opt + " " + shell_quoted(out); }});
        }
    }
    const std::string synth = "synth conditions --trials-per-condition 5 --duration-s 0.2 --overwrite --out ";
    slots.push_back({"synth --out", "--out", "synthetic.h5", content::hdf5,
                     [synth](const std::string& out) { return synth + shell_quoted(out); }, false});
    slots.push_back({"synth's answers file", "--out", "s.answers.json", content::json,
                     [synth](const std::string& out) {
                         const std::string folder = std::filesystem::path(out).parent_path().string();
                         return synth + shell_quoted(folder + "/s.h5");
                     },
                     false, false});
    slots.push_back({"convert --out", "--out", "converted.h5", content::hdf5,
                     [labelled](const std::string& out) { return "convert " + labelled + " --overwrite --out " + shell_quoted(out); },
                     false});
    return slots;
}

std::string stiminfo_plan(const std::string& folder, const std::string& output) {
    std::filesystem::copy_file(conditions_recording(), folder + "/c.h5");
    const std::string plan = folder + "/plan.ini";
    std::ofstream(plan) << "output = " << output
                        << "\n[inputs]\nfiles = c.h5\n[stiminfo]\nwindow-ms = 0:200\ncode = count\nnull-shuffles = 4\nbootstrap = 4\n";
    return plan;
}

bool looks_whole(const output_slot& slot, const std::string& bytes) {
    switch (slot.what) {
    case output_slot::content::json: return nlohmann::json::accept(bytes);
    case output_slot::content::csv: return bytes.rfind("# {", 0) == 0 && !bytes.empty() && bytes.back() == '\n';
    case output_slot::content::hdf5: return starts_like_hdf5(bytes);
    }
    return false;
}

}  // namespace rastrum::testing
