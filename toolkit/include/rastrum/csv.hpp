#pragma once
/// Fields of tidy CSV (RFC 4180 quoting): numbers that round-trip, text quoted only when it must be.
#include <string>

namespace rastrum {
/// x with 10 significant digits; empty for NaN and infinities (a missing value to CSV readers).
std::string csv_number(double x);
/// s as one field: quoted, with doubled quotes, when it holds a comma, quote or line break.
std::string csv_text(const std::string& s);
}  // namespace rastrum
