#include <rastrum/errors.hpp>
#include <rastrum/fit_lengths.hpp>
#include <rastrum/format.hpp>

#include <algorithm>
#include <cmath>

namespace rastrum {

const char* length_stop_name(length_stop why) {
    switch (why) {
    case length_stop::letters_max: return "--letters";
    case length_stop::fit_letters: return "--fit-letters";
    case length_stop::sampling_rule: return "sampling rule";
    case length_stop::calibration: return "calibration";
    }
    throw internal_error("unknown length stop");
}

bool fit_length_rule::longer_length_may_enter(const std::vector<letters_estimate>& computed) const {
    if (computed.empty()) return true;
    const letters_estimate& last = computed.back();
    if (settings_.fit_letters) return last.letters < settings_.fit_letters->second;
    // The sampling rule fits within the run of well-sampled lengths that starts at the shortest: a
    // length that is not well sampled ends the run, whatever the lengths after it would show.
    return last.well_sampled;
}

fit_choice fit_length_rule::choose(const std::vector<letters_estimate>& computed) const {
    if (computed.empty()) throw internal_error("fit_length_rule::choose without lengths");
    fit_choice out;
    if (settings_.fit_letters) {
        out.letters = *settings_.fit_letters;
        out.from_user = true;
        if (computed.back().letters < out.letters.second) {
            throw internal_error("fit_length_rule::choose before the end of the fit range was computed");
        }
    } else {
        // The upper half of the well-sampled lengths (notes/methods.md, section 4.3).
        int longest_good = 0;
        for (const auto& le: computed) {
            if (!le.well_sampled) break;
            longest_good = le.letters;
        }
        if (longest_good == computed.back().letters && computed.back().letters < settings_.letters_max) {
            throw internal_error("fit_length_rule::choose before the sampling rule's run of lengths ended");
        }
        if (longest_good == 0) {
            longest_good = settings_.letters_min;
            const auto& first = computed.front();
            const std::string length = std::to_string(longest_good) + "-letter words";
            if (std::abs(first.info_bits) < 2 * first.info_se_bits) {
                out.warnings.push_back(
                    "the information is indistinguishable from 0 and no word length passes the sampling rule: even for " +
                    length + " the plug-in and jackknife bias corrections differ by " +
                    format_fixed(first.estimator_spread_bits / std::max(first.info_se_bits, 1e-300), 1) +
                    " standard errors; the rate rests on " + length + " alone");
            } else {
                out.warnings.push_back(
                    "undersampled: no word length passes the sampling rule; even for " + length +
                    " the plug-in and jackknife bias corrections differ by " +
                    format_fixed(100 * first.estimator_spread_bits / std::abs(first.info_bits), 1) +
                    "% of the information (tolerance " + format_fixed(100 * settings_.bias_tolerance, 1) +
                    "%), so the bias left in the rate is uncertain by about that "
                    "much; the rate rests on " + length + " alone (more trials would help)");
            }
        }
        out.letters = {std::max(settings_.letters_min, (longest_good + 1) / 2), longest_good};
    }

    const bool rule_failed = !out.from_user && !computed.front().well_sampled;
    if (out.letters.first == out.letters.second && !rule_failed) {
        out.warnings.push_back("the rate comes from " + std::to_string(out.letters.first) +
                               "-letter words alone, without extrapolation to infinite word length: correlations "
                               "between bins further apart are not counted");
    }
    if (out.from_user) {
        for (const auto& le: computed) {
            if (le.letters >= out.letters.first && le.letters <= out.letters.second && !le.well_sampled) {
                out.warnings.push_back("--fit-letters includes undersampled " + std::to_string(le.letters) +
                                       "-letter words: the extrapolation may report information that is not there");
                break;
            }
        }
    }
    return out;
}

}  // namespace rastrum
