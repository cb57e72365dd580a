#pragma once
/// Axes: where the ticks go and how data map to the page.
#include <string>
#include <vector>

namespace rastrum::svg {

/// Tick positions at whole multiples of a step of 1, 2 or 5 times a power of ten.
struct tick_set {
    std::vector<double> values;
    double step = 1;
    int decimals = 0;  // decimals that show every tick exactly (0 for steps of 1 and more)
};

/// An axis range and its ticks.
struct axis_ticks {
    double low = 0;
    double high = 1;
    tick_set ticks;
};

/// The smallest 1-2-5 step that covers [low, high] with at most `max_count` ticks, the range widened
/// to the ticks just outside it (a range across 0 takes at least 3). An empty or degenerate range is
/// widened around its value first.
/// `whole_steps` keeps the step at 1 or more (counts such as trial numbers).
axis_ticks nice_axis(double low, double high, int max_count, bool whole_steps = false);

/// The ticks of that step that fall inside [low, high], the range kept as it is (a fixed domain
/// such as the duration of a trial).
axis_ticks ticks_within(double low, double high, int max_count, bool whole_steps = false);

/// A tick label with `decimals` decimals; negative values with a true minus sign (U+2212).
std::string tick_label(double value, int decimals);

/// The 1-2-5 value nearest to `target` on a log scale (for bin widths chosen automatically).
double nice_value(double target);

/// Linear map from data [domain_low, domain_high] to page [range_low, range_high] (page y grows
/// downward, so a y axis maps low data to the larger page coordinate).
struct linear_map {
    double domain_low = 0, domain_high = 1, range_low = 0, range_high = 1;
    double operator()(double x) const;
};

}  // namespace rastrum::svg
