#pragma once
#include <string>

namespace rastrum {
/// Lower-case hex SHA-256 of a file's bytes. Throws error naming the path when it cannot be read.
std::string file_sha256(const std::string& path);
/// Lower-case hex SHA-256 of `text`'s bytes.
std::string text_sha256(const std::string& text);
}  // namespace rastrum
