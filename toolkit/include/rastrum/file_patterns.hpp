#pragma once
/// Shell-style file patterns (`*`, `?`, `[...]` within one folder level, by POSIX glob(3)), looked
/// up relative to a base folder so that a plan's patterns mean the same from any working directory.
#include <filesystem>
#include <string>
#include <vector>

namespace rastrum {

/// True when `pattern` has a character glob(3) treats specially.
bool has_wildcards(const std::string& pattern);

/// The regular files `pattern` names, sorted. A relative pattern is looked up in `base` and its
/// matches are returned relative to `base` (lexically normal, e.g. "../data/a.h5"); an absolute
/// pattern gives absolute paths. Folders are left out. Throws error when the file system cannot be read.
std::vector<std::string> match_files(const std::filesystem::path& base, const std::string& pattern);

}  // namespace rastrum
