#include <rastrum/plot_palette.hpp>

#include <array>
#include <cstdint>

namespace rastrum::svg {

namespace {
// Okabe-Ito colours (hex values as published), ordered so that neighbours differ in lightness too.
constexpr std::array<const char*, 7> colours = {"#0072B2", "#D55E00", "#009E73", "#CC79A7",
                                               "#E69F00", "#56B4E9", "#000000"};
constexpr std::array<const char*, 7> dashes = {"", "7 3", "2 2.5", "9 3 2 3", "4 2", "1 3", "12 3 3 3 3 3"};
constexpr std::array<marker, 7> markers = {marker::circle,        marker::square, marker::triangle_up, marker::diamond,
                                           marker::triangle_down, marker::cross,  marker::plus};
}  // namespace

style palette_style(std::size_t i) {
    const std::size_t round = i / colours.size(), k = i % colours.size();
    style s;
    s.colour = colours[k];
    s.dash = dashes[(k + round) % dashes.size()];
    s.shape = markers[(k + 2 * round) % markers.size()];
    return s;
}

style information_style() { return palette_style(0); }
style total_entropy_style() { return palette_style(1); }
style noise_entropy_style() { return palette_style(2); }

style null_style() {
    style s = palette_style(6);
    s.dash = "6 2 1.5 2";
    s.shape = marker::none;
    s.line_width = 1.4;
    return s;
}

style estimator_style(const std::string& name) {
    static const std::array<const char*, 6> known = {"plug-in", "miller-madow", "jackknife", "panzeri-treves",
                                                     "quadratic-extrapolation", "nsb"};
    for (std::size_t i = 0; i < known.size(); ++i) {
        if (name == known[i]) return palette_style(i);
    }
    // Other names get a style from their spelling alone (FNV-1a), so a figure never depends on what
    // else was drawn before it; the second round of styles keeps them apart from the known six.
    std::uint32_t hash = 2166136261u;
    for (unsigned char c: name) hash = (hash ^ c) * 16777619u;
    return palette_style(7 + hash % 7);
}

}  // namespace rastrum::svg
