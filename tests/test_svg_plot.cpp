// The SVG plotting module: ticks, text, mapping, palette, layout and determinism.
#include <rastrum/plot_palette.hpp>
#include <rastrum/plot_scale.hpp>
#include <rastrum/svg_plot.hpp>
#include <rastrum/svg_text.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <random>
#include <regex>
#include <set>

using namespace rastrum::svg;

namespace {

std::vector<double> values_of(const axis_ticks& a) { return a.ticks.values; }

/// The mantissa of a step: 1, 2 or 5 for a 1-2-5 step.
double mantissa(double step) { return step / std::pow(10.0, std::floor(std::log10(step) + 1e-9)); }

/// Attribute `name` of every element `tag` in `svg`, as numbers, in document order.
std::vector<double> attributes(const std::string& svg, const std::string& tag, const std::string& name) {
    std::vector<double> out;
    const std::regex element("<" + tag + "\\b[^>]*\\s" + name + "=\"([-0-9.]+)\"");
    for (auto it = std::sregex_iterator(svg.begin(), svg.end(), element); it != std::sregex_iterator(); ++it) {
        out.push_back(std::stod((*it)[1]));
    }
    return out;
}

chart sample_chart() {
    chart c;
    c.title = "u1 & <u2>: \"rates\" 'quoted'";
    panel p;
    p.x_label = "bin width (ms)";
    p.y_label = "information rate (bits/s)";
    p.y_from_zero = true;
    series s;
    s.label = "information <95%>";
    s.look = information_style();
    s.x = {1, 2, 4, 8};
    s.y = {6.1, 5.5, NAN, 4.0};
    s.low = {5.0, 4.8, NAN, 3.2};
    s.high = {7.2, 6.1, NAN, 4.8};
    s.hollow = {false, true, false, false};
    p.lines.push_back(s);
    c.panels.push_back(p);
    return c;
}

}  // namespace

// Expected ticks worked out by hand from the rule "smallest step of 1, 2 or 5 x 10^k that covers
// the range with at most N ticks, ends widened to the ticks outside" (design, common practice in
// plotting libraries).
TEST(svg_ticks, one_two_five_steps_for_several_ranges) {
    EXPECT_EQ(values_of(nice_axis(0, 1, 6)), (std::vector<double>{0, 0.2, 0.4, 0.6, 0.8, 1}));
    EXPECT_EQ(values_of(nice_axis(0, 9.3, 6)), (std::vector<double>{0, 2, 4, 6, 8, 10}));
    EXPECT_EQ(values_of(nice_axis(-3.7, 12.2, 8)), (std::vector<double>{-5, 0, 5, 10, 15}));
    EXPECT_EQ(values_of(nice_axis(0.0012, 0.0047, 5)), (std::vector<double>{0.001, 0.002, 0.003, 0.004, 0.005}));
    EXPECT_EQ(values_of(nice_axis(65.2, 65.9, 5)), (std::vector<double>{65.2, 65.4, 65.6, 65.8, 66}));
    EXPECT_EQ(values_of(nice_axis(1200, 98000, 6)), (std::vector<double>{0, 20000, 40000, 60000, 80000, 100000}));
    const axis_ticks a = nice_axis(0.0012, 0.0047, 5);
    EXPECT_EQ(a.ticks.decimals, 3);
    EXPECT_DOUBLE_EQ(a.low, 0.001);
    EXPECT_DOUBLE_EQ(a.high, 0.005);
}

TEST(svg_ticks, every_range_gets_few_exact_ticks_that_cover_it) {
    std::mt19937_64 random(7);
    std::uniform_real_distribution<double> exponent(-6, 6), unit(0, 1);
    for (int trial = 0; trial < 2000; ++trial) {
        const double scale = std::pow(10.0, exponent(random));
        const double low = (unit(random) - 0.5) * scale, high = low + unit(random) * scale + 1e-3 * scale;
        const int max_count = 2 + trial % 10;
        const axis_ticks a = nice_axis(low, high, max_count);
        // Across 0 there are at least 3 ticks: 0 and one beyond each end.
        const int allowed = std::max(max_count, low < 0 && high > 0 ? 3 : 2);
        ASSERT_LE(a.ticks.values.size(), static_cast<std::size_t>(allowed)) << low << " " << high;
        ASSERT_GE(a.ticks.values.size(), 2u);
        EXPECT_LE(a.low, low);
        EXPECT_GE(a.high, high);
        const double m = mantissa(a.ticks.step);
        EXPECT_TRUE(std::fabs(m - 1) < 1e-9 || std::fabs(m - 2) < 1e-9 || std::fabs(m - 5) < 1e-9) << a.ticks.step;
        for (double v: a.ticks.values) {
            const double k = v / a.ticks.step;
            EXPECT_NEAR(k, std::round(k), 1e-6) << v << " is not a multiple of " << a.ticks.step;
        }
    }
}

TEST(svg_ticks, degenerate_and_whole_number_ranges) {
    const axis_ticks flat = nice_axis(5, 5, 5);
    EXPECT_LT(flat.low, 5);
    EXPECT_GT(flat.high, 5);
    const axis_ticks zero = nice_axis(0, 0, 5);
    EXPECT_LT(zero.low, zero.high);
    // Trial numbers: never a step of 0.5.
    EXPECT_EQ(values_of(nice_axis(0.5, 4.5, 10, true)), (std::vector<double>{0, 1, 2, 3, 4, 5}));
    // A fixed domain keeps its ends and shows the ticks inside it.
    const axis_ticks rows = ticks_within(0.5, 200.5, 6, true);
    EXPECT_EQ(values_of(rows), (std::vector<double>{50, 100, 150, 200}));
    EXPECT_DOUBLE_EQ(rows.low, 0.5);
    EXPECT_DOUBLE_EQ(rows.high, 200.5);
}

TEST(svg_ticks, labels_and_automatic_widths) {
    EXPECT_EQ(tick_label(3, 0), "3");
    EXPECT_EQ(tick_label(0.30000000000000004, 1), "0.3");
    EXPECT_EQ(tick_label(-0.5, 1), "\xE2\x88\x92" "0.5") << "a true minus sign, U+2212";
    EXPECT_EQ(tick_label(-1e-12, 2), "0.00") << "never -0";
    // nearest 1-2-5 value on a log scale (design)
    EXPECT_DOUBLE_EQ(nice_value(8.3), 10);
    EXPECT_DOUBLE_EQ(nice_value(0.1), 0.1);
    EXPECT_DOUBLE_EQ(nice_value(3.4), 5);
    EXPECT_DOUBLE_EQ(nice_value(0.0028), 0.002);
}

TEST(svg_text, escapes_markup_and_repairs_bytes) {
    EXPECT_EQ(escape("u&1 <a> \"q\" 'p'"), "u&amp;1 &lt;a&gt; &quot;q&quot; &#39;p&#39;");
    const std::string fffd = "\xEF\xBF\xBD";
    EXPECT_EQ(escape("a\xFF" "b"), "a" + fffd + "b") << "a byte that is not UTF-8";
    EXPECT_EQ(escape("a\x01" "b"), "a" + fffd + "b") << "control characters are not allowed in XML 1.0 (section 2.2)";
    EXPECT_EQ(escape("\xC0\xAF"), fffd + fffd) << "overlong form of '/' (RFC 3629, section 10)";
    EXPECT_EQ(escape("\xED\xA0\x80"), fffd + fffd + fffd) << "a UTF-16 surrogate encoded in UTF-8";
    EXPECT_EQ(escape("\xEF\xBF\xBE"), fffd) << "U+FFFE is not an XML character";
    EXPECT_EQ(escape("\xC2\xB5s \xE2\x88\x92 \xF0\x9F\x90\x9F"), "\xC2\xB5s \xE2\x88\x92 \xF0\x9F\x90\x9F") << "valid UTF-8 stays";
    EXPECT_EQ(escape("tab\tand\nnewline"), "tab\tand\nnewline");
    EXPECT_EQ(code_points("\xC2\xB5s"), 2u);
    EXPECT_DOUBLE_EQ(text_width("abcd", 10), 24);
}

TEST(svg_text, coordinates_are_short_and_never_negative_zero) {
    EXPECT_EQ(coordinate(12.5), "12.5");
    EXPECT_EQ(coordinate(3.0), "3");
    EXPECT_EQ(coordinate(-0.001), "0");
    EXPECT_EQ(coordinate(1.23456, 3), "1.235");
    EXPECT_EQ(coordinate(NAN), "0");
}

TEST(svg_scale, linear_map_sends_the_domain_onto_the_range) {
    const linear_map x{0, 10, 50, 150};
    EXPECT_DOUBLE_EQ(x(0), 50);
    EXPECT_DOUBLE_EQ(x(5), 100);
    EXPECT_DOUBLE_EQ(x(10), 150);
    const linear_map y{0, 10, 300, 100};  // page y grows downward
    EXPECT_DOUBLE_EQ(y(10), 100);
    EXPECT_DOUBLE_EQ(y(2.5), 250);
}

// Okabe & Ito (2008), "Color Universal Design", the published hex values.
TEST(svg_palette, okabe_ito_colours_with_distinct_dashes_and_markers) {
    const std::set<std::string> okabe_ito = {"#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"};
    std::set<std::string> colours, dashes;
    std::set<marker> markers;
    for (std::size_t i = 0; i < 7; ++i) {
        const style s = palette_style(i);
        EXPECT_TRUE(okabe_ito.count(s.colour)) << s.colour;
        colours.insert(s.colour);
        dashes.insert(s.dash);
        markers.insert(s.shape);
    }
    EXPECT_EQ(colours.size(), 7u);
    EXPECT_EQ(dashes.size(), 7u) << "series must differ without colour (greyscale print)";
    EXPECT_EQ(markers.size(), 7u);
    EXPECT_EQ(colours.count("#F0E442"), 0u) << "yellow is too faint on white for lines";
    EXPECT_EQ(estimator_style("plug-in").colour, palette_style(0).colour);
    EXPECT_EQ(estimator_style("made-up").colour, estimator_style("made-up").colour) << "other names: stable styles";
}

TEST(svg_render, text_is_escaped_and_elements_balance) {
    const std::string svg = render(sample_chart());
    EXPECT_EQ(svg.rfind("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\"", 0), 0u);
    EXPECT_NE(svg.find("u1 &amp; &lt;u2&gt;: &quot;rates&quot; &#39;quoted&#39;"), std::string::npos);
    EXPECT_NE(svg.find("information &lt;95%&gt;"), std::string::npos);
    EXPECT_EQ(svg.find("<u2>"), std::string::npos);
    // Every '&' starts an entity.
    EXPECT_FALSE(std::regex_search(svg, std::regex("&(?!amp;|lt;|gt;|quot;|#39;)")));
    const auto count = [&](const std::string& pattern) {
        const std::regex r(pattern);
        return std::distance(std::sregex_iterator(svg.begin(), svg.end(), r), std::sregex_iterator());
    };
    for (const std::string tag: {"text", "g", "svg", "title"}) EXPECT_EQ(count("<" + tag + "[ >]"), count("</" + tag + ">")) << tag;
    EXPECT_EQ(svg.find("nan"), std::string::npos) << "a missing point is left out, not printed";
}

TEST(svg_render, same_chart_gives_the_same_bytes) {
    const std::string first = render(sample_chart());
    EXPECT_EQ(render(sample_chart()), first);
    chart copy = sample_chart();
    EXPECT_EQ(render(copy), first);
}

TEST(svg_render, data_map_linearly_onto_the_frame) {
    chart c;
    panel p;
    p.x_domain = std::make_pair(0.0, 10.0);
    p.y_domain = std::make_pair(0.0, 1.0);
    series s;
    s.look.shape = marker::circle;
    s.line = false;
    s.x = {0, 5, 10};
    s.y = {0, 0.5, 1};
    p.lines.push_back(s);
    c.panels.push_back(p);
    const std::string svg = render(c);
    const auto cx = attributes(svg, "circle", "cx"), cy = attributes(svg, "circle", "cy");
    ASSERT_EQ(cx.size(), 3u);
    EXPECT_NEAR(cx[1], (cx[0] + cx[2]) / 2, 0.011);
    EXPECT_NEAR(cy[1], (cy[0] + cy[2]) / 2, 0.011);
    EXPECT_LT(cy[2], cy[0]) << "larger y is higher on the page";
    // The frame is the data area: its corners are the domain's corners.
    const auto frame_x = attributes(svg, "rect", "x"), frame_w = attributes(svg, "rect", "width");
    ASSERT_FALSE(frame_x.empty());
    EXPECT_NEAR(cx[0], frame_x.back(), 0.011);
    EXPECT_NEAR(cx[2], frame_x.back() + frame_w.back(), 0.011);
}

TEST(svg_render, tick_labels_do_not_overlap_and_legends_sit_below_the_data) {
    chart c;
    c.width = 260;  // narrow: the axis must drop ticks rather than crowd them
    panel p;
    p.x_label = "time (ms)";
    series s;
    s.label = "a long legend label that has to wrap onto more than one line in so narrow a figure";
    s.x = {0, 123456};
    s.y = {1, 2};
    p.lines.push_back(s);
    c.panels.push_back(p);
    const std::string svg = render(c);
    const auto frame_y = attributes(svg, "rect", "y"), frame_h = attributes(svg, "rect", "height");
    const double bottom = frame_y.back() + frame_h.back();
    // x tick labels: the centred texts just under the frame.
    const std::regex label("<text x=\"([-0-9.]+)\" y=\"([-0-9.]+)\" font-size=\"12\" text-anchor=\"middle\">([^<]*)</text>");
    std::vector<std::pair<double, std::string>> ticks;
    for (auto it = std::sregex_iterator(svg.begin(), svg.end(), label); it != std::sregex_iterator(); ++it) {
        if (std::fabs(std::stod((*it)[2]) - (bottom + 17)) < 1) ticks.emplace_back(std::stod((*it)[1]), (*it)[3]);
    }
    ASSERT_GE(ticks.size(), 2u);
    for (std::size_t i = 1; i < ticks.size(); ++i) {
        const double room = ticks[i].first - ticks[i - 1].first;
        const double needed = (text_width(ticks[i].second, 12) + text_width(ticks[i - 1].second, 12)) / 2;
        EXPECT_GT(room, needed) << ticks[i - 1].second << " and " << ticks[i].second << " overlap";
    }
    // Legend text lies below the frame and the x label, wrapped into lines that fit the figure.
    const std::regex legend("<text x=\"([-0-9.]+)\" y=\"([-0-9.]+)\" font-size=\"12\" fill=\"#222222\">([^<]*)</text>");
    int lines = 0;
    for (auto it = std::sregex_iterator(svg.begin(), svg.end(), legend); it != std::sregex_iterator(); ++it) {
        ++lines;
        EXPECT_GT(std::stod((*it)[2]), bottom + 20);
        EXPECT_LE(std::stod((*it)[1]) + text_width((*it)[3].str(), 12), c.width);
    }
    EXPECT_GE(lines, 2);
}
