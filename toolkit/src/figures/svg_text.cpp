#include <rastrum/svg_text.hpp>

#include <cmath>
#include <cstdio>

namespace rastrum::svg {

namespace {
constexpr const char* replacement = "\xEF\xBF\xBD";  // U+FFFD

/// Length of the valid UTF-8 sequence starting at text[i] (RFC 3629, section 4), or 0 when the
/// bytes there are not one: overlong forms, surrogates and values above U+10FFFF are refused.
std::size_t utf8_sequence(std::string_view text, std::size_t i, char32_t& code) {
    const auto byte = [&](std::size_t k) { return static_cast<unsigned char>(text[k]); };
    const unsigned char lead = byte(i);
    std::size_t length = 0;
    if (lead >= 0xC2 && lead <= 0xDF) {
        length = 2;
        code = lead & 0x1F;
    } else if (lead >= 0xE0 && lead <= 0xEF) {
        length = 3;
        code = lead & 0x0F;
    } else if (lead >= 0xF0 && lead <= 0xF4) {
        length = 4;
        code = lead & 0x07;
    } else {
        return 0;
    }
    if (i + length > text.size()) return 0;
    for (std::size_t k = 1; k < length; ++k) {
        if ((byte(i + k) & 0xC0) != 0x80) return 0;
        code = (code << 6) | (byte(i + k) & 0x3F);
    }
    const bool overlong = (length == 3 && code < 0x800) || (length == 4 && code < 0x10000);
    const bool surrogate = code >= 0xD800 && code <= 0xDFFF;
    if (overlong || surrogate || code > 0x10FFFF) return 0;
    return length;
}
}  // namespace

std::string escape(std::string_view text) {
    std::string out;
    out.reserve(text.size() + 8);
    for (std::size_t i = 0; i < text.size();) {
        const unsigned char c = static_cast<unsigned char>(text[i]);
        if (c < 0x80) {
            switch (c) {
                case '&': out += "&amp;"; break;
                case '<': out += "&lt;"; break;
                case '>': out += "&gt;"; break;
                case '"': out += "&quot;"; break;
                case '\'': out += "&#39;"; break;
                default:
                    if ((c < 0x20 && c != '\t' && c != '\n') || c == 0x7F) {
                        out += replacement;
                    } else {
                        out += static_cast<char>(c);
                    }
            }
            ++i;
            continue;
        }
        char32_t code = 0;
        const std::size_t length = utf8_sequence(text, i, code);
        if (length == 0 || code == 0xFFFE || code == 0xFFFF) {
            out += replacement;
            i += length == 0 ? 1 : length;
        } else {
            out.append(text.substr(i, length));
            i += length;
        }
    }
    return out;
}

std::string coordinate(double x, int decimals) {
    if (!std::isfinite(x)) return "0";
    char text[64];
    std::snprintf(text, sizeof text, "%.*f", decimals, x);
    std::string s = text;
    if (s.find('.') != std::string::npos) {
        while (s.back() == '0') s.pop_back();
        if (s.back() == '.') s.pop_back();
    }
    if (s == "-0") s = "0";
    return s;
}

std::size_t code_points(std::string_view text) {
    std::size_t count = 0;
    for (std::size_t i = 0; i < text.size(); ++count) {
        char32_t code = 0;
        const auto c = static_cast<unsigned char>(text[i]);
        const std::size_t length = c < 0x80 ? 1 : utf8_sequence(text, i, code);
        i += length == 0 ? 1 : length;
    }
    return count;
}

double text_width(std::string_view text, double font_px) {
    return 0.6 * font_px * static_cast<double>(code_points(text));
}

}  // namespace rastrum::svg
