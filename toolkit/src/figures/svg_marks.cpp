#include "svg_marks.hpp"

#include <rastrum/svg_text.hpp>

#include <algorithm>
#include <cmath>
#include <functional>

namespace rastrum::svg {

namespace {
constexpr double band_opacity = 0.2;

bool finite(double a, double b) { return std::isfinite(a) && std::isfinite(b); }

/// Runs of consecutive indices whose points are drawable; a gap breaks a line or a band.
std::vector<std::pair<std::size_t, std::size_t>> runs(std::size_t n, const std::function<bool(std::size_t)>& ok) {
    std::vector<std::pair<std::size_t, std::size_t>> out;
    std::size_t i = 0;
    while (i < n) {
        while (i < n && !ok(i)) ++i;
        const std::size_t start = i;
        while (i < n && ok(i)) ++i;
        if (i > start) out.emplace_back(start, i);
    }
    return out;
}

std::string point(double x, double y) { return coordinate(x) + " " + coordinate(y); }
}  // namespace

bool plot_area::contains(double px, double py) const {
    const double dx = 1e-9 * (x_high - x_low), dy = 1e-9 * (y_high - y_low);
    return px >= x_low - dx && px <= x_high + dx && py >= y_low - dy && py <= y_high + dy;
}

std::string stroke_of(const style& look) {
    std::string s = " stroke=\"" + look.colour + "\" stroke-width=\"" + coordinate(look.line_width) + "\"";
    if (!look.dash.empty()) s += " stroke-dasharray=\"" + look.dash + "\"";
    return s;
}

void draw_band(std::ostringstream& out, const series& s, const plot_area& area) {
    if (s.low.size() != s.x.size() || s.high.size() != s.x.size() || s.interval_as_bars || s.x.empty()) return;
    const auto ok = [&](std::size_t i) {
        return finite(s.low[i], s.high[i]) && area.contains(s.x[i], s.low[i]) && area.contains(s.x[i], s.high[i]);
    };
    for (const auto& [begin, end]: runs(s.x.size(), ok)) {
        out << "<path d=\"M";
        for (std::size_t i = begin; i < end; ++i) out << (i == begin ? "" : "L") << point(area.x(s.x[i]), area.y(s.high[i]));
        for (std::size_t i = end; i-- > begin;) out << "L" << point(area.x(s.x[i]), area.y(s.low[i]));
        out << "Z\" fill=\"" << s.look.colour << "\" fill-opacity=\"" << band_opacity << "\" stroke=\"none\"/>\n";
    }
}

namespace {
void draw_steps(std::ostringstream& out, const series& s, const plot_area& area) {
    if (s.x.size() != s.y.size() + 1) return;
    std::ostringstream d;
    bool open = false;
    for (std::size_t i = 0; i < s.y.size(); ++i) {
        if (!std::isfinite(s.y[i]) || !area.contains(s.x[i], s.y[i]) || !area.contains(s.x[i + 1], s.y[i])) {
            open = false;
            continue;
        }
        const double y = area.y(s.y[i]);
        d << (open ? "V" + coordinate(y) : "M" + point(area.x(s.x[i]), y)) << "H" << coordinate(area.x(s.x[i + 1]));
        open = true;
    }
    if (!d.str().empty()) out << "<path d=\"" << d.str() << "\" fill=\"none\"" << stroke_of(s.look) << "/>\n";
}

void draw_error_bars(std::ostringstream& out, const series& s, const plot_area& area) {
    if (s.low.size() != s.x.size() || s.high.size() != s.x.size()) return;
    std::ostringstream d;
    for (std::size_t i = 0; i < s.x.size(); ++i) {
        if (!finite(s.low[i], s.high[i]) || !area.contains(s.x[i], s.low[i]) || !area.contains(s.x[i], s.high[i])) continue;
        const double x = area.x(s.x[i]), lo = area.y(s.low[i]), hi = area.y(s.high[i]);
        d << "M" << point(x, lo) << "V" << coordinate(hi) << "M" << point(x - 3, lo) << "h6M" << point(x - 3, hi) << "h6";
    }
    if (!d.str().empty()) {
        out << "<path d=\"" << d.str() << "\" fill=\"none\" stroke=\"" << s.look.colour << "\" stroke-width=\"1.3\"/>\n";
    }
}
}  // namespace

void draw_series(std::ostringstream& out, const series& s, const plot_area& area) {
    if (s.steps) {
        draw_steps(out, s, area);
        return;
    }
    if (s.x.size() != s.y.size()) return;
    const auto ok = [&](std::size_t i) { return finite(s.x[i], s.y[i]) && area.contains(s.x[i], s.y[i]); };
    if (s.line) {
        for (const auto& [begin, end]: runs(s.x.size(), ok)) {
            if (end - begin < 2) continue;
            out << "<path d=\"M";
            for (std::size_t i = begin; i < end; ++i) out << (i == begin ? "" : "L") << point(area.x(s.x[i]), area.y(s.y[i]));
            out << "\" fill=\"none\"" << stroke_of(s.look) << " stroke-linejoin=\"round\"/>\n";
        }
    }
    if (s.interval_as_bars) draw_error_bars(out, s, area);
    if (!s.markers || s.look.shape == marker::none) return;
    out << "<g fill=\"" << s.look.colour << "\" stroke=\"" << s.look.colour << "\" stroke-width=\"1.5\">\n";
    for (std::size_t i = 0; i < s.x.size(); ++i) {
        if (!ok(i)) continue;
        const bool hollow = i < s.hollow.size() && s.hollow[i];
        draw_marker(out, s.look.shape, area.x(s.x[i]), area.y(s.y[i]), s.marker_size, hollow);
    }
    out << "</g>\n";
}

void draw_raster(std::ostringstream& out, const raster& r, const plot_area& area) {
    if (r.x.size() != r.row.size() || r.x.empty()) return;
    const double row_px = std::fabs(area.y(1) - area.y(0));
    const double tick = std::clamp(0.8 * row_px, 1.0, 10.0);
    std::ostringstream d;
    for (std::size_t i = 0; i < r.x.size(); ++i) {
        if (!finite(r.x[i], r.row[i]) || !area.contains(r.x[i], r.row[i])) continue;
        // One decimal: a raster holds many thousands of ticks and 0.1 px is below what a screen shows.
        d << "M" << coordinate(area.x(r.x[i]), 1) << " " << coordinate(area.y(r.row[i]) - tick / 2, 1) << "v"
          << coordinate(tick, 1);
    }
    out << "<path d=\"" << d.str() << "\" fill=\"none\" stroke=\"" << r.colour << "\" stroke-width=\"1\"/>\n";
}

void draw_marker(std::ostringstream& out, marker shape, double x, double y, double size, bool hollow) {
    const std::string fill = hollow ? " fill=\"#ffffff\"" : "";
    const double r = size;
    switch (shape) {
        case marker::none:
            return;
        case marker::circle:
            out << "<circle cx=\"" << coordinate(x) << "\" cy=\"" << coordinate(y) << "\" r=\"" << coordinate(r) << "\"" << fill << "/>\n";
            return;
        case marker::square:
            out << "<rect x=\"" << coordinate(x - 0.9 * r) << "\" y=\"" << coordinate(y - 0.9 * r) << "\" width=\""
                << coordinate(1.8 * r) << "\" height=\"" << coordinate(1.8 * r) << "\"" << fill << "/>\n";
            return;
        case marker::triangle_up:
        case marker::triangle_down: {
            const double s = shape == marker::triangle_up ? 1 : -1;
            out << "<path d=\"M" << point(x, y - s * 1.2 * r) << "L" << point(x + 1.1 * r, y + s * 0.8 * r) << "L"
                << point(x - 1.1 * r, y + s * 0.8 * r) << "Z\"" << fill << "/>\n";
            return;
        }
        case marker::diamond:
            out << "<path d=\"M" << point(x, y - 1.25 * r) << "L" << point(x + r, y) << "L" << point(x, y + 1.25 * r) << "L"
                << point(x - r, y) << "Z\"" << fill << "/>\n";
            return;
        case marker::cross:
        case marker::plus: {
            // Line markers have no inside: hollow ones are drawn thinner instead.
            const std::string width = hollow ? " stroke-width=\"1\"" : " stroke-width=\"2\"";
            if (shape == marker::cross) {
                out << "<path d=\"M" << point(x - r, y - r) << "L" << point(x + r, y + r) << "M" << point(x - r, y + r) << "L"
                    << point(x + r, y - r) << "\" fill=\"none\"" << width << "/>\n";
            } else {
                out << "<path d=\"M" << point(x - 1.2 * r, y) << "H" << coordinate(x + 1.2 * r) << "M" << point(x, y - 1.2 * r)
                    << "V" << coordinate(y + 1.2 * r) << "\" fill=\"none\"" << width << "/>\n";
            }
            return;
        }
    }
}

}  // namespace rastrum::svg
