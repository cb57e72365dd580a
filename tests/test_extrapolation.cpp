// Least-squares extrapolations in 1/N and in 1/L.
#include <rastrum/extrapolation.hpp>

#include <gtest/gtest.h>

#include <cmath>

using namespace rastrum;

TEST(extrapolation, recovers_an_exact_quadratic_in_inverse_size) {
    // H(N) = 5 - 3/N + 40/N^2 sampled at N = 150, 75, 37 and a few repeats.
    std::vector<double> x, y;
    for (double n: {150.0, 75.0, 75.0, 37.0, 38.0, 37.0}) {
        x.push_back(1 / n);
        y.push_back(5 - 3 / n + 40 / (n * n));
    }
    const auto fit = fit_inverse_size(x, y);
    EXPECT_NEAR(fit.at_infinity, 5, 1e-9);
    EXPECT_NEAR(fit.linear, -3, 1e-6);
    EXPECT_NEAR(fit.quadratic, 40, 1e-3);
}

TEST(extrapolation, falls_back_to_fewer_terms_with_fewer_sizes) {
    EXPECT_NEAR(fit_inverse_size({0.1, 0.2}, {1.0, 0.8}).at_infinity, 1.2, 1e-12);
    EXPECT_NEAR(fit_inverse_size({0.1, 0.1}, {1.0, 0.8}).at_infinity, 0.9, 1e-12);
}

// Ordinary least squares and the intercept's standard error
// s * sqrt(1/n + xbar^2 / Sxx), s^2 = RSS / (n - 2): common practice (any regression text, e.g.
// Draper & Smith, Applied Regression Analysis, 3rd ed., section 3.1; section from memory).
TEST(extrapolation, line_fit_and_intercept_standard_error) {
    const std::vector<double> x{1, 2, 3, 4}, y{1.1, 1.9, 3.2, 3.8};
    const auto f = fit_line(x, y);
    // By hand: xbar = 2.5, ybar = 2.5, Sxx = 5, Sxy = 4.7: slope 0.94, intercept 0.15;
    // residuals 0.01, -0.13, 0.23, -0.11: RSS = 0.082.
    EXPECT_NEAR(f.slope, 0.94, 1e-12);
    EXPECT_NEAR(f.intercept, 0.15, 1e-12);
    EXPECT_NEAR(f.intercept_se, std::sqrt(0.082 / 2 * (0.25 + 6.25 / 5)), 1e-12);
    const auto one = fit_line({0.5}, {3.0});
    EXPECT_EQ(one.intercept, 3.0);
    EXPECT_EQ(one.intercept_se, 0.0);
}
