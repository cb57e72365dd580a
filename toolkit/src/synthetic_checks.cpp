// The checks of a synthetic recording's parameters, made before anything is generated or written:
// the answers must describe exactly the file written, so a request that would make some other file
// (a label named twice pools two conditions into one) or none at all (times beyond what a double
// resolves, more spikes than memory holds) is refused with the option named.
#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/memory_bound.hpp>
#include <rastrum/synthetic.hpp>

#include <algorithm>
#include <cmath>
#include <set>

namespace rastrum {

namespace {

void require_number(double x, bool ok, const std::string& option, const std::string& expected) {
    if (!std::isfinite(x) || !ok) throw usage_error(option + ": expected " + expected + ", got " + format_number(x));
}

/// The session's own parameters, and its length: spike times are seconds from the session's start,
/// and at its end a double must still resolve a millionth of the finest time scale (`finest_ms`,
/// the option `finest_option` sets; empty: a millisecond), or spikes would slide between bins.
void check_session(const session_shape& s, std::size_t trials, double finest_ms, const std::string& finest_option) {
    if (trials < 1) throw usage_error("--trials: expected at least 1 trial");
    require_number(s.duration, s.duration > 0, "--duration-s", "a positive number of seconds");
    require_number(s.gap, s.gap >= 0, "--gap-s", "seconds, 0 or more");
    require_number(s.background_hz, s.background_hz >= 0, "--background-hz", "a rate of 0 or more");
    const double end = s.gap + static_cast<double>(trials) * (s.duration + s.gap);
    const std::string session = std::to_string(trials) + " trials of --duration-s " + format_number(s.duration) +
                                " with --gap-s " + format_number(s.gap);
    if (!std::isfinite(end)) throw usage_error(session + " make a session longer than a double can hold; use fewer or shorter trials");
    const double step_ms = end * 0x1p-52 * 1000;  // the spacing of doubles at the session's end
    if (!(step_ms <= finest_ms * 1e-6) && finest_option.empty()) {
        throw usage_error(session + " make a session of " + format_number(end) + " s, where spike times step by " +
                          format_number(step_ms) + " ms, too coarse for spikes placed to the millisecond; use fewer "
                          "or shorter trials");
    }
    if (!(step_ms <= finest_ms * 1e-6)) {
        throw usage_error(finest_option + " " + format_number(finest_ms) + " is finer than spike times can resolve in a " +
                          "session of " + format_number(end) + " s (" + session + "), where they step by " +
                          format_number(step_ms) + " ms; use " + finest_option + " " + format_number(step_ms * 1e6) +
                          " or more, or fewer or shorter trials");
    }
}

/// One unit's spikes (`spikes` expected, inside and between trials) and the generator's own arrays
/// (`scratch` bytes) are held at once, whatever the recording's size: they must fit in the default
/// memory bound.
void check_unit_memory(double spikes, const session_shape& s, std::size_t trials, double scratch) {
    const double between = s.background_hz * s.gap * static_cast<double>(trials + 1);
    const double expected = spikes + between;
    // Poisson draws: room for 6 standard deviations above the mean.
    const double held = 8 * (expected + 6 * std::sqrt(expected)) + 64 * static_cast<double>(trials) + scratch;
    if (held > static_cast<double>(default_memory_bound())) {
        throw usage_error("these parameters make about " + format_number(expected) + " spikes per unit over " +
                          std::to_string(trials) + " trials, about " + format_bytes(held) + " to hold, above " +
                          default_memory_bound_text() + "; use fewer or shorter trials or lower rates");
    }
}

double per_unit_value(const std::vector<double>& values, std::size_t unit) { return values.size() == 1 ? values[0] : values[unit]; }

void check_per_unit(const std::vector<double>& values, std::size_t units, const char* option) {
    if (values.size() != 1 && values.size() != units) {
        throw usage_error(std::string(option) + ": give one value, or one per unit (" + std::to_string(units) + "); got " +
                          std::to_string(values.size()));
    }
}

}  // namespace

void check_spec(const frozen_bins_spec& spec) {
    require_number(spec.bin_ms, spec.bin_ms > 0, "--bin-ms", "a positive width in ms");
    const seconds dt = spec.bin_ms / 1000;
    check_session(spec.session, spec.session.trials, spec.bin_ms, "--bin-ms");
    const double bins = std::floor(spec.session.duration / dt + 1e-9);
    if (bins < 2) {
        throw usage_error("--bin-ms " + format_number(spec.bin_ms) + ": --duration-s " + format_number(spec.session.duration) +
                          " holds " + format_number(bins) + (bins == 1 ? " bin" : " bins") + ", and the answers need at least 2");
    }
    if (spec.rates_hz.empty()) throw usage_error("--rate-hz: give at least one rate");
    check_per_unit(spec.modulations, spec.rates_hz.size(), "--modulation");
    require_number(spec.refractory, spec.refractory >= 0 && spec.refractory <= 1, "--refractory", "a fraction in [0, 1]");
    double most = 0;
    for (std::size_t u = 0; u < spec.rates_hz.size(); ++u) {
        const double rate = spec.rates_hz[u], mean_p = rate * dt, m = per_unit_value(spec.modulations, u);
        require_number(m, m >= 0 && m <= 10, "--modulation", "a value in [0, 10]");
        if (!std::isfinite(rate) || !(mean_p > 0) || mean_p > 0.5) {
            throw usage_error("--rate-hz " + format_number(rate) + " with --bin-ms " + format_number(spec.bin_ms) +
                              " gives a mean spike probability per bin outside (0, 0.5]");
        }
        most = std::max(most, mean_p);
    }
    // The bins' probabilities and the chain's (two doubles per bin) beside the spikes.
    check_unit_memory(most * bins * static_cast<double>(spec.session.trials), spec.session, spec.session.trials, 16 * bins);
}

void check_spec(const poisson_spec& spec) {
    require_number(spec.correlation_ms, spec.correlation_ms > 0, "--correlation-ms", "a positive time in ms");
    require_number(spec.resolution_ms, spec.resolution_ms > 0, "--resolution-ms", "a positive time in ms");
    const seconds step = spec.resolution_ms / 1000;
    check_session(spec.session, spec.session.trials, spec.resolution_ms, "--resolution-ms");
    const double steps = std::floor(spec.session.duration / step + 1e-9);
    if (steps < 1) {
        throw usage_error("--resolution-ms " + format_number(spec.resolution_ms) + " is longer than --duration-s " +
                          format_number(spec.session.duration));
    }
    if (spec.rates_hz.empty()) throw usage_error("--rate-hz: give at least one rate");
    check_per_unit(spec.modulations, spec.rates_hz.size(), "--modulation");
    double most = 0;
    for (std::size_t u = 0; u < spec.rates_hz.size(); ++u) {
        const double rate = spec.rates_hz[u], m = per_unit_value(spec.modulations, u);
        require_number(rate, rate > 0, "--rate-hz", "a positive rate");
        require_number(m, m >= 0, "--modulation", "a value of 0 or more");
        // The rate, clipped at 0, averages at most rate (1 + m E|g|) < rate (1 + m).
        most = std::max(most, rate * (1 + m));
    }
    check_unit_memory(most * spec.session.duration * static_cast<double>(spec.session.trials), spec.session,
                      spec.session.trials, 8 * steps);
}

void check_spec(const conditions_spec& spec) {
    if (spec.labels.empty()) throw usage_error("--labels: give at least one label");
    std::set<std::string> seen;
    for (const auto& label: spec.labels) {
        // Two conditions with one label would be one condition in the file, with twice the trials.
        if (!seen.insert(label).second) throw usage_error("--labels: '" + label + "' is named twice; each condition needs its own label");
    }
    if (spec.trials_per_condition < 1) throw usage_error("--trials-per-condition: expected at least 1 trial");
    const std::size_t trials = spec.labels.size() * spec.trials_per_condition;
    check_session(spec.session, trials, std::min(spec.session.duration * 1000, 1.0), "");
    if (spec.means.empty()) throw usage_error("--means: give one row of means per unit");
    double most = 0;
    for (const auto& row: spec.means) {
        if (row.size() != spec.labels.size()) {
            throw usage_error("--means: each unit needs one mean per condition (" + std::to_string(spec.labels.size()) +
                              " labels), got " + std::to_string(row.size()));
        }
        double spikes = 0;
        for (double mu: row) {
            require_number(mu, mu >= 0 && mu <= 500, "--means", "a mean spike count from 0 to 500");
            spikes += mu * static_cast<double>(spec.trials_per_condition);
        }
        most = std::max(most, spikes);
    }
    check_unit_memory(most, spec.session, trials, 8 * static_cast<double>(trials));
}

}  // namespace rastrum
