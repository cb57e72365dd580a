#include <rastrum/direct_method.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/extrapolation.hpp>
#include <rastrum/fit_lengths.hpp>
#include <rastrum/trial_partition.hpp>

#include "direct_lengths.hpp"
#include "direct_workspace.hpp"

#include <algorithm>
#include <array>
#include <cmath>

namespace rastrum {

const char* subset_estimator_name(subset_estimator e) {
    switch (e) {
    case subset_estimator::plugin: return "plug-in";
    case subset_estimator::miller_madow: return "miller-madow";
    case subset_estimator::jackknife: return "jackknife";
    }
    throw internal_error("unknown subset estimator");
}

subset_estimator parse_subset_estimator(const std::string& name) {
    if (name == "plug-in") return subset_estimator::plugin;
    if (name == "miller-madow") return subset_estimator::miller_madow;
    if (name == "jackknife") return subset_estimator::jackknife;
    throw usage_error("unknown subset estimator '" + name + "': choose plug-in, miller-madow or jackknife");
}

void check_direct_settings(const direct_settings& s) {
    if (s.letters_min < 1 || s.letters_max < s.letters_min) {
        throw usage_error("--letters: need 1 <= A <= B, got " + std::to_string(s.letters_min) + "-" +
                          std::to_string(s.letters_max));
    }
    if (s.fit_letters) {
        const auto [a, b] = *s.fit_letters;
        if (a < s.letters_min || b > s.letters_max || a > b) {
            throw usage_error("--fit-letters " + std::to_string(a) + "-" + std::to_string(b) +
                              " must lie within --letters " + std::to_string(s.letters_min) + "-" +
                              std::to_string(s.letters_max));
        }
    }
    if (s.splits < 2) throw usage_error("--splits: at least 2 random splits of the trials are needed");
    if (!(s.bias_tolerance > 0 && s.bias_tolerance <= 1)) {
        throw usage_error("--bias-tolerance must lie in (0, 1], got " + format_number(s.bias_tolerance));
    }
    if (s.surrogates == 1) throw usage_error("--surrogates: 0 (no calibration) or at least 2, got 1");
    if (s.surrogate_splits < 2) throw usage_error("--surrogate-splits: at least 2 random splits of the trials are needed");
    if (!(s.error_tolerance > 0 && s.error_tolerance <= 1)) {
        throw usage_error("--error-tolerance must lie in (0, 1], got " + format_number(s.error_tolerance));
    }
    if (!(s.error_floor_bits_per_spike >= 0 && s.error_floor_bits_per_spike <= 10)) {
        throw usage_error("--error-floor must lie in [0, 10] bits per spike, got " + format_number(s.error_floor_bits_per_spike));
    }
}

direct_workspace::direct_workspace(): parts_(std::make_unique<parts>()) {}
direct_workspace::~direct_workspace() = default;
direct_workspace::direct_workspace(direct_workspace&&) noexcept = default;
direct_workspace& direct_workspace::operator=(direct_workspace&&) noexcept = default;

direct_estimate estimate_direct(const letter_matrix& letters, seconds bin_width, const direct_settings& settings) {
    direct_workspace workspace;
    return estimate_direct(sparse_of(letters), bin_width, settings, workspace);
}

direct_estimate estimate_direct(const sparse_letters& letters, seconds bin_width, const direct_settings& settings,
                                direct_workspace& workspace) {
    check_direct_settings(settings);
    if (settings.surrogates > 0) return estimate_calibrated(letters, bin_width, settings, workspace);
    direct_lengths lengths(letters, bin_width, settings, workspace);
    const fit_length_rule rule(settings);
    length_stop stop = length_stop::letters_max;
    while (lengths.more()) {
        lengths.next();
        // No longer length can change the fit range, so none is computed (fit_lengths.hpp).
        if (lengths.more() && !settings.every_length && !rule.longer_length_may_enter(lengths.computed())) {
            stop = rule.stop_reason();
            break;
        }
    }
    return lengths.finish(rule.choose(lengths.computed()), stop);
}

}  // namespace rastrum
