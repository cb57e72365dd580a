#pragma once
/// Numbers in messages as people write them: 0.03, 2, 1e-05 (shortest form that round-trips to
/// 6 significant digits), never 0.029999999999999999 or 2.000000.
#include <string>

namespace rastrum {
std::string format_number(double x);
/// "7.3" for 7.3: the shortest decimal text that reads back as the same double (never
/// 7.3000000000000007), for messages about values read from files, which must tell nearby values
/// apart, and for labels made of numbers. -0 is written 0.
std::string exact_number(double x);
/// x with a fixed number of decimals, for quantities with a natural resolution (bits/s: 2).
std::string format_fixed(double x, int decimals);
}  // namespace rastrum
