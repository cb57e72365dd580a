#pragma once
/// Text and numbers as they go into SVG and HTML. Unit ids and labels come from users' files and may
/// hold &, <, quotes or bytes that are not UTF-8; numbers must print the same on every machine so
/// that the same input gives byte-identical figures.
#include <string>
#include <string_view>

namespace rastrum::svg {

/// `text` made safe as element content and as a quoted attribute value in XML and HTML: & < > " '
/// become entities; bytes that are not valid UTF-8, control characters other than tab and newline,
/// and the non-characters U+FFFE/U+FFFF (not allowed in XML 1.0, section 2.2) become U+FFFD.
std::string escape(std::string_view text);

/// A coordinate with at most `decimals` decimals and no trailing zeros ("12.5", "3", never "-0").
std::string coordinate(double x, int decimals = 2);

/// Code points in valid UTF-8 `text` (invalid bytes count one each): the unit of text width.
std::size_t code_points(std::string_view text);

/// Estimated width in px of `text` set in a sans-serif face at `font_px`. Generous on purpose (0.6 em
/// per character, wider than the average of common sans faces), so that layouts built on it leave
/// room rather than overlap.
double text_width(std::string_view text, double font_px);

}  // namespace rastrum::svg
