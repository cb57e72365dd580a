#pragma once
// Progress of long work on stderr: a bar with counts and time left on a terminal, at most one plain
// line every few seconds when asked for (for logs), and nothing otherwise.
#include <rastrum/parallel.hpp>

#include <chrono>
#include <string>

namespace rastrum::app {

enum class progress_style { automatic, bar, plain, none };

/// "auto", "bar", "plain" or "none" (throws usage_error otherwise).
progress_style parse_progress_style(const std::string& text);

class progress_display {
public:
    /// automatic means a bar when stderr is a terminal and nothing otherwise; `quiet` means none.
    progress_display(progress_style style, bool quiet, std::string what);
    ~progress_display();
    progress_display(const progress_display&) = delete;
    progress_display& operator=(const progress_display&) = delete;

    /// The callback to hand to an analysis (calls are serialised by parallel_for).
    progress_callback callback();

private:
    void report(std::size_t done, std::size_t total);
    progress_style style_;
    std::string what_;
    std::chrono::steady_clock::time_point start_;
    std::chrono::steady_clock::time_point last_line_;
    bool bar_shown_ = false;
};

/// Runs `work` with a display of `style` (none when quiet) plugged into `slot`, the request's
/// progress callback, and finishes the display's line before returning what `work` returned.
template <class Work>
auto with_progress(progress_style style, bool quiet, const std::string& what, progress_callback& slot, Work work) {
    progress_display shown(style, quiet, what);
    slot = shown.callback();
    auto result = work();
    slot = {};
    return result;
}

}  // namespace rastrum::app
