#include <rastrum/format.hpp>

#include <rastrum/errors.hpp>

#include <charconv>
#include <cstdio>

namespace rastrum {

std::string format_number(double x) {
    char text[32];
    std::snprintf(text, sizeof text, "%g", x);
    return text;
}

std::string exact_number(double x) {
    if (x == 0) x = 0;  // -0 and 0 are one number, and must be one label
    char text[64];
    const auto [end, failed] = std::to_chars(text, text + sizeof text, x);
    if (failed != std::errc()) throw internal_error("exact_number: no room");
    return std::string(text, end);
}

std::string format_fixed(double x, int decimals) {
    char text[48];
    std::snprintf(text, sizeof text, "%.*f", decimals, x);
    return text;
}

}  // namespace rastrum
