#pragma once
/// Text files at paths the program chose itself (a batch's manifest, the files of a figures
/// folder), written whole or not at all: each goes to a temporary beside it, renamed over it when
/// every one is written (output_file.hpp, which also handles outputs the user named).
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

/// Writes `text` to `path` atomically. Throws output_error (naming the path) when it cannot.
void write_text_atomically(const std::string& path, const std::string& text);

/// Several outputs committed together: every text is written to its temporary first, and only when
/// all writes succeeded are they renamed, so a failure leaves none of them changed.
void write_texts_atomically(const std::vector<std::pair<std::string, std::string>>& path_text);

}  // namespace rastrum
