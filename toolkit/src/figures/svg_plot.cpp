#include <rastrum/svg_plot.hpp>

#include "svg_legend.hpp"
#include "svg_marks.hpp"

#include <rastrum/plot_scale.hpp>
#include <rastrum/svg_text.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

namespace rastrum::svg {

namespace {

constexpr double outer_margin = 12, chart_title_px = 15, panel_title_px = 13, axis_label_px = 13, tick_px = 12;
constexpr double tick_length = 4, right_margin = 16, panel_gap = 14, min_font_px = 9;

/// The font size (at most `preferred`, at least min_font_px) at which `text` fits in `available` px.
double fitted_font(const std::string& text, double preferred, double available) {
    const double w = text_width(text, preferred);
    if (w <= available || w <= 0) return preferred;
    return std::max(min_font_px, preferred * available / w);
}

void text_at(std::ostringstream& out, double x, double y, double font_px, const std::string& anchor,
             const std::string& text, const std::string& extra = "") {
    out << "<text x=\"" << coordinate(x) << "\" y=\"" << coordinate(y) << "\" font-size=\"" << coordinate(font_px, 1)
        << "\"" << (anchor == "start" ? "" : " text-anchor=\"" + anchor + "\"") << extra << ">" << escape(text)
        << "</text>\n";
}

struct range {
    double low = std::numeric_limits<double>::infinity();
    double high = -std::numeric_limits<double>::infinity();
    void add(double v) {
        if (!std::isfinite(v)) return;
        low = std::min(low, v);
        high = std::max(high, v);
    }
    bool empty() const { return !(low <= high); }
};

/// An axis for data in `r`: 1-2-5 ticks just beyond the data, and where a mark would sit on the
/// frame a margin of 3% beyond the last tick (not at an end anchored at 0).
axis_ticks data_axis(range r, bool from_zero, int max_count, bool whole_steps) {
    if (r.empty()) r = {0, 1};
    if (from_zero) r.add(0);
    axis_ticks a = nice_axis(r.low, r.high, max_count, whole_steps);
    const double span = a.high - a.low;
    if (!(from_zero && r.low == 0) && r.low - a.low < 0.02 * span) a.low -= 0.03 * span;
    if (!(from_zero && r.high == 0) && a.high - r.high < 0.02 * span) a.high += 0.03 * span;
    return a;
}

/// Everything about one panel's geometry that the rendering needs.
struct panel_geometry {
    axis_ticks x, y;
    std::vector<std::string> x_labels;  // tick labels (category names on a categorical axis)
    bool x_labels_slanted = false;
    double left = 0;                    // px from the cell's left edge to the data area
    double title_h = 0, x_axis_h = 0, legend_h = 0;
    legend_layout legend;
    double plot_w = 0;
    double height() const;
    const panel* source = nullptr;
};

double panel_geometry::height() const {
    return title_h + 6 + source->height + x_axis_h + legend_h + panel_gap;
}

range x_range_of(const panel& p) {
    range r;
    for (const auto& s: p.lines) {
        for (double v: s.x) r.add(v);
    }
    for (const auto& ra: p.rasters) {
        for (double v: ra.x) r.add(v);
    }
    return r;
}

range y_range_of(const panel& p) {
    range r;
    for (const auto& s: p.lines) {
        for (double v: s.y) r.add(v);
        for (double v: s.low) r.add(v);
        for (double v: s.high) r.add(v);
    }
    for (const auto& ra: p.rasters) {
        for (double v: ra.row) {
            r.add(v - 0.5);
            r.add(v + 0.5);
        }
    }
    return r;
}

std::vector<std::string> labels_of(const tick_set& t) {
    std::vector<std::string> labels;
    for (double v: t.values) labels.push_back(tick_label(v, t.decimals));
    return labels;
}

double widest(const std::vector<std::string>& labels, double font_px) {
    double w = 0;
    for (const auto& l: labels) w = std::max(w, text_width(l, font_px));
    return w;
}

axis_ticks y_axis_of(const panel& p) {
    const int max_count = std::max(3, static_cast<int>(p.height / 34) + 1);
    if (p.y_domain) return ticks_within(p.y_domain->first, p.y_domain->second, max_count, p.y_whole_numbers);
    return data_axis(y_range_of(p), p.y_from_zero, max_count, p.y_whole_numbers);
}

/// The most ticks whose labels still leave a gap between neighbours.
void choose_x_axis(const panel& p, panel_geometry& g) {
    if (!p.x_categories.empty()) {
        const double n = static_cast<double>(p.x_categories.size());
        g.x.low = -0.5;
        g.x.high = n - 0.5;
        for (std::size_t i = 0; i < p.x_categories.size(); ++i) g.x.ticks.values.push_back(static_cast<double>(i));
        g.x_labels = p.x_categories;
        g.x_labels_slanted = widest(g.x_labels, tick_px) + 8 > g.plot_w / n;
        return;
    }
    for (int max_count = 11; max_count >= 2; --max_count) {
        if (p.x_domain) {
            g.x = ticks_within(p.x_domain->first, p.x_domain->second, max_count);
        } else {
            g.x = data_axis(x_range_of(p), p.x_from_zero, max_count, false);
        }
        g.x_labels = labels_of(g.x.ticks);
        const double n = static_cast<double>(g.x.ticks.values.size());
        const double spacing = n > 1 ? g.plot_w * g.x.ticks.step / (g.x.high - g.x.low) : g.plot_w;
        if (widest(g.x_labels, tick_px) + 12 <= spacing) return;
    }
}

linear_map x_map_of(const panel_geometry& g, double plot_x) {
    return {g.x.low, g.x.high, plot_x, plot_x + g.plot_w};
}

linear_map y_map_of(const panel_geometry& g, double plot_y) {
    const double h = g.source->height;
    if (g.source->y_downward) return {g.y.low, g.y.high, plot_y, plot_y + h};
    return {g.y.low, g.y.high, plot_y + h, plot_y};
}

void draw_axes(std::ostringstream& out, const panel_geometry& g, double plot_x, double plot_y) {
    const panel& p = *g.source;
    const double h = p.height;
    const linear_map xm = x_map_of(g, plot_x), ym = y_map_of(g, plot_y);
    // Light grid at the y ticks, then a zero line when the range spans 0 (intervals below 0 matter).
    out << "<g stroke=\"" << grid_grey << "\" stroke-width=\"1\">\n";
    for (double v: g.y.ticks.values) {
        const double y = ym(v);
        out << "<path d=\"M" << coordinate(plot_x) << " " << coordinate(y) << "H" << coordinate(plot_x + g.plot_w)
            << "\"/>\n";
    }
    out << "</g>\n";
    if (g.y.low < 0 && g.y.high > 0) {
        out << "<path d=\"M" << coordinate(plot_x) << " " << coordinate(ym(0)) << "H" << coordinate(plot_x + g.plot_w)
            << "\" stroke=\"#9a9a9a\" stroke-width=\"1\"/>\n";
    }
    // Tick marks outside the frame.
    out << "<g stroke=\"" << frame_grey << "\" stroke-width=\"1\">\n";
    for (double v: g.y.ticks.values) {
        out << "<path d=\"M" << coordinate(plot_x) << " " << coordinate(ym(v)) << "h-" << coordinate(tick_length) << "\"/>\n";
    }
    for (double v: g.x.ticks.values) {
        out << "<path d=\"M" << coordinate(xm(v)) << " " << coordinate(plot_y + h) << "v" << coordinate(tick_length) << "\"/>\n";
    }
    out << "</g>\n";
    out << "<g fill=\"#222222\">\n";
    const auto y_labels = labels_of(g.y.ticks);
    for (std::size_t i = 0; i < y_labels.size(); ++i) {
        text_at(out, plot_x - tick_length - 3, ym(g.y.ticks.values[i]) + 4, tick_px, "end", y_labels[i]);
    }
    for (std::size_t i = 0; i < g.x_labels.size(); ++i) {
        const double x = xm(g.x.ticks.values[i]), y = plot_y + h + tick_length + 13;
        if (g.x_labels_slanted) {
            text_at(out, x, y, tick_px, "end", g.x_labels[i],
                    " transform=\"rotate(-35 " + coordinate(x) + " " + coordinate(y) + ")\"");
        } else {
            text_at(out, x, y, tick_px, "middle", g.x_labels[i]);
        }
    }
    out << "</g>\n";
}

void draw_labels(std::ostringstream& out, const panel_geometry& g, double cell_x, double plot_x, double plot_y) {
    const panel& p = *g.source;
    if (!p.title.empty()) {
        text_at(out, plot_x, plot_y - 10, fitted_font(p.title, panel_title_px, g.plot_w), "start", p.title,
                " font-weight=\"bold\"");
    }
    if (!p.x_label.empty()) {
        const double y = plot_y + p.height + g.x_axis_h - 4;
        text_at(out, plot_x + g.plot_w / 2, y, fitted_font(p.x_label, axis_label_px, g.plot_w), "middle", p.x_label);
    }
    if (!p.y_label.empty()) {
        const double x = cell_x + 14, y = plot_y + p.height / 2;
        text_at(out, x, y, fitted_font(p.y_label, axis_label_px, p.height), "middle", p.y_label,
                " transform=\"rotate(-90 " + coordinate(x) + " " + coordinate(y) + ")\"");
    }
}

void draw_panel(std::ostringstream& out, const panel_geometry& g, double cell_x, double cell_y, bool own_legend) {
    const panel& p = *g.source;
    const double plot_x = cell_x + g.left, plot_y = cell_y + g.title_h + 6;
    draw_axes(out, g, plot_x, plot_y);
    const plot_area area{x_map_of(g, plot_x), y_map_of(g, plot_y), g.x.low, g.x.high, g.y.low, g.y.high};
    for (const auto& s: p.lines) draw_band(out, s, area);
    for (const auto& s: p.lines) draw_series(out, s, area);
    for (const auto& r: p.rasters) draw_raster(out, r, area);
    out << "<rect x=\"" << coordinate(plot_x) << "\" y=\"" << coordinate(plot_y) << "\" width=\"" << coordinate(g.plot_w)
        << "\" height=\"" << coordinate(p.height) << "\" fill=\"none\" stroke=\"" << frame_grey << "\" stroke-width=\"1\"/>\n";
    draw_labels(out, g, cell_x, plot_x, plot_y);
    if (own_legend) draw_legend(out, g.legend, plot_x, plot_y + p.height + g.x_axis_h + 8);
}

}  // namespace

std::string render(const chart& c) {
    const int columns = std::max(1, std::min<int>(c.columns, static_cast<int>(std::max<std::size_t>(1, c.panels.size()))));
    const double cell_w = (c.width - 2 * outer_margin) / columns;
    std::vector<panel_geometry> geometry(c.panels.size());
    // The data areas of one column share their left edge, so stacked panels line up.
    std::vector<double> left(columns, 0);
    for (std::size_t i = 0; i < c.panels.size(); ++i) {
        panel_geometry& g = geometry[i];
        g.source = &c.panels[i];
        g.y = y_axis_of(c.panels[i]);
        const double label_band = c.panels[i].y_label.empty() ? 4 : 24;
        left[i % columns] = std::max(left[i % columns], label_band + widest(labels_of(g.y.ticks), tick_px) + tick_length + 6);
    }
    for (std::size_t i = 0; i < c.panels.size(); ++i) {
        panel_geometry& g = geometry[i];
        const panel& p = c.panels[i];
        g.left = left[i % columns];
        g.plot_w = cell_w - g.left - right_margin;
        choose_x_axis(p, g);
        g.title_h = p.title.empty() ? 4 : 20;
        g.x_axis_h = tick_length + 16 + (p.x_label.empty() ? 0 : 18);
        if (g.x_labels_slanted) g.x_axis_h += 0.6 * widest(g.x_labels, tick_px);
        g.legend = layout_legend(legend_entries(p), g.plot_w);
        if (!c.shared_legend) g.legend_h = g.legend.height > 0 ? g.legend.height + 8 : 0;
    }
    const double title_h = c.title.empty() ? 0 : 26;
    std::vector<double> row_heights;
    for (std::size_t i = 0; i < geometry.size(); ++i) {
        if (i % columns == 0) row_heights.push_back(0);
        row_heights.back() = std::max(row_heights.back(), geometry[i].height());
    }
    legend_layout shared;
    if (c.shared_legend && !geometry.empty()) {
        const auto entries = shared_legend_entries(c.panels);
        shared = layout_legend(entries, c.width - 2 * outer_margin - geometry[0].left - right_margin);
    }
    double height = outer_margin + title_h;
    for (double h: row_heights) height += h;
    height += (shared.height > 0 ? shared.height + 8 : 0) + outer_margin;
    height = std::ceil(height);

    std::ostringstream out;
    out << "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
        << "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"" << coordinate(c.width) << "\" height=\""
        << coordinate(height) << "\" viewBox=\"0 0 " << coordinate(c.width) << " " << coordinate(height)
        << "\" font-family=\"DejaVu Sans, Liberation Sans, Arial, Helvetica, sans-serif\">\n"
        << "<title>" << escape(c.title) << "</title>\n";
    if (!c.description.empty()) out << "<desc>" << escape(c.description) << "</desc>\n";
    out << "<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n";
    if (!c.title.empty()) {
        text_at(out, outer_margin, outer_margin + 14, fitted_font(c.title, chart_title_px, c.width - 2 * outer_margin),
                "start", c.title, " font-weight=\"bold\"");
    }
    double row_y = outer_margin + title_h;
    for (std::size_t i = 0; i < geometry.size(); ++i) {
        const std::size_t row = i / columns;
        if (i > 0 && i % columns == 0) row_y += row_heights[row - 1];
        const double cell_x = outer_margin + static_cast<double>(i % columns) * cell_w;
        draw_panel(out, geometry[i], cell_x, row_y, !c.shared_legend);
    }
    if (shared.height > 0) {
        double legend_y = outer_margin + title_h;
        for (double h: row_heights) legend_y += h;
        draw_legend(out, shared, outer_margin + geometry[0].left, legend_y);
    }
    out << "</svg>\n";
    return out.str();
}

}  // namespace rastrum::svg
