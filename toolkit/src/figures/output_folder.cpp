#include <rastrum/atomic_file.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/output_folder.hpp>
#include <rastrum/temporary_files.hpp>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>

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

void check_names(const std::vector<std::pair<std::string, std::string>>& files) {
    std::set<std::string> seen;
    for (const auto& f: files) {
        if (f.first.empty() || f.first.find('/') != std::string::npos || f.first == output_manifest_name || !seen.insert(f.first).second) {
            throw internal_error("output file name '" + f.first + "' is not a plain, unique name");
        }
    }
}

fs::path last_part(const fs::path& folder) {
    const fs::path p = folder.lexically_normal();
    return p.filename().empty() ? p.parent_path().filename() : p.filename();
}

// Files with their texts as one group of outputs at paths of our own.
std::vector<std::pair<std::string, std::string>> placed(const fs::path& folder, const std::vector<std::pair<std::string, std::string>>& files) {
    std::vector<std::pair<std::string, std::string>> paths;
    for (const auto& [file, text]: files) paths.emplace_back((folder / file).string(), text);
    paths.emplace_back((folder / output_manifest_name).string(), manifest_text(files));
    return paths;
}

// Where `folder` leads through symbolic links: a link to a folder not made yet makes the folder
// where it points, and the link is kept (as for a file, whose link's target is replaced).
std::string followed(const std::string& folder) {
    fs::path p = fs::path(folder).lexically_normal();
    if (p.filename().empty()) p = p.parent_path();
    for (int hop = 0; hop < 40 && !p.empty(); ++hop) {
        std::error_code ec;
        if (!fs::is_symlink(fs::symlink_status(p, ec))) break;
        const fs::path target = fs::read_symlink(p, ec);
        if (ec) break;
        p = (target.is_absolute() ? target : parent_of(p) / target).lexically_normal();
    }
    return p.empty() ? folder : p.string();
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
    write_texts_atomically(placed(folder, files));
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
    if (ec == std::errc::permission_denied) throw output_error(folder, ec.message());
    if (fs::exists(status)) {
        if (!fs::is_directory(status)) throw usage_error(option + " " + folder + " is an existing file, not a folder");
        return;
    }
    const fs::path parent = parent_of(p);
    if (!fs::is_directory(parent, ec)) {
        throw output_error(folder, "folder " + parent.string() + " does not exist (only the last folder is created)");
    }
}

output_folder::output_folder(std::string folder, const std::string& option): folder_(followed(folder)) {
    if (folder.empty()) throw usage_error(option + ": empty folder name");
    check_output_folder(folder_, option);
    std::error_code ec;
    if (fs::exists(fs::path(folder_), ec)) {
        // Writing into it: a file of ours made there now shows that it can be written.
        const std::string manifest = (fs::path(folder_) / output_manifest_name).string();
        probe_.emplace(output_target{folder_, manifest, output_method::replace});
        return;
    }
    // A new folder is filled under a temporary name beside it and renamed when whole.
    const fs::path parent = parent_of(folder_);
    const std::string name = last_part(folder_).string();
    remove_stale_temporaries(parent.string(), name);
    temporary_ = temporary_name_for((parent / name).string());
    register_temporary(temporary_);
    if (!fs::create_directory(temporary_, ec)) {
        forget_temporary(temporary_);
        throw output_error(folder_, "cannot create a folder in " + parent.string() + ": " +
                                        (ec ? ec.message() : "a temporary " + temporary_ + " is in the way"));
    }
}

output_folder::~output_folder() {
    if (temporary_.empty()) return;
    std::error_code ec;
    fs::remove_all(temporary_, ec);  // only what this run made
    forget_temporary(temporary_);
}

void output_folder::write(const std::vector<std::pair<std::string, std::string>>& files) {
    check_names(files);
    if (temporary_.empty()) {
        probe_.reset();  // the manifest is written again with the files
        write_into_folder(folder_, files);
        return;
    }
    try {
        write_texts_atomically(placed(temporary_, files));
    } catch (const output_error& e) {
        // Named as the user will look for it, not inside the temporary folder.
        const std::string inside = e.path.compare(0, temporary_.size(), temporary_) == 0 ? e.path.substr(temporary_.size()) : "";
        throw output_error(folder_ + inside, e.reason);
    }
    const temporaries_held hold;  // the rename, or (after a signal) the removal, not both
    std::error_code ec;
    fs::rename(temporary_, folder_, ec);
    if (ec) throw output_error(folder_, ec.message());
    forget_temporary(temporary_);
    temporary_.clear();
}

void write_output_folder(const std::string& folder, const std::vector<std::pair<std::string, std::string>>& files) {
    output_folder(folder, "output").write(files);
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
