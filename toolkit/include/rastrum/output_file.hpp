#pragma once
/// Outputs that appear whole or not at all, and never cost the user a file (notes/robustness.md,
/// "Output paths"). What is at an output's path before any work decides how it is written:
///
///   absent, a regular file, or a symlink to one   a temporary beside the file, renamed over it (a
///                                                 symlink's target is replaced, the link kept)
///   a character device, a FIFO, "-" (standard     written directly, streaming, with no temporary;
///   output), /dev/stdout, /dev/fd/N, /proc/...    HDF5 goes through a scratch file (below); the
///                                                 descriptors themselves for "-" and /dev/fd/N
///   a folder, a socket, a block device, "",       usage_error, before any work
///   a name in /dev that does not exist
///   in a folder that is missing or unwritable     output_error (exit 6), before any work
///
/// libhdf5 writes only to files it can seek in, so an HDF5 output to a stream is written to a
/// scratch file in the system's temporary folder and its bytes are copied into the stream.
///
/// Use: resolve every output (usage errors), check them together, make an output_file of each
/// (which creates its temporary at once: an unwritable folder is an output_error before any
/// work), do the work, then finish_outputs. Every temporary is registered (temporary_files.hpp),
/// so a command stopped by a signal removes it, and removed when its output_file goes unfinished.
#include <string>
#include <vector>

namespace rastrum {

enum class output_method {
    replace,  ///< a temporary renamed over final_path
    stream,   ///< written directly: to `descriptor`, or to final_path opened for appending
};

struct output_target {
    std::string path;        ///< as the user named it, for messages
    std::string final_path;  ///< replace: the file a rename replaces (a symlink's target); stream: what is opened
    output_method method = output_method::replace;
    /// A stream that is a file descriptor this process holds ("-" and /dev/stdout: 1, /dev/stderr:
    /// 2, /dev/fd/N and /proc/self/fd/N: N), written as it is, never opened again: so the shell's
    /// redirection keeps its place and mode, and works for a user who could not open its file.
    int descriptor = -1;

    /// A path the program chose itself (a manifest, a file in its own folder): always replaced.
    static output_target replacing(const std::string& path);
    /// A stream that is this process's standard output, or the very file it is.
    bool is_standard_output() const;
};

/// Decides how the output `path` of `option` is written, from what is there now (table above).
/// Throws usage_error naming the option for an empty path, a folder, a socket or a block device;
/// output_error when its folder does not exist or cannot be reached.
output_target resolve_output(const std::string& path, const std::string& option);

/// Throws usage_error when two outputs would replace one file or an output would replace one of
/// `inputs`. Streams may be named more than once (each output is written to them in turn).
void check_output_targets(const std::vector<output_target>& targets, const std::vector<std::string>& inputs);

class output_file {
public:
    /// Who writes the content: finish_outputs (`text`), or a library that opens a path itself
    /// (`by_path`, for libhdf5) at path_to_write() before finish_outputs.
    enum class content { text, by_path };

    /// Creates the temporary now (or, for a stream, checks that it may be written and, for
    /// `by_path`, creates its scratch file), after removing stale temporaries of the same output
    /// left by processes that no longer run. Throws output_error naming the output.
    explicit output_file(output_target target, content kind = content::text);
    ~output_file();  ///< removes the temporary or scratch file unless finished
    output_file(output_file&&) noexcept;
    output_file(const output_file&) = delete;
    output_file& operator=(const output_file&) = delete;
    output_file& operator=(output_file&&) = delete;

    const output_target& target() const { return target_; }
    /// For `by_path` content: the temporary, or a stream's scratch file.
    const std::string& path_to_write() const { return temporary_; }

private:
    friend void finish_outputs(const std::vector<std::pair<output_file*, const std::string*>>& outputs);
    void write_temporary(const std::string& text);
    void send(const std::string* text);
    void rename_into_place();
    void discard();

    output_target target_;
    content kind_;
    std::string temporary_;  // empty for a stream written as text
    bool finished_ = false;
};

/// Finishes several outputs as one (`text` for content::text, nullptr for by_path): the texts go
/// into their temporaries, then the streams are written, then every temporary is renamed into
/// place, so an error anywhere (output_error, naming the output and the system's reason) leaves
/// every replaced file as it was; a signal cannot stop the renames halfway.
void finish_outputs(const std::vector<std::pair<output_file*, const std::string*>>& outputs);

}  // namespace rastrum
