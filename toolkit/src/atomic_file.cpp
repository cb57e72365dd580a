#include <rastrum/atomic_file.hpp>
#include <rastrum/output_file.hpp>

namespace rastrum {

void write_text_atomically(const std::string& path, const std::string& text) {
    write_texts_atomically({{path, text}});
}

void write_texts_atomically(const std::vector<std::pair<std::string, std::string>>& path_text) {
    std::vector<output_file> files;
    files.reserve(path_text.size());  // no reallocation: `parts` points into it
    std::vector<std::pair<output_file*, const std::string*>> parts;
    for (const auto& [path, text]: path_text) {
        files.emplace_back(output_target::replacing(path));
        parts.emplace_back(&files.back(), &text);
    }
    finish_outputs(parts);
}

}  // namespace rastrum
