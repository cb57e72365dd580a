#include <rastrum/format.hpp>

#include <cstdio>

namespace rastrum {

std::string format_number(double x) {
    char text[32];
    std::snprintf(text, sizeof text, "%g", x);
    return text;
}

std::string format_fixed(double x, int decimals) {
    char text[48];
    std::snprintf(text, sizeof text, "%.*f", decimals, x);
    return text;
}

}  // namespace rastrum
