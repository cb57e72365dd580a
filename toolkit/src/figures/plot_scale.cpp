#include <rastrum/plot_scale.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <tuple>

namespace rastrum::svg {

namespace {
/// step = mantissa x 10^exponent with mantissa 1, 2 or 5.
struct step_choice {
    int mantissa = 1;
    int exponent = 0;
    double value() const { return exponent >= 0 ? mantissa * std::pow(10.0, exponent) : mantissa / std::pow(10.0, -exponent); }
    step_choice next() const { return mantissa == 1 ? step_choice{2, exponent} : mantissa == 2 ? step_choice{5, exponent} : step_choice{1, exponent + 1}; }
};

/// k x step, computed so that decimal steps give the decimal value (3 x 0.1 is 0.3, not 0.30000000000000004).
double multiple(long long k, const step_choice& s) {
    const double v = s.exponent >= 0 ? static_cast<double>(k * s.mantissa) * std::pow(10.0, s.exponent)
                                     : static_cast<double>(k * s.mantissa) / std::pow(10.0, -s.exponent);
    return v == 0 ? 0.0 : v;  // never -0
}

std::pair<double, double> widened(double low, double high) {
    if (!std::isfinite(low) || !std::isfinite(high)) return {0, 1};
    if (low > high) std::swap(low, high);
    if (high - low > 1e-12 * std::max(std::fabs(low), std::fabs(high))) return {low, high};
    const double pad = low != 0 ? std::fabs(low) * 0.1 : 1;
    return {low - pad, high + pad};
}

step_choice first_step(double span, int max_count) {
    const double rough = span / std::max(1, max_count - 1);
    step_choice s{1, static_cast<int>(std::floor(std::log10(rough)))};
    while (s.value() < rough * (1 - 1e-9)) s = s.next();
    return s;
}

tick_set ticks_of(long long first, long long last, const step_choice& s) {
    tick_set t;
    t.step = s.value();
    t.decimals = std::max(0, -s.exponent);
    for (long long k = first; k <= last; ++k) t.values.push_back(multiple(k, s));
    return t;
}

const step_choice whole_step{1, 0};

/// k with k x step the largest multiple at or below x (upper: the smallest at or above). A value
/// that is a multiple up to rounding (0.3 / 0.1 = 2.9999999999999996) counts as that multiple.
long long snapped(double k) {
    const double nearest = std::round(k);
    return static_cast<long long>(std::fabs(k - nearest) < 1e-9 ? nearest : std::floor(k));
}
long long lower_multiple(double x, const step_choice& s) { return snapped(x / s.value()); }
long long upper_multiple(double x, const step_choice& s) {
    const double k = x / s.value();
    const double nearest = std::round(k);
    return static_cast<long long>(std::fabs(k - nearest) < 1e-9 ? nearest : std::ceil(k));
}
}  // namespace

axis_ticks nice_axis(double low, double high, int max_count, bool whole_steps) {
    std::tie(low, high) = widened(low, high);
    // A range across 0 always has a tick at 0 and one beyond each end: 2 ticks cannot cover it.
    max_count = std::max(max_count, low < 0 && high > 0 ? 3 : 2);
    step_choice s = first_step(high - low, max_count);
    if (whole_steps && s.exponent < 0) s = whole_step;
    while (true) {
        const auto first = lower_multiple(low, s), last = upper_multiple(high, s);
        if (last - first + 1 <= max_count) {
            axis_ticks a;
            a.ticks = ticks_of(first, last, s);
            a.low = a.ticks.values.front();
            a.high = a.ticks.values.back();
            return a;
        }
        s = s.next();
    }
}

axis_ticks ticks_within(double low, double high, int max_count, bool whole_steps) {
    max_count = std::max(max_count, 2);
    std::tie(low, high) = widened(low, high);
    step_choice s = first_step(high - low, max_count);
    if (whole_steps && s.exponent < 0) s = whole_step;
    while (true) {
        // Multiples inside the range: one past the lower one outside, one before the upper one.
        long long first = lower_multiple(low, s), last = upper_multiple(high, s);
        if (multiple(first, s) < low) ++first;
        if (multiple(last, s) > high) --last;
        if (last - first + 1 <= max_count) {
            axis_ticks a;
            a.low = low;
            a.high = high;
            a.ticks = ticks_of(first, last, s);
            return a;
        }
        s = s.next();
    }
}

std::string tick_label(double value, int decimals) {
    char text[64];
    std::snprintf(text, sizeof text, "%.*f", decimals, value);
    std::string s = text;
    if (s.find_first_not_of("-0.") == std::string::npos) return s.substr(s[0] == '-' ? 1 : 0);
    if (s[0] == '-') s = "\xE2\x88\x92" + s.substr(1);
    return s;
}

double nice_value(double target) {
    if (!(target > 0) || !std::isfinite(target)) return 1;
    step_choice s{1, static_cast<int>(std::floor(std::log10(target)))};
    step_choice best = s;
    for (int i = 0; i < 4; ++i, s = s.next()) {
        if (std::fabs(std::log(s.value() / target)) < std::fabs(std::log(best.value() / target))) best = s;
    }
    return best.value();
}

double linear_map::operator()(double x) const {
    return range_low + (x - domain_low) * (range_high - range_low) / (domain_high - domain_low);
}

}  // namespace rastrum::svg
