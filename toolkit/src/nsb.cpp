// NSB estimator: fixed-beta Dirichlet pieces (nsb_detail) and the integral over beta.
// Derivations are in notes/methods-nsb.md.
#include "log_gamma.hpp"
#include "nsb_moments.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/nsb.hpp>

#include <boost/math/quadrature/gauss.hpp>
#include <boost/math/quadrature/gauss_kronrod.hpp>
#include <boost/math/special_functions/digamma.hpp>
#include <boost/math/special_functions/trigamma.hpp>

#include <algorithm>
#include <array>
#include <cmath>
#include <map>
#include <string>

namespace rastrum {
namespace nsb_detail {

namespace {
// Digamma and trigamma in double: Boost's default promotes double arguments to long double, whose
// logarithms were a fifth of a calibrated stimulus-information run, for no digits the estimator keeps.
using double_policy = boost::math::policies::policy<boost::math::policies::promote_double<false>>;
double digamma(double x) { return boost::math::digamma(x, double_policy()); }
double trigamma(double x) { return boost::math::trigamma(x, double_policy()); }

// Beyond these arguments the asymptotic series are exact to double precision, and the direct
// formulas would lose the digits that the series keep.
constexpr double stirling_from = 10;
constexpr double series_from = 1e3;
constexpr double chi_series_from = 100;
constexpr double max_alphabet = 1e100;

/// lnGamma(x) - [(x - 1/2) ln x - x + ln(2 pi)/2] for x >= 10 (Stirling series, Bernoulli numbers).
double stirling_remainder(double x) {
    const double r = 1 / x, r2 = r * r;
    return r * (1.0 / 12 + r2 * (-1.0 / 360 + r2 * (1.0 / 1260 + r2 * (-1.0 / 1680 + r2 * (1.0 / 1188 + r2 * (-691.0 / 360360))))));
}

/// chi(a) = a (a + 1) psi1(a + 1) - a, the per-symbol term of the fixed-beta variance. It rises
/// from 0 to 1/2; the series avoids subtracting two numbers near a.
double chi(double a) {
    if (a < chi_series_from) return a * ((a + 1) * trigamma(a + 1) - 1);
    const double r = 1 / a;
    return 0.5 + r * (-1.0 / 3 + r * (1.0 / 6 + r * (-1.0 / 30 + r * (-1.0 / 30 + r * (1.0 / 42 + r * (1.0 / 42 + r * (-1.0 / 30 + r * (-1.0 / 30))))))));
}
}  // namespace

grouped_counts group_counts(const std::vector<count>& counts, double alphabet) {
    // The cap keeps K beta finite over the whole integration range (beta up to ~1e6 N^2).
    if (!(alphabet >= 1 && alphabet <= max_alphabet)) {
        throw usage_error("NSB entropy: the alphabet size must be between 1 and 1e100, got " + format_number(alphabet));
    }
    std::map<count, double> multiplicity;
    grouped_counts g;
    g.alphabet = alphabet;
    for (count n: counts) {
        if (n == 0) continue;
        multiplicity[n] += 1;
        g.seen += 1;
        g.samples += static_cast<double>(n);
    }
    if (g.seen > alphabet) {
        throw usage_error("NSB entropy: " + std::to_string(static_cast<count>(g.seen)) +
                          " distinct symbols were observed but the alphabet size is " + format_number(alphabet));
    }
    if (alphabet > g.seen) g.groups.push_back({0, alphabet - g.seen});
    for (const auto& [n, m]: multiplicity) g.groups.push_back({static_cast<double>(n), m});
    return g;
}

double log_rising_excess(double z, double m) {
    if (m == 0) return 0;
    if (z < stirling_from) return log_gamma(z + m) - log_gamma(z) - m * std::log(z);
    // Stirling for both gammas; the (x - 1/2) ln x terms are combined through log1p so nothing of
    // size z ln z is ever formed.
    return (z + m - 0.5) * std::log1p(m / z) - m + stirling_remainder(z + m) - stirling_remainder(z);
}

double log_evidence(const grouped_counts& g, double beta) {
    // lnGamma(K b) - lnGamma(N + K b) + sum_i [lnGamma(n_i + b) - lnGamma(b)]; the m ln z parts of
    // the rising factorials sum to -N ln K exactly, leaving terms that stay small as beta grows.
    double sum = -g.samples * std::log(g.alphabet) - log_rising_excess(g.alphabet * beta, g.samples);
    for (const auto& grp: g.groups) {
        if (grp.value > 0) sum += grp.multiplicity * log_rising_excess(beta, grp.value);
    }
    return sum;
}

double dirichlet_entropy_mean(const grouped_counts& g, double beta) {
    // E[H] = psi(A + 1) - sum (a_i/A) psi(a_i + 1), a_i = n_i + beta, A = sum a_i.
    const double total = g.samples + g.alphabet * beta;
    double dbar = 0;
    for (const auto& grp: g.groups) {
        const double a = grp.value + beta;
        dbar += grp.multiplicity * (a / total) * digamma(a + 1);
    }
    return digamma(total + 1) - dbar;
}

entropy_moments dirichlet_entropy_moments(const grouped_counts& g, double beta) {
    // With a_i = n_i + beta, A = sum a_i and d_i = psi(a_i + 1):
    //   E[H]   = psi(A + 1) - sum (a_i/A) d_i
    //   Var[H] = [sum a_i (d_i - dbar)^2 + sum chi(a_i) - chi(A)] / (A (A + 1)),  dbar = sum (a_i/A) d_i,
    // the centred form of E[H^2] - E[H]^2 (derivation in notes/methods-nsb.md).
    const double total = g.samples + g.alphabet * beta;
    std::vector<double> psi(g.groups.size());
    double dbar = 0;
    for (std::size_t j = 0; j < g.groups.size(); ++j) {
        const double a = g.groups[j].value + beta;
        psi[j] = digamma(a + 1);
        dbar += g.groups[j].multiplicity * (a / total) * psi[j];
    }
    double spread = 0, chi_sum = -chi(total);
    for (std::size_t j = 0; j < g.groups.size(); ++j) {
        const double a = g.groups[j].value + beta, d = psi[j] - dbar;
        spread += g.groups[j].multiplicity * a * d * d;
        chi_sum += g.groups[j].multiplicity * chi(a);
    }
    entropy_moments m;
    m.mean = digamma(total + 1) - dbar;
    m.variance = std::max(0.0, (spread + chi_sum) / (total * (total + 1)));
    return m;
}

entropy_moments dirichlet_entropy_moments(const std::vector<count>& counts, double alphabet, double beta) {
    return dirichlet_entropy_moments(group_counts(counts, alphabet), beta);
}

double log_evidence(const std::vector<count>& counts, double alphabet, double beta) {
    return log_evidence(group_counts(counts, alphabet), beta);
}

double prior_mean_entropy(double alphabet, double beta) {
    return digamma(alphabet * beta + 1) - digamma(beta + 1);
}

double prior_mean_entropy_gap(double alphabet, double beta) {
    if (beta < series_from) return std::log(alphabet) - prior_mean_entropy(alphabet, beta);
    // psi(z + 1) = ln z + 1/(2z) - 1/(12 z^2) + 1/(120 z^4) - 1/(252 z^6), for z = K b and z = b.
    const double r = 1 / beta, k = 1 / alphabet, k2 = k * k;
    return r * ((1 - k) / 2 + r * (-(1 - k2) / 12 + r * r * ((1 - k2 * k2) / 120 - r * r * (1 - k2 * k2 * k2) / 252)));
}

double prior_mean_entropy_slope(double alphabet, double beta) {
    if (beta < series_from) return alphabet * trigamma(alphabet * beta + 1) - trigamma(beta + 1);
    // psi1(z + 1) = 1/z - 1/(2 z^2) + 1/(6 z^3) - 1/(30 z^5) + 1/(42 z^7) - 1/(30 z^9): the 1/b terms
    // cancel exactly, which the direct difference cannot do.
    const double r = 1 / beta, k = 1 / alphabet, k2 = k * k, k4 = k2 * k2;
    const double r2 = r * r;
    return r2 * ((1 - k) / 2 + r * (-(1 - k2) / 6 + r2 * ((1 - k4) / 30 + r2 * (-(1 - k4 * k2) / 42 + r2 * (1 - k4 * k4) / 30))));
}

}  // namespace nsb_detail

namespace {
using namespace nsb_detail;

// The integration variable is x = ln beta. The ends put a prior mass below 1e-12 nats of xi outside
// (xi ~ (K-1) (pi^2/6) beta for small beta) and reach far past the point where the evidence
// settles to its beta -> infinity limit (beta >> N^2); what is left beyond either end is added
// as a tail term in xi, where the integrand is bounded.
constexpr double lowest_beta_times_k = 1e-12;
constexpr double highest_beta_per_n2 = 1e6;
constexpr double coarse_step = 0.5;     // in ln beta, for locating the posterior
constexpr double negligible_log = 60;   // posterior weight below e^-60 of the peak is dropped
// Targets: the mean to 1e-9 of itself, the variance to 1e-7 of itself (the sd to 5e-8). The
// variance cannot be asked for more: the log density is a sum of terms of size N ln(K beta), so the
// weights carry a relative rounding noise of ~1e-15 |ln P|, up to ~1e-8 at N = 1e6.
constexpr double mean_tolerance = 1e-9;
constexpr double variance_tolerance = 1e-7;
constexpr double narrowest_interval = 1e-7;  // in ln beta; below this, differences are rounding noise
constexpr std::size_t max_intervals = 4000;

/// The integrands at one beta: w = posterior density in ln beta relative to the peak, times
/// (1, E[H|beta] - reference, Var[H|beta], (E[H|beta] - reference)^2). Centring on the entropy at
/// the peak keeps the spread of E[H|beta] from being lost to cancellation.
using values = std::array<double, 4>;

class posterior {
public:
    /// Without `with_variance` the integrands of the variance are 0 and are not computed.
    posterior(const grouped_counts& g, bool with_variance): g_(g), with_variance_(with_variance) {}
    bool with_variance() const { return with_variance_; }

    /// ln of the unnormalised posterior density in x = ln beta: P(n|beta) xi'(beta) beta.
    double log_density(double x) const {
        const double beta = std::exp(x);
        return log_evidence(g_, beta) + std::log(prior_mean_entropy_slope(g_.alphabet, beta)) + x;
    }

    values at(double x) const {
        const double w = std::exp(log_density(x) - log_peak);
        return weighted(w, std::exp(x));
    }

    /// The same integrands per unit xi (the Jacobian dropped), for the tails.
    values per_xi(double beta) const {
        return weighted(std::exp(log_evidence(g_, beta) - log_peak), beta);
    }

    double log_peak = 0;
    double reference = 0;

private:
    values weighted(double w, double beta) const {
        if (!(w > 1e-300)) return {0, 0, 0, 0};
        if (!with_variance_) return {w, w * (dirichlet_entropy_mean(g_, beta) - reference), 0, 0};
        const entropy_moments m = dirichlet_entropy_moments(g_, beta);
        const double d = m.mean - reference;
        return {w, w * d, w * m.variance, w * d * d};
    }
    const grouped_counts& g_;
    bool with_variance_;
};

/// Golden-section search for the maximum of the log density on [a, b].
double refine_peak(const posterior& p, double a, double b) {
    const double ratio = 0.5 * (std::sqrt(5.0) - 1);
    double c = b - ratio * (b - a), d = a + ratio * (b - a);
    double fc = p.log_density(c), fd = p.log_density(d);
    for (int i = 0; i < 80 && b - a > 1e-12 * std::max(1.0, std::abs(a)); ++i) {
        if (fc > fd) {
            b = d, d = c, fd = fc;
            c = b - ratio * (b - a), fc = p.log_density(c);
        } else {
            a = c, c = d, fc = fd;
            d = a + ratio * (b - a), fd = p.log_density(d);
        }
    }
    return 0.5 * (a + b);
}

/// Width of a peak in x from the curvature of the log density, so that breakpoints resolve peaks
/// far narrower than the coarse grid. Broad or flat peaks get width 1.
double peak_width(const posterior& p, double x) {
    auto width_from = [&](double step) {
        const double curvature =
            (p.log_density(x + step) - 2 * p.log_density(x) + p.log_density(x - step)) / (step * step);
        return curvature < -1e-6 ? std::min(1.0, std::max(1e-10, 1 / std::sqrt(-curvature))) : 1.0;
    };
    // A second pass with a step matched to the first estimate keeps narrow peaks from being
    // smeared by a step wider than themselves.
    const double first = width_from(1e-3);
    return width_from(std::min(0.1 * first, 1e-3));
}

struct interval {
    double a, b;
    values integral;  // Kronrod 15
    values excess;    // Kronrod 15 minus Gauss 7, signed: errors of the four integrals are correlated
};

/// Gauss-Kronrod 15 with the embedded Gauss 7 rule as the error estimate, for all four integrands.
interval gauss_kronrod(const posterior& p, double a, double b) {
    using kronrod = boost::math::quadrature::gauss_kronrod<double, 15>;
    using gauss = boost::math::quadrature::gauss<double, 7>;
    const double half = 0.5 * (b - a), mid = 0.5 * (a + b);
    values k{}, g{};
    for (std::size_t i = 0; i < kronrod::abscissa().size(); ++i) {
        const double t = kronrod::abscissa()[i];
        values f = p.at(mid + half * t);
        if (i > 0) {
            const values f2 = p.at(mid - half * t);
            for (std::size_t c = 0; c < 4; ++c) f[c] += f2[c];
        }
        for (std::size_t c = 0; c < 4; ++c) {
            k[c] += kronrod::weights()[i] * f[c];
            if (i % 2 == 0) g[c] += gauss::weights()[i / 2] * f[c];
        }
    }
    interval out{a, b, {}, {}};
    for (std::size_t c = 0; c < 4; ++c) {
        out.integral[c] = half * k[c];
        out.excess[c] = half * (k[c] - g[c]);
    }
    return out;
}

/// The posterior mean and variance (nats) from the four integrals.
struct moments_of {
    explicit moments_of(const values& t):
        shift(t[1] / t[0]), variance((t[2] + t[3]) / t[0] - shift * shift) {}
    double shift;     // mean - reference
    double variance;
};

/// Globally adaptive: bisect the interval contributing most error until the mean and variance meet
/// their targets. An interval's error in each is the first-order change that its Kronrod-Gauss
/// excess would make to the final ratio, so an error common to all four integrals (the weight
/// itself) cancels as it does in the ratio.
values integrate(const posterior& p, const std::vector<double>& breaks) {
    std::vector<interval> parts;
    for (std::size_t i = 0; i + 1 < breaks.size(); ++i) parts.push_back(gauss_kronrod(p, breaks[i], breaks[i + 1]));
    while (true) {
        values total{};
        for (const auto& part: parts) {
            for (std::size_t c = 0; c < 4; ++c) total[c] += part.integral[c];
        }
        if (!(total[0] > 0)) throw internal_error("NSB entropy: the posterior over beta integrated to zero");
        const moments_of m(total);
        const double mean = p.reference + m.shift, second = (total[2] + total[3]) / total[0];
        const double mean_target = mean_tolerance * std::max(std::abs(mean), std::sqrt(std::max(m.variance, 0.0)));
        const double variance_target = variance_tolerance * std::max(m.variance, 1e-30);
        auto score = [&](const interval& part) {
            const values& d = part.excess;
            const double mean_error = std::abs(d[1] - m.shift * d[0]) / total[0];
            const double variance_error =
                p.with_variance() ? std::abs(d[2] + d[3] - second * d[0] - 2 * m.shift * (d[1] - m.shift * d[0])) / total[0]
                                  : 0.0;
            return std::array<double, 2>{mean_error, variance_error};
        };
        double mean_error = 0, variance_error = 0, worst_score = 0;
        interval* worst = nullptr;
        for (auto& part: parts) {
            const auto e = score(part);
            mean_error += e[0], variance_error += e[1];
            const double s = std::max(e[0] / mean_target, e[1] / variance_target);
            if (s > worst_score && part.b - part.a > narrowest_interval) worst_score = s, worst = &part;
        }
        const bool done = mean_error <= mean_target && variance_error <= variance_target;
        if (done || worst == nullptr || parts.size() >= max_intervals) return total;
        const double a = worst->a, b = worst->b, mid = 0.5 * (a + b);
        *worst = gauss_kronrod(p, a, mid);
        parts.push_back(gauss_kronrod(p, mid, b));
    }
}
/// The log density on a coarse grid over the whole range of ln beta, to find where the posterior is.
struct coarse_scan {
    coarse_scan(const posterior& p, double low, double high) {
        const auto steps = static_cast<std::size_t>(std::ceil((high - low) / coarse_step));
        x.resize(steps + 1);
        log_density.resize(steps + 1);
        for (std::size_t i = 0; i <= steps; ++i) {
            x[i] = low + (high - low) * static_cast<double>(i) / static_cast<double>(steps);
            log_density[i] = p.log_density(x[i]);
        }
    }
    std::size_t last() const { return x.size() - 1; }
    std::vector<double> x, log_density;
};

/// Every local maximum of the scan that could matter (usually there is one), refined.
std::vector<double> find_peaks(const posterior& p, const coarse_scan& scan) {
    const std::size_t n = scan.last();
    const double top = *std::max_element(scan.log_density.begin(), scan.log_density.end());
    std::vector<double> peaks;
    for (std::size_t i = 0; i <= n; ++i) {
        const double here = scan.log_density[i];
        const bool left_ok = i == 0 || here >= scan.log_density[i - 1];
        const bool right_ok = i == n || here >= scan.log_density[i + 1];
        if (left_ok && right_ok && here >= top - 40) {
            peaks.push_back(refine_peak(p, scan.x[i == 0 ? 0 : i - 1], scan.x[i == n ? n : i + 1]));
        }
    }
    return peaks;
}

/// The stretch of the scan [first, last] holding weight, widened by one step each way. A peak
/// narrower than the step can leave every grid point negligible, so the peaks are covered too.
std::array<std::size_t, 2> window(const posterior& p, const coarse_scan& scan, const std::vector<double>& peaks) {
    const std::size_t n = scan.last();
    std::size_t first = n, last = 0;
    auto cover = [&](std::size_t i) { first = std::min(first, i), last = std::max(last, i); };
    for (std::size_t i = 0; i <= n; ++i) {
        if (scan.log_density[i] >= p.log_peak - negligible_log) cover(i);
    }
    const double step = scan.x[1] - scan.x[0];
    for (double x: peaks) {
        const auto below = static_cast<std::size_t>(std::max(0.0, std::floor((x - scan.x[0]) / step)));
        cover(std::min(below, n));
        cover(std::min(below + 1, n));
    }
    return {first > 0 ? first - 1 : 0, std::min(last + 1, n)};
}

/// Grid points of the window plus points at multiples of each peak's width around it.
std::vector<double> breakpoints(const posterior& p, const coarse_scan& scan, const std::vector<double>& peaks,
                                std::size_t first, std::size_t last) {
    std::vector<double> breaks(scan.x.begin() + static_cast<std::ptrdiff_t>(first),
                               scan.x.begin() + static_cast<std::ptrdiff_t>(last) + 1);
    for (double x: peaks) {
        const double width = peak_width(p, x);
        for (double k: {0.0, 0.5, 1.0, 2.0, 3.0, 4.0, 6.0, 8.0, 12.0, 16.0}) {
            for (double s: {-1.0, 1.0}) {
                const double b = x + s * k * width;
                if (b > scan.x[first] && b < scan.x[last]) breaks.push_back(b);
            }
        }
    }
    std::sort(breaks.begin(), breaks.end());
    breaks.erase(std::unique(breaks.begin(), breaks.end(), [](double u, double v) { return v - u < 1e-13; }),
                 breaks.end());
    return breaks;
}
/// The posterior mean and, `with_variance`, standard deviation of the entropy, in bits.
nsb_estimate nsb_integral(const std::vector<count>& counts, double alphabet_size, bool with_variance) {
    const grouped_counts g = group_counts(counts, alphabet_size);
    if (g.alphabet == 1) return {};  // one symbol: H = 0 under every prior
    posterior p(g, with_variance);

    const double x_low = std::log(lowest_beta_times_k / g.alphabet);
    const double x_high = std::log(highest_beta_per_n2) + 2 * std::log1p(g.samples);
    const coarse_scan scan(p, x_low, x_high);
    const std::vector<double> peaks = find_peaks(p, scan);
    std::vector<double> peak_log_density;
    for (double x: peaks) peak_log_density.push_back(p.log_density(x));
    const auto best = std::max_element(peak_log_density.begin(), peak_log_density.end()) - peak_log_density.begin();
    p.log_peak = peak_log_density[static_cast<std::size_t>(best)];
    p.reference = dirichlet_entropy_mean(g, std::exp(peaks[static_cast<std::size_t>(best)]));

    const auto [first, last] = window(p, scan, peaks);
    values total = integrate(p, breakpoints(p, scan, peaks, first, last));

    // Beyond the ends the posterior per unit xi is flat to first order: add it times the xi left over.
    auto add_tail = [&](double beta, double xi_left) {
        const values f = p.per_xi(beta);
        for (std::size_t c = 0; c < 4; ++c) total[c] += xi_left * f[c];
    };
    if (first == 0) add_tail(std::exp(x_low), prior_mean_entropy(g.alphabet, std::exp(x_low)));
    if (last == scan.last()) add_tail(std::exp(x_high), prior_mean_entropy_gap(g.alphabet, std::exp(x_high)));

    const moments_of m(total);
    const double ln2 = std::log(2.0);
    return {(p.reference + m.shift) / ln2, with_variance ? std::sqrt(std::max(m.variance, 0.0)) / ln2 : 0.0};
}

}  // namespace

nsb_estimate nsb_entropy(const std::vector<count>& counts, double alphabet_size) {
    return nsb_integral(counts, alphabet_size, true);
}

double nsb_entropy_mean(const std::vector<count>& counts, double alphabet_size) {
    return nsb_integral(counts, alphabet_size, false).entropy_bits;
}

}  // namespace rastrum
