#include <rastrum/errors.hpp>
#include <rastrum/extrapolation.hpp>

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>

namespace rastrum {

namespace {
std::size_t distinct_values(std::vector<double> x) {
    std::sort(x.begin(), x.end());
    std::size_t n = 0;
    for (std::size_t i = 0; i < x.size(); ++i) {
        if (i == 0 || std::abs(x[i] - x[i - 1]) > 1e-12 * std::max(1.0, std::abs(x[i]))) ++n;
    }
    return n;
}
}  // namespace

inverse_size_fit fit_inverse_size(const std::vector<double>& inverse_size, const std::vector<double>& value,
                                  const std::vector<double>& weight) {
    const std::size_t n = inverse_size.size();
    if (value.size() != n || (!weight.empty() && weight.size() != n) || n == 0) {
        throw internal_error("fit_inverse_size: inputs of mismatched or zero length");
    }
    const std::size_t sizes = distinct_values(inverse_size);
    const int terms = static_cast<int>(std::min<std::size_t>(sizes, 3));
    Eigen::MatrixXd design(static_cast<Eigen::Index>(n), terms);
    Eigen::VectorXd rhs(static_cast<Eigen::Index>(n));
    for (std::size_t i = 0; i < n; ++i) {
        const double w = weight.empty() ? 1.0 : std::sqrt(weight[i]);
        const auto r = static_cast<Eigen::Index>(i);
        double power = 1;
        for (int j = 0; j < terms; ++j) {
            design(r, j) = w * power;
            power *= inverse_size[i];
        }
        rhs(r) = w * value[i];
    }
    // Column-pivoting QR: the columns 1, x, x^2 are nearly collinear when x spans a narrow range.
    const Eigen::VectorXd beta = design.colPivHouseholderQr().solve(rhs);
    inverse_size_fit fit;
    fit.at_infinity = beta(0);
    if (terms > 1) fit.linear = beta(1);
    if (terms > 2) fit.quadratic = beta(2);
    return fit;
}

line_fit fit_line(const std::vector<double>& x, const std::vector<double>& y) {
    const std::size_t n = x.size();
    if (y.size() != n || n == 0) throw internal_error("fit_line: inputs of mismatched or zero length");
    line_fit fit;
    fit.points = n;
    double mx = 0, my = 0;
    for (std::size_t i = 0; i < n; ++i) {
        mx += x[i];
        my += y[i];
    }
    mx /= static_cast<double>(n);
    my /= static_cast<double>(n);
    double sxx = 0, sxy = 0;
    for (std::size_t i = 0; i < n; ++i) {
        sxx += (x[i] - mx) * (x[i] - mx);
        sxy += (x[i] - mx) * (y[i] - my);
    }
    if (n == 1 || !(sxx > 0)) {
        fit.intercept = my;
        return fit;
    }
    fit.slope = sxy / sxx;
    fit.intercept = my - fit.slope * mx;
    if (n >= 3) {
        double rss = 0;
        for (std::size_t i = 0; i < n; ++i) {
            const double r = y[i] - fit.intercept - fit.slope * x[i];
            rss += r * r;
        }
        const double sigma2 = rss / static_cast<double>(n - 2);
        fit.intercept_se = std::sqrt(sigma2 * (1.0 / static_cast<double>(n) + mx * mx / sxx));
    }
    return fit;
}

}  // namespace rastrum
