#pragma once
// ln Gamma(x) without the global write of std::lgamma.
#include <math.h>

namespace rastrum {

/// ln |Gamma(x)|. std::lgamma also stores the sign of Gamma(x) in glibc's global `signgam`, a data
/// race when several threads estimate at once; lgamma_r (POSIX, glibc) returns it instead.
inline double log_gamma(double x) {
    int sign = 0;
    return ::lgamma_r(x, &sign);
}

}  // namespace rastrum
