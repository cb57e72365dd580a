#pragma once
/// Outputs that appear whole or not at all. Write to `temporary_path()`, then `commit()` renames it
/// over the final path. An object destroyed without commit removes its temporary, so a failure
/// never leaves a partial file and never clobbers what was at the final path.
#include <string>
#include <vector>

namespace rastrum {

class atomic_file {
public:
    explicit atomic_file(std::string final_path);
    atomic_file(const atomic_file&) = delete;
    atomic_file& operator=(const atomic_file&) = delete;
    atomic_file(atomic_file&&) noexcept;
    ~atomic_file();

    const std::string& final_path() const { return final_; }
    /// Beside the final path (same directory, so the rename is atomic), unique to this process.
    const std::string& temporary_path() const { return temporary_; }
    /// Renames the temporary over the final path. Throws error when the rename fails.
    void commit();

private:
    std::string final_;
    std::string temporary_;
    bool committed_ = false;
};

/// Writes `text` to `path` atomically. Throws error (naming the path) when it cannot.
void write_text_atomically(const std::string& path, const std::string& text);

/// Several outputs committed together: every text is written to its temporary first, and only when
/// all writes succeeded are they renamed, so a failure leaves none of them changed.
void write_texts_atomically(const std::vector<std::pair<std::string, std::string>>& path_text);

}  // namespace rastrum
