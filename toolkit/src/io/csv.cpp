#include <rastrum/csv.hpp>

#include <cmath>
#include <cstdio>

namespace rastrum {

std::string csv_number(double x) {
    if (!std::isfinite(x)) return "";
    char text[40];
    std::snprintf(text, sizeof text, "%.10g", x);
    return text;
}

std::string csv_text(const std::string& s) {
    if (s.find_first_of(",\"\r\n") == std::string::npos) return s;
    std::string q = "\"";
    for (char c: s) {
        if (c == '"') q += '"';
        q += c;
    }
    return q + "\"";
}

}  // namespace rastrum
