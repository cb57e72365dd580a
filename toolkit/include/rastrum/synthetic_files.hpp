#pragma once
/// Synthetic recordings on disk: the recording in the native layout and its exact answers as
/// JSON beside it (`name.h5` -> `name.answers.json`).
#include <rastrum/output_file.hpp>
#include <rastrum/synthetic.hpp>

#include <nlohmann/json.hpp>
#include <functional>
#include <string>

namespace rastrum {

std::string answers_path_for(const std::string& recording_path);

nlohmann::ordered_json synthetic_answers_json(const synthetic_recording& synth, const nlohmann::ordered_json& parameters);

/// Writes both files; neither is left changed when either cannot be written.
void write_synthetic(const synthetic_recording& synth, const std::string& recording_path,
                     const nlohmann::ordered_json& parameters);

/// The same for a recording made by `make` (make_frozen_bins, make_poisson or make_conditions with
/// the unit_ready it is given), each unit written as soon as it is made and then let go, so that
/// memory holds one unit's spikes (and the spikes between trials), not the recording. `recording`
/// (content::by_path) and `answers` were made before the work, so an output that cannot be written
/// is known before any is made; both are finished together.
void make_and_write_synthetic(const std::function<synthetic_recording(const unit_ready&)>& make, output_file& recording,
                              output_file& answers, const nlohmann::ordered_json& parameters);

}  // namespace rastrum
