#include <rastrum/curves.hpp>

#include <algorithm>

namespace rastrum {

namespace {

curve_series labelled(const direct_record& r, const char* curve, const char* series) {
    curve_series c;
    c.curve = curve;
    c.unit = r.unit;
    c.stimulus = r.stimulus;
    c.series = series;
    return c;
}

/// Entropy rates against 1/L at one bin width, with the lines fitted over the chosen lengths.
void add_word_length_curves(const direct_record& r, std::vector<curve_series>& out) {
    const direct_estimate& e = r.estimate;
    const double dt = e.bin_width;
    const auto [first, last] = e.fit_letters;
    struct part {
        const char* name;
        double (*bits)(const letters_estimate&);
        const line_fit* fit;
    };
    const part parts[] = {
        {"total", [](const letters_estimate& le) { return le.total_bits; }, &e.total_rate_fit},
        {"noise", [](const letters_estimate& le) { return le.noise_bits; }, &e.noise_rate_fit},
        {"information", [](const letters_estimate& le) { return le.info_bits; }, nullptr},
    };
    for (const part& p: parts) {
        curve_series c = labelled(r, "entropy_rate_vs_inverse_letters", p.name);
        c.bin_ms = r.bin_ms;
        c.x = {"inverse word length", "1/letters", {}};
        c.y = {p.fit ? std::string(p.name) + " entropy rate" : "information rate", "bits/s", {}};
        for (const auto& le: e.by_letters) {
            c.x.values.push_back(1.0 / le.letters);
            c.y.values.push_back(p.bits(le) / (le.letters * dt));
            c.in_fit.push_back(le.letters >= first && le.letters <= last);
        }
        if (p.fit) c.fit = curve_fit{{p.fit->intercept, p.fit->slope}, {1.0 / last, 1.0 / first}};
        out.push_back(std::move(c));
    }
}

/// Entropies against 1/N at every word length, with the quadratics of the extrapolation.
void add_data_size_curves(const direct_record& r, std::vector<curve_series>& out) {
    for (const auto& le: r.estimate.by_letters) {
        const data_size_curve& d = le.data_size;
        for (int which = 0; which < 2; ++which) {
            curve_series c = labelled(r, "entropy_vs_inverse_trials", which == 0 ? "total" : "noise");
            c.bin_ms = r.bin_ms;
            c.letters = le.letters;
            c.x = {"inverse trial count", "1/trials", d.inverse_trials};
            c.y = {which == 0 ? "total entropy" : "noise entropy", "bits/word", which == 0 ? d.total_bits : d.noise_bits};
            c.in_fit = d.in_fit;
            const inverse_size_fit& f = which == 0 ? d.total_fit : d.noise_fit;
            double widest = 0;
            for (std::size_t i = 0; i < d.inverse_trials.size(); ++i) {
                if (d.in_fit[i]) widest = std::max(widest, d.inverse_trials[i]);
            }
            c.fit = curve_fit{{f.at_infinity, f.linear, f.quadratic}, {d.inverse_trials.front(), widest}};
            out.push_back(std::move(c));
        }
    }
}

}  // namespace

std::vector<curve_series> direct_curves(const std::vector<direct_record>& records) {
    std::vector<curve_series> out;
    // Bin-width curves first, one set per unit and stimulus in the records' order.
    std::vector<std::pair<std::string, std::optional<std::string>>> seen;
    for (const auto& r: records) {
        const auto key = std::make_pair(r.unit, r.stimulus);
        if (std::find(seen.begin(), seen.end(), key) != seen.end()) continue;
        seen.push_back(key);
        curve_series info = labelled(r, "info_rate_vs_bin_width", "information");
        curve_series total = labelled(r, "info_rate_vs_bin_width", "total");
        curve_series noise = labelled(r, "info_rate_vs_bin_width", "noise");
        info.x = total.x = noise.x = {"bin width", "ms", {}};
        info.y = {"information rate", "bits/s", {}};
        total.y = {"total entropy rate", "bits/s", {}};
        noise.y = {"noise entropy rate", "bits/s", {}};
        for (const auto& s: records) {
            if (s.unit != r.unit || s.stimulus != r.stimulus) continue;
            for (curve_series* c: {&info, &total, &noise}) c->x.values.push_back(s.bin_ms);
            info.y.values.push_back(s.estimate.info_rate);
            info.y_low.push_back(s.estimate.info_rate_ci95.first);
            info.y_high.push_back(s.estimate.info_rate_ci95.second);
            total.y.values.push_back(s.estimate.total_rate);
            noise.y.values.push_back(s.estimate.noise_rate);
        }
        for (curve_series* c: {&info, &total, &noise}) out.push_back(std::move(*c));
    }
    for (const auto& r: records) add_word_length_curves(r, out);
    for (const auto& r: records) add_data_size_curves(r, out);
    return out;
}

}  // namespace rastrum
