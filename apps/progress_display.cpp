#include "progress_display.hpp"

#include <rastrum/errors.hpp>

#include <cstdio>
#include <iostream>
#include <unistd.h>

namespace rastrum::app {

progress_style parse_progress_style(const std::string& text) {
    if (text == "auto") return progress_style::automatic;
    if (text == "bar") return progress_style::bar;
    if (text == "plain") return progress_style::plain;
    if (text == "none") return progress_style::none;
    throw usage_error("--progress: choose auto, bar, plain or none, got '" + text + "'");
}

progress_display::progress_display(progress_style style, bool quiet, std::string what)
    : style_(style), what_(std::move(what)), start_(std::chrono::steady_clock::now()), last_line_(start_) {
    if (quiet) style_ = progress_style::none;
    if (style_ == progress_style::automatic) style_ = isatty(STDERR_FILENO) ? progress_style::bar : progress_style::none;
}

progress_display::~progress_display() {
    // The bar's line is finished so that what follows starts on a line of its own.
    if (bar_shown_) std::cerr << "\n" << std::flush;
}

progress_callback progress_display::callback() {
    if (style_ == progress_style::none) return {};
    return [this](std::size_t done, std::size_t total) { report(done, total); };
}

namespace {
std::string clock_text(double seconds) {
    const long s = static_cast<long>(seconds + 0.5);
    char text[32];
    if (s >= 3600) {
        std::snprintf(text, sizeof text, "%ld:%02ld:%02ld", s / 3600, (s / 60) % 60, s % 60);
    } else {
        std::snprintf(text, sizeof text, "%ld:%02ld", s / 60, s % 60);
    }
    return text;
}
}  // namespace

void progress_display::report(std::size_t done, std::size_t total) {
    const auto now = std::chrono::steady_clock::now();
    const double elapsed = std::chrono::duration<double>(now - start_).count();
    // Time left from the mean time per task so far: tasks are of similar size (units x bin widths).
    const double left = done > 0 ? elapsed * static_cast<double>(total - done) / static_cast<double>(done) : 0;
    if (style_ == progress_style::plain) {
        // One line at most every 5 s (and the last), so a log stays readable.
        if (done < total && now - last_line_ < std::chrono::seconds(5)) return;
        last_line_ = now;
        std::cerr << what_ << ": " << done << "/" << total << " done, " << clock_text(elapsed) << " elapsed"
                  << (done < total ? ", about " + clock_text(left) + " left" : std::string()) << "\n"
                  << std::flush;
        return;
    }
    const int width = 30;
    const int filled = total > 0 ? static_cast<int>(width * done / total) : width;
    std::cerr << "\r" << what_ << " [" << std::string(static_cast<std::size_t>(filled), '#')
              << std::string(static_cast<std::size_t>(width - filled), '.') << "] " << done << "/" << total << "  "
              << (done < total ? clock_text(left) + " left " : clock_text(elapsed) + " total") << "\x1b[K" << std::flush;
    bar_shown_ = true;
}

}  // namespace rastrum::app
