#include <rastrum/format.hpp>

#include <cstdio>

namespace rastrum {

std::string format_number(double x) {
    char text[32];
    std::snprintf(text, sizeof text, "%g", x);
    return text;
}

}  // namespace rastrum
