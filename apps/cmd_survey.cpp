#include "command_line.hpp"
#include "commands.hpp"

#include <rastrum/output_file.hpp>
#include <rastrum/survey.hpp>
#include <rastrum/version.hpp>

#include <iostream>

namespace rastrum::app {

int run_survey(int argc, char** argv) {
    po::options_description options("Options");
    std::string file, json_out;
    options.add_options()
        ("json", po::value(&json_out), "write the survey as JSON to this file ('-' for stdout)");
    input_options input;
    add_input_options(options, input);
    po::variables_map vm;
    if (!parse_command(argc, argv, "survey", "FILE [input options] [--json OUT]", options,
                       {{"file", "FILE", recording_file_meaning, &file}}, vm)) {
        return 0;
    }
    const std::optional<output_target> json_target = output_option(vm, "--json", json_out);
    const recording_source source = source_of(file, input);
    if (json_target) check_output_targets({*json_target}, source_files(source));
    std::optional<output_file> json_file;  // made ready before any work
    if (json_target) json_file.emplace(*json_target);

    const source_contents contents = describe_source(source);
    provenance origin;
    const recording rec = read_input(source, true, origin);  // the survey lists the warnings itself
    const recording_overview overview = survey(rec);
    nlohmann::ordered_json j;
    j["tool"] = "rastrum";
    j["version"] = version();
    j["analysis"] = "survey";
    j["input"] = input_json(origin);
    j.update(survey_json(overview));
    j["contents"] = contents_json(contents);
    const std::string json_text = j.dump(2) + "\n";
    if (json_file) finish_outputs({{&*json_file, &json_text}});
    if (json_target && json_target->is_standard_output()) return 0;  // the JSON instead of the text
    std::cout << survey_text(overview, file) << contents_text(contents);
    if (json_target) std::cerr << "wrote " << json_target->path << "\n";
    return 0;
}

}  // namespace rastrum::app
