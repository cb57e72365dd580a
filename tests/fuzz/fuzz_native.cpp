// libFuzzer harness: the native HDF5 layout (read_recording_hdf5 through read_recording).
#include "fuzz_loader.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    static const rastrum::fuzz::scratch_file file("native.h5");
    const std::string& path = file.path;
    rastrum::fuzz::write_bytes(path, data, size);
    rastrum::recording_source source;
    source.path = path;
    rastrum::fuzz::read_both_ways(source, rastrum::recording_format::native);
    return 0;
}
