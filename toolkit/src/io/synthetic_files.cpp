#include <rastrum/errors.hpp>
#include <rastrum/output_file.hpp>
#include <rastrum/recording_hdf5.hpp>
#include <rastrum/synthetic_files.hpp>
#include <rastrum/version.hpp>

namespace rastrum {

std::string answers_path_for(const std::string& recording_path) {
    const auto slash = recording_path.find_last_of('/');
    const auto dot = recording_path.find_last_of('.');
    const bool has_extension = dot != std::string::npos && (slash == std::string::npos || dot > slash);
    return (has_extension ? recording_path.substr(0, dot) : recording_path) + ".answers.json";
}

nlohmann::ordered_json synthetic_answers_json(const synthetic_recording& synth, const nlohmann::ordered_json& parameters) {
    nlohmann::ordered_json j;
    j["tool"] = "rastrum";
    j["version"] = version();
    j["kind"] = synth.kind;
    j["parameters"] = parameters;
    j["units"] = nlohmann::ordered_json::array();
    for (const auto& t: synth.truth) {
        nlohmann::ordered_json u;
        u["unit"] = t.unit;
        for (const auto& [key, value]: t.values) u[key] = value;
        if (!t.by_letters.empty()) {
            nlohmann::ordered_json by;
            for (const auto& [key, values]: t.by_letters) by[key] = values;
            u["by_letters"] = by;
        }
        j["units"].push_back(u);
    }
    return j;
}

void write_synthetic(const synthetic_recording& synth, const std::string& recording_path,
                     const nlohmann::ordered_json& parameters) {
    output_file recording(output_target::replacing(recording_path), output_file::content::by_path);
    output_file answers(output_target::replacing(answers_path_for(recording_path)));
    write_recording_hdf5(synth.rec, recording);
    const std::string text = synthetic_answers_json(synth, parameters).dump(2) + "\n";
    finish_outputs({{&recording, nullptr}, {&answers, &text}});
}

void make_and_write_synthetic(const std::function<synthetic_recording(const unit_ready&)>& make, output_file& recording,
                              output_file& answers, const nlohmann::ordered_json& parameters) {
    recording_hdf5_writer writer(recording);
    const synthetic_recording synth = make([&](rastrum::recording& rec, std::size_t u) {
        writer.add_unit(rec.units[u].id, rec.units[u].spike_times, rec.source);
        std::vector<seconds>().swap(rec.units[u].spike_times);  // written: let it go
    });
    writer.finish(synth.rec);
    const std::string text = synthetic_answers_json(synth, parameters).dump(2) + "\n";
    finish_outputs({{&recording, nullptr}, {&answers, &text}});
}

}  // namespace rastrum
