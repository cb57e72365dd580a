// libFuzzer harness: NWB 2.x (read_recording_nwb through read_recording; nwb_tables through describe_source).
#include "fuzz_loader.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    static const rastrum::fuzz::scratch_file file("recording.nwb");
    const std::string& path = file.path;
    rastrum::fuzz::write_bytes(path, data, size);
    rastrum::recording_source source;
    source.path = path;
    rastrum::fuzz::read_both_ways(source, rastrum::recording_format::nwb);
    return 0;
}
