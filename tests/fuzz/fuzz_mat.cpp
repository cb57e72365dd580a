// libFuzzer harness: MATLAB 7.3 MAT-files (read_recording_mat through read_recording; mat_variables
// through describe_source), with the variable names the seed corpus uses.
#include "fuzz_loader.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    static const rastrum::fuzz::scratch_file file("recording.mat");
    const std::string& path = file.path;
    rastrum::fuzz::write_bytes(path, data, size);
    rastrum::recording_source source;
    source.path = path;
    source.mat.spikes = "spikes";
    source.mat.trial_start = "trial_start";
    source.mat.trial_stop = "trial_stop";
    source.mat.stimulus = "stimulus";
    source.mat.unit_ids = "unit_ids";
    rastrum::fuzz::read_both_ways(source, rastrum::recording_format::mat);
    return 0;
}
