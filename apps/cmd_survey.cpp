#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/atomic_file.hpp>
#include <rastrum/recording_hdf5.hpp>
#include <rastrum/survey.hpp>

#include <iostream>

namespace rastrum::app {

int run_survey(int argc, char** argv) {
    po::options_description options("Options");
    std::string file, json_out;
    options.add_options()
        ("file", po::value(&file)->required(), "the recording (HDF5, native layout)")
        ("json", po::value(&json_out), "write the survey as JSON to this file ('-' for stdout)");
    po::positional_options_description positional;
    positional.add("file", 1);
    po::variables_map vm;
    if (!parse_command(argc, argv, "survey", "FILE [--json OUT]", options, positional, vm)) return 0;
    const std::optional<std::string> json_path = vm.count("json") ? std::optional(json_out) : std::nullopt;
    check_output_paths({json_path}, {file});

    const recording rec = read_recording_hdf5(file);
    const recording_overview overview = survey(rec);
    if (json_path && *json_path == "-") {
        std::cout << survey_json(overview).dump(2) << "\n";
        return 0;
    }
    if (json_path) write_text_atomically(*json_path, survey_json(overview).dump(2) + "\n");
    std::cout << survey_text(overview, file);
    return 0;
}

}  // namespace rastrum::app
