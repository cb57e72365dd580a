#pragma once
/// An output folder that appears whole or not at all, and never costs the user a file: a new folder
/// is filled under a temporary name and renamed; in an existing folder every file is written
/// atomically, and only files that rastrum itself wrote there before (named in the folder's
/// manifest, `.rastrum-files`) are replaced or removed.
#include <rastrum/output_file.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

inline constexpr const char* output_manifest_name = ".rastrum-files";

/// Before any work: `folder` is an existing folder, or does not exist and its parent does.
/// Throws usage_error naming `option` for an existing file that is not a folder, output_error when
/// the parent is missing or cannot be reached.
void check_output_folder(const std::string& folder, const std::string& option);

/// The output folder made ready before the work: checked as above, and then a new folder's
/// temporary (FOLDER.tmp-PID-N beside it, registered for removal on a signal) is created, or in
/// an existing folder a temporary of its manifest, so that a folder that cannot be written is an
/// output_error before any work. Unwritten, it leaves nothing behind.
class output_folder {
public:
    output_folder(std::string folder, const std::string& option);
    ~output_folder();
    output_folder(const output_folder&) = delete;
    output_folder& operator=(const output_folder&) = delete;

    /// Writes (plain file name, contents) pairs as described at the top. Throws usage_error, before
    /// writing anything, when a name is taken by a file rastrum did not write; output_error when the
    /// file system refuses.
    void write(const std::vector<std::pair<std::string, std::string>>& files);

private:
    std::string folder_;
    std::string temporary_;             // a new folder under way
    std::optional<output_file> probe_;  // an existing folder's manifest, made ready
};

/// output_folder(folder, "output").write(files).
void write_output_folder(const std::string& folder, const std::vector<std::pair<std::string, std::string>>& files);

/// `text` as part of a file name: letters, digits, '.', '_' and '-' kept, anything else '_'; never
/// starting with '.' (hidden) and at most 60 bytes.
std::string file_name_part(const std::string& text);

}  // namespace rastrum
