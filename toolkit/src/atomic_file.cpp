#include <rastrum/atomic_file.hpp>
#include <rastrum/errors.hpp>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <memory>
#include <unistd.h>

namespace rastrum {

namespace {
std::string temporary_name(const std::string& final_path) {
    static unsigned serial = 0;
    return final_path + ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(serial++);
}
}  // namespace

atomic_file::atomic_file(std::string final_path):
    final_(std::move(final_path)), temporary_(temporary_name(final_)) {}

atomic_file::atomic_file(atomic_file&& other) noexcept:
    final_(std::move(other.final_)), temporary_(std::move(other.temporary_)), committed_(other.committed_) {
    other.committed_ = true;  // the moved-from object owns nothing to clean up
}

atomic_file::~atomic_file() {
    if (!committed_) std::remove(temporary_.c_str());
}

void atomic_file::commit() {
    if (std::rename(temporary_.c_str(), final_.c_str()) != 0) {
        throw error("cannot write " + final_ + ": " + std::strerror(errno));
    }
    committed_ = true;
}

namespace {
void write_whole(const std::string& path, const std::string& shown_as, const std::string& text) {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    if (!out) throw error("cannot write " + shown_as + ": " + std::strerror(errno));
    out.write(text.data(), static_cast<std::streamsize>(text.size()));
    out.close();
    if (!out) throw error("cannot write " + shown_as + ": write failed");
}
}  // namespace

void write_text_atomically(const std::string& path, const std::string& text) {
    write_texts_atomically({{path, text}});
}

void write_texts_atomically(const std::vector<std::pair<std::string, std::string>>& path_text) {
    std::vector<atomic_file> files;
    files.reserve(path_text.size());
    for (const auto& [path, text]: path_text) {
        files.emplace_back(path);
        write_whole(files.back().temporary_path(), path, text);
    }
    for (auto& f: files) f.commit();
}

}  // namespace rastrum
