#include <rastrum/errors.hpp>
#include <rastrum/file_patterns.hpp>

#include <glob.h>

#include <memory>

namespace rastrum {

namespace fs = std::filesystem;

bool has_wildcards(const std::string& pattern) { return pattern.find_first_of("*?[\\") != std::string::npos; }

namespace {

// The base folder's own name may hold '*' or '[': escaped, it matches only itself.
std::string escaped(const std::string& literal) {
    std::string out;
    for (char c: literal) {
        if (c == '*' || c == '?' || c == '[' || c == ']' || c == '\\') out += '\\';
        out += c;
    }
    return out;
}

}  // namespace

std::vector<std::string> match_files(const fs::path& base, const std::string& pattern) {
    const bool absolute = fs::path(pattern).is_absolute();
    std::string prefix = absolute ? std::string() : base.string();
    if (!prefix.empty() && prefix.back() != '/') prefix += '/';
    glob_t found{};
    std::unique_ptr<glob_t, decltype(&globfree)> release(&found, globfree);
    const int status = ::glob((escaped(prefix) + pattern).c_str(), GLOB_MARK, nullptr, &found);
    if (status == GLOB_NOMATCH) return {};
    if (status != 0) throw error("cannot search for " + pattern + " in " + base.string());
    std::vector<std::string> files;
    for (std::size_t i = 0; i < found.gl_pathc; ++i) {
        const std::string match = found.gl_pathv[i];
        if (match.empty() || match.back() == '/') continue;  // GLOB_MARK marks folders with a slash
        std::error_code ec;
        if (!fs::is_regular_file(match, ec)) continue;
        const fs::path relative = absolute ? fs::path(match) : fs::path(match.substr(prefix.size()));
        files.push_back(relative.lexically_normal().string());
    }
    return files;
}

}  // namespace rastrum
