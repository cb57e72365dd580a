#pragma once
/// An output folder that appears whole or not at all, and never costs the user a file: a new folder
/// is filled under a temporary name and renamed; in an existing folder every file is written
/// atomically, and only files that rastrum itself wrote there before (named in the folder's
/// manifest, `.rastrum-files`) are replaced or removed.
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

inline constexpr const char* output_manifest_name = ".rastrum-files";

/// Before any work: `folder` is an existing folder, or does not exist and its parent does.
/// Throws usage_error naming `option` otherwise.
void check_output_folder(const std::string& folder, const std::string& option);

/// Writes (plain file name, contents) pairs into `folder` as described above. Throws usage_error,
/// before writing anything, when a name is taken by a file rastrum did not write; error when the
/// file system refuses.
void write_output_folder(const std::string& folder, const std::vector<std::pair<std::string, std::string>>& files);

/// `text` as part of a file name: letters, digits, '.', '_' and '-' kept, anything else '_'; never
/// starting with '.' (hidden) and at most 60 bytes.
std::string file_name_part(const std::string& text);

}  // namespace rastrum
