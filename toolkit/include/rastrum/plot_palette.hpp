#pragma once
/// Series styles that stay apart for colour-blind readers and in greyscale print: the colours of
/// Okabe & Ito, "Color Universal Design (CUD): how to make figures and presentations that are
/// friendly to colorblind people" (2002, revised 2008), each paired with its own dash pattern and
/// marker so that no series depends on colour alone.
#include <cstddef>
#include <string>

namespace rastrum::svg {

enum class marker { none, circle, square, triangle_up, diamond, triangle_down, cross, plus };

struct style {
    std::string colour = "#000000";
    std::string dash;            // SVG stroke-dasharray; empty: solid
    marker shape = marker::circle;
    double line_width = 1.8;
};

/// The i-th of seven styles (they repeat after seven, shifted so colour and dash pair differently).
/// Yellow (#F0E442) is left out: too faint on white for lines.
style palette_style(std::size_t i);

/// Fixed roles, the same in every figure.
style information_style();    // blue, solid, circle
style total_entropy_style();  // vermillion, dashed, square
style noise_entropy_style();  // bluish green, dotted, triangle
style null_style();           // black, dash-dot, no marker
/// An estimator's style by its name (plug-in, miller-madow, jackknife, panzeri-treves,
/// quadratic-extrapolation, nsb); any other name gets one of the next round of styles, chosen by its spelling.
style estimator_style(const std::string& name);

/// Grey for frames, grids and the fill of neutral bands.
inline constexpr const char* frame_grey = "#444444";
inline constexpr const char* grid_grey = "#e4e4e4";

}  // namespace rastrum::svg
