#pragma once
/// Least-squares fits used to extrapolate estimates: to infinite data (in 1/N) and to infinite
/// word length (in 1/L).
#include <cstddef>
#include <vector>

namespace rastrum {

/// H(N) = at_infinity + linear / N + quadratic / N^2, fitted by weighted least squares in x = 1/N
/// (Treves & Panzeri 1995, Neural Comput. 7:399; Strong et al. 1998, Phys. Rev. Lett. 80:197).
struct inverse_size_fit {
    double at_infinity = 0;
    double linear = 0;
    double quadratic = 0;
};

/// `inverse_size[i]` = 1/N_i, `value[i]` the estimate on N_i samples, `weight[i]` > 0 (empty means
/// all 1). Needs at least three distinct sizes for the quadratic; with two it fits a line
/// (quadratic = 0), with one it returns that value. Throws internal_error on mismatched lengths.
inverse_size_fit fit_inverse_size(const std::vector<double>& inverse_size, const std::vector<double>& value,
                                  const std::vector<double>& weight = {});

/// y = intercept + slope x by ordinary least squares, with the intercept's standard error from
/// the residuals (0 when there are fewer than three points).
struct line_fit {
    double intercept = 0;
    double slope = 0;
    double intercept_se = 0;
    std::size_t points = 0;
};

/// Needs at least one point; with one, intercept = y and slope = 0.
line_fit fit_line(const std::vector<double>& x, const std::vector<double>& y);

}  // namespace rastrum
