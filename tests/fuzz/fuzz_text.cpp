// libFuzzer harness: the CSV text format (read_recording_text through read_recording). The input is
// split at its first NUL byte: the spikes CSV before it, the trials CSV after it (empty without one).
#include "fuzz_loader.hpp"

#include <algorithm>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    static const rastrum::fuzz::scratch_file spikes_file("spikes.csv");
    const std::string& spikes = spikes_file.path;
    static const rastrum::fuzz::scratch_file trials_file("trials.csv");
    const std::string& trials = trials_file.path;
    const std::uint8_t* end = data + size;
    const std::uint8_t* split = std::find(data, end, std::uint8_t{0});
    rastrum::fuzz::write_bytes(spikes, data, static_cast<std::size_t>(split - data));
    const std::uint8_t* rest = split == end ? end : split + 1;
    rastrum::fuzz::write_bytes(trials, rest, static_cast<std::size_t>(end - rest));
    rastrum::recording_source source;
    source.path = spikes;
    source.trials_csv = trials;
    rastrum::fuzz::read_both_ways(source, rastrum::recording_format::text);
    return 0;
}
