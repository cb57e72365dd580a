#include <rastrum/atomic_file.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/output_folder.hpp>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <unistd.h>

namespace rastrum {

namespace fs = std::filesystem;

namespace {
fs::path parent_of(const fs::path& folder) {
    const fs::path p = folder.lexically_normal();
    const fs::path without_slash = p.filename().empty() ? p.parent_path() : p;
    return without_slash.has_parent_path() ? without_slash.parent_path() : fs::path(".");
}

std::set<std::string> manifest_names(const fs::path& folder) {
    std::set<std::string> names;
    std::ifstream in(folder / output_manifest_name);
    std::string line;
    while (std::getline(in, line)) {
        // Only plain names count: a manifest must not reach outside its folder.
        if (!line.empty() && line[0] != '#' && line.find('/') == std::string::npos && line != "." && line != "..") {
            names.insert(line);
        }
    }
    return names;
}

std::string manifest_text(const std::vector<std::pair<std::string, std::string>>& files) {
    std::string text = "# Files written here by rastrum; a later run into this folder may replace or remove them.\n";
    for (const auto& f: files) text += f.first + "\n";
    return text;
}

void write_plain(const fs::path& path, const std::string& text) {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(text.data(), static_cast<std::streamsize>(text.size()));
    out.close();
    if (!out) throw error("cannot write " + path.string() + ": " + std::strerror(errno));
}

void check_names(const std::vector<std::pair<std::string, std::string>>& files) {
    std::set<std::string> seen;
    for (const auto& f: files) {
        if (f.first.empty() || f.first.find('/') != std::string::npos || f.first == output_manifest_name || !seen.insert(f.first).second) {
            throw internal_error("output file name '" + f.first + "' is not a plain, unique name");
        }
    }
}

void write_new_folder(const fs::path& folder, const std::vector<std::pair<std::string, std::string>>& files) {
    const fs::path name = folder.lexically_normal().filename().empty() ? folder.lexically_normal().parent_path().filename()
                                                                        : folder.lexically_normal().filename();
    const fs::path temporary = parent_of(folder) / (name.string() + ".tmp-" + std::to_string(::getpid()));
    std::error_code ec;
    if (!fs::create_directory(temporary, ec)) {
        throw usage_error("cannot create the output folder beside " + folder.string() + ": " +
                          (ec ? ec.message() : "a temporary " + temporary.string() + " is in the way"));
    }
    try {
        for (const auto& [file, text]: files) write_plain(temporary / file, text);
        write_plain(temporary / output_manifest_name, manifest_text(files));
        fs::rename(temporary, folder);
    } catch (...) {
        fs::remove_all(temporary, ec);  // only what this run made
        throw;
    }
}

void write_into_folder(const fs::path& folder, const std::vector<std::pair<std::string, std::string>>& files) {
    const std::set<std::string> ours = manifest_names(folder);
    std::error_code ec;
    for (const auto& f: files) {
        const fs::path p = folder / f.first;
        if (fs::exists(fs::symlink_status(p, ec)) && !ours.count(f.first)) {
            throw usage_error(p.string() + " exists and was not written by rastrum: move it away or choose another --out");
        }
    }
    std::vector<std::pair<std::string, std::string>> paths;
    for (const auto& [file, text]: files) paths.emplace_back((folder / file).string(), text);
    paths.emplace_back((folder / output_manifest_name).string(), manifest_text(files));
    write_texts_atomically(paths);
    // Files of an earlier run that this one did not make again would be stale beside the new page.
    for (const auto& old: ours) {
        const bool kept = std::any_of(files.begin(), files.end(), [&](const auto& f) { return f.first == old; });
        if (!kept && fs::is_regular_file(fs::symlink_status(folder / old, ec))) fs::remove(folder / old, ec);
    }
}
}  // namespace

void check_output_folder(const std::string& folder, const std::string& option) {
    std::error_code ec;
    const fs::path p(folder);
    if (folder.empty()) throw usage_error(option + ": empty folder name");
    const auto status = fs::status(p, ec);
    if (fs::exists(status)) {
        if (!fs::is_directory(status)) throw usage_error(option + " " + folder + " is an existing file, not a folder");
        return;
    }
    const fs::path parent = parent_of(p);
    if (!fs::is_directory(parent, ec)) {
        throw usage_error(option + " " + folder + ": folder " + parent.string() + " does not exist (only the last folder is created)");
    }
}

void write_output_folder(const std::string& folder, const std::vector<std::pair<std::string, std::string>>& files) {
    check_names(files);
    check_output_folder(folder, "output");
    if (fs::exists(fs::path(folder))) {
        write_into_folder(folder, files);
    } else {
        write_new_folder(folder, files);
    }
}

std::string file_name_part(const std::string& text) {
    std::string out;
    for (char c: text) {
        const bool keep = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '.' || c == '_' || c == '-';
        out += keep ? c : '_';
        if (out.size() >= 60) break;
    }
    if (out.empty() || out[0] == '.') out = "_" + out;
    return out;
}

}  // namespace rastrum
