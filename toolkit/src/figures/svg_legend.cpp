#include "svg_legend.hpp"

#include "svg_marks.hpp"

#include <rastrum/svg_text.hpp>

#include <algorithm>

namespace rastrum::svg {

namespace {
constexpr double legend_px = 12, sample_w = 30, sample_gap = 6, entry_gap = 18, line_h = 16;

/// Words of `text` packed into lines of at most `width` px (a single long word stays whole).
std::vector<std::string> wrapped(const std::string& text, double width) {
    std::vector<std::string> lines;
    std::string current;
    std::size_t start = 0;
    while (start <= text.size()) {
        std::size_t space = text.find(' ', start);
        if (space == std::string::npos) space = text.size();
        const std::string word = text.substr(start, space - start);
        const std::string candidate = current.empty() ? word : current + " " + word;
        if (!current.empty() && text_width(candidate, legend_px) > width) {
            lines.push_back(current);
            current = word;
        } else {
            current = candidate;
        }
        start = space + 1;
    }
    if (!current.empty() || lines.empty()) lines.push_back(current);
    return lines;
}
}  // namespace

namespace {
std::vector<legend_entry> series_entries(const panel& p) {
    std::vector<legend_entry> entries;
    for (const auto& s: p.lines) {
        if (s.label.empty()) continue;
        legend_entry e;
        e.lines = {s.label};
        e.look = s.look;
        e.line = s.line || s.steps;
        e.marker = s.markers && !s.steps && s.look.shape != marker::none;
        e.band = !s.low.empty() && !s.interval_as_bars;
        e.bars = !s.low.empty() && s.interval_as_bars;
        entries.push_back(e);
    }
    for (const auto& r: p.rasters) {
        if (r.label.empty()) continue;
        legend_entry e;
        e.lines = {r.label};
        e.look.colour = r.colour;
        e.raster_tick = true;
        entries.push_back(e);
    }
    return entries;
}

std::vector<legend_entry> key_entries(const panel& p) {
    std::vector<legend_entry> entries;
    for (const auto& k: p.keys) {
        legend_entry e;
        e.lines = {k.label};
        e.look = k.look;
        e.line = k.line;
        e.marker = k.marker;
        e.hollow = k.hollow;
        e.band = k.band;
        entries.push_back(e);
    }
    return entries;
}

void add_new(std::vector<legend_entry>& to, const std::vector<legend_entry>& from) {
    for (const auto& e: from) {
        const bool seen = std::any_of(to.begin(), to.end(), [&](const legend_entry& k) { return k.lines == e.lines; });
        if (!seen) to.push_back(e);
    }
}
}  // namespace

std::vector<legend_entry> legend_entries(const panel& p) {
    std::vector<legend_entry> entries = series_entries(p);
    add_new(entries, key_entries(p));
    return entries;
}

std::vector<legend_entry> shared_legend_entries(const std::vector<panel>& panels) {
    std::vector<legend_entry> entries;
    for (const auto& p: panels) add_new(entries, series_entries(p));
    for (const auto& p: panels) add_new(entries, key_entries(p));
    return entries;
}

legend_layout layout_legend(std::vector<legend_entry> entries, double width) {
    legend_layout layout;
    const double text_room = std::max(60.0, width - sample_w - sample_gap);
    double x = 0, y = 0, row_h = 0;
    for (auto& e: entries) {
        e.lines = wrapped(e.lines.front(), text_room);
        double text_w = 0;
        for (const auto& l: e.lines) text_w = std::max(text_w, text_width(l, legend_px));
        const double w = sample_w + sample_gap + text_w;
        if (x > 0 && x + w > width) {
            x = 0;
            y += row_h;
            row_h = 0;
        }
        e.x = x;
        e.y = y;
        x += w + entry_gap;
        row_h = std::max(row_h, line_h * static_cast<double>(e.lines.size()) + 2);
        layout.entries.push_back(e);
    }
    layout.height = layout.entries.empty() ? 0 : y + row_h;
    return layout;
}

void draw_legend(std::ostringstream& out, const legend_layout& legend, double x0, double y0) {
    for (const auto& e: legend.entries) {
        const double x = x0 + e.x, mid = y0 + e.y + line_h / 2;
        if (e.band) {
            out << "<rect x=\"" << coordinate(x) << "\" y=\"" << coordinate(mid - 5) << "\" width=\"" << coordinate(sample_w)
                << "\" height=\"10\" fill=\"" << e.look.colour << "\" fill-opacity=\"0.2\"/>\n";
        }
        if (e.bars) {
            out << "<path d=\"M" << coordinate(x + sample_w / 2) << " " << coordinate(mid - 6) << "v12\" stroke=\"" << e.look.colour
                << "\" stroke-width=\"1.3\"/>\n";
        }
        if (e.line) {
            out << "<path d=\"M" << coordinate(x) << " " << coordinate(mid) << "h" << coordinate(sample_w) << "\" fill=\"none\""
                << stroke_of(e.look) << "/>\n";
        }
        if (e.raster_tick) {
            out << "<path d=\"M" << coordinate(x + sample_w / 2) << " " << coordinate(mid - 5) << "v10\" stroke=\""
                << e.look.colour << "\" stroke-width=\"1\"/>\n";
        }
        if (e.marker) {
            out << "<g fill=\"" << e.look.colour << "\" stroke=\"" << e.look.colour << "\" stroke-width=\"1.5\">\n";
            draw_marker(out, e.look.shape, x + sample_w / 2, mid, 4.5, e.hollow);
            out << "</g>\n";
        }
        for (std::size_t i = 0; i < e.lines.size(); ++i) {
            out << "<text x=\"" << coordinate(x + sample_w + sample_gap) << "\" y=\""
                << coordinate(mid + 4 + line_h * static_cast<double>(i)) << "\" font-size=\"" << coordinate(legend_px)
                << "\" fill=\"#222222\">" << escape(e.lines[i]) << "</text>\n";
        }
    }
}

}  // namespace rastrum::svg
