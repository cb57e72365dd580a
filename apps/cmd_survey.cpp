#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/atomic_file.hpp>
#include <rastrum/recording_hdf5.hpp>
#include <rastrum/sha256.hpp>
#include <rastrum/survey.hpp>
#include <rastrum/version.hpp>

#include <iostream>

namespace rastrum::app {

int run_survey(int argc, char** argv) {
    po::options_description options("Options");
    std::string file, json_out;
    options.add_options()
        ("json", po::value(&json_out), "write the survey as JSON to this file ('-' for stdout)");
    po::variables_map vm;
    if (!parse_command(argc, argv, "survey", "FILE [--json OUT]", options,
                       {{"file", "FILE", "the recording (HDF5, native layout)", &file}}, vm)) {
        return 0;
    }
    const std::optional<std::string> json_path = vm.count("json") ? std::optional(json_out) : std::nullopt;
    check_output_paths({json_path}, {file});

    const recording rec = read_recording_hdf5(file);
    const recording_overview overview = survey(rec);
    nlohmann::ordered_json j;
    j["tool"] = "rastrum";
    j["version"] = version();
    j["analysis"] = "survey";
    j["input"] = {{"path", file}, {"sha256", file_sha256(file)}};
    j.update(survey_json(overview));
    const std::string json_text = j.dump(2) + "\n";
    if (json_path && *json_path == "-") {
        std::cout << json_text;
        return 0;
    }
    if (json_path) write_text_atomically(*json_path, json_text);
    std::cout << survey_text(overview, file);
    if (json_path) std::cerr << "wrote " << *json_path << "\n";
    return 0;
}

}  // namespace rastrum::app
