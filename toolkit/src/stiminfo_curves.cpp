#include <rastrum/curves.hpp>

#include <algorithm>

namespace rastrum {

namespace {

curve_series labelled(const stiminfo_record& r, const char* curve, const std::string& series) {
    curve_series c;
    c.curve = curve;
    c.unit = r.unit;
    c.series = series;
    return c;
}

/// Each estimator and the null band against the window centre, for one unit (or population).
void add_time_course(const std::vector<stiminfo_record>& records, const stiminfo_record& first,
                     const stiminfo_request& q, std::vector<curve_series>& out) {
    std::vector<const stiminfo_record*> windows;
    for (const auto& r: records) {
        if (r.unit == first.unit) windows.push_back(&r);
    }
    const curve_axis time{"time after trial start (window centre)", "ms", {}};
    for (info_estimator e: q.estimators) {
        curve_series c = labelled(first, "info_vs_time", info_estimator_name(e));
        c.x = time;
        c.y = {"information", "bits", {}};
        // Calibrated, the band is the calibrated value's (its own series, below), not the envelope.
        const bool banded = e == q.interval_estimator && q.bootstrap > 1 && q.surrogates == 0;
        for (const stiminfo_record* r: windows) {
            c.x.values.push_back(500 * (r->window.first + r->window.second));
            c.y.values.push_back(r->info_bits.at(e));
            if (banded) {
                c.y_low.push_back(r->interval.first);
                c.y_high.push_back(r->interval.second);
            }
        }
        out.push_back(std::move(c));
    }
    if (q.surrogates > 0) {
        curve_series c = labelled(first, "info_vs_time", "calibrated");
        c.x = time;
        c.y = {"information", "bits", {}};
        for (const stiminfo_record* r: windows) {
            if (r->calibration->not_calibrated) continue;  // no value to draw
            c.x.values.push_back(500 * (r->window.first + r->window.second));
            c.y.values.push_back(r->calibration->value);
            c.y_low.push_back(r->calibration->interval.first);
            c.y_high.push_back(r->calibration->interval.second);
        }
        out.push_back(std::move(c));
    }
    if (q.null_shuffles == 0) return;
    curve_series null = labelled(first, "info_vs_time", "null");
    null.x = time;
    null.y = {"plug-in information under shuffled labels", "bits", {}};
    for (const stiminfo_record* r: windows) {
        null.x.values.push_back(500 * (r->window.first + r->window.second));
        null.y.values.push_back(r->null_mean_bits);
        null.y_low.push_back(r->null_band.first);
        null.y_high.push_back(r->null_band.second);
    }
    out.push_back(std::move(null));
}

}  // namespace

std::vector<curve_series> stiminfo_curves(const std::vector<stiminfo_record>& records, const stiminfo_request& q) {
    std::vector<curve_series> out;
    if (q.slide) {
        std::vector<std::string> seen;
        for (const auto& r: records) {
            if (std::find(seen.begin(), seen.end(), r.unit) != seen.end()) continue;
            seen.push_back(r.unit);
            add_time_course(records, r, q, out);
        }
    }
    for (const auto& r: records) {
        for (const auto& [e, values]: r.info_by_fraction) {
            curve_series c = labelled(r, "info_vs_trial_fraction", info_estimator_name(e));
            c.window_ms = std::make_pair(r.window.first * 1000, r.window.second * 1000);
            c.x = {"fraction of trials", "", r.trial_fractions};
            c.y = {"information", "bits", values};
            out.push_back(std::move(c));
        }
    }
    return out;
}

}  // namespace rastrum
