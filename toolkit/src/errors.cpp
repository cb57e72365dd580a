#include <rastrum/errors.hpp>

#include <utility>

namespace rastrum {

internal_error::internal_error(const std::string& what): std::logic_error("internal error: " + what) {}
error::error(const std::string& what): std::runtime_error(what) {}
usage_error::usage_error(const std::string& what): error(what) {}

namespace {
std::string input_message(const std::string& file, const std::string& object,
                          const std::string& expected, const std::string& found) {
    std::string msg = file;
    if (!object.empty()) msg += ": " + object;
    msg += ": expected " + expected + ", found " + found;
    return msg;
}
}  // namespace

input_error::input_error(std::string file_, std::string object_, std::string expected_, std::string found_):
    error(input_message(file_, object_, expected_, found_)),
    file(std::move(file_)), object(std::move(object_)),
    expected(std::move(expected_)), found(std::move(found_)) {}

insufficient_data::insufficient_data(const std::string& what): error(what) {}

output_error::output_error(std::string path_, std::string reason_):
    error("cannot write " + path_ + ": " + reason_), path(std::move(path_)), reason(std::move(reason_)) {}

}  // namespace rastrum
