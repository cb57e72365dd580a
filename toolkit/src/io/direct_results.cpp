#include <rastrum/csv.hpp>
#include <rastrum/direct_results.hpp>

#include <cmath>
#include <cstdio>
#include <sstream>

namespace rastrum {

namespace {
using json = nlohmann::ordered_json;

json number_or_null(double x) { return std::isfinite(x) ? json(x) : json(nullptr); }

json letters_json(const letters_estimate& le) {
    return {{"letters", le.letters},
            {"samples", le.samples},
            {"distinct_words", le.distinct_words},
            {"total_entropy_bits", le.total_bits},
            {"noise_entropy_bits", le.noise_bits},
            {"info_bits", le.info_bits},
            {"total_entropy_plugin_bits", le.total_plugin_bits},
            {"noise_entropy_plugin_bits", le.noise_plugin_bits},
            {"total_entropy_miller_madow_bits", le.total_miller_madow_bits},
            {"noise_entropy_miller_madow_bits", le.noise_miller_madow_bits},
            {"info_bits_by_subset_estimator",
             {{"plug-in", le.info_bits_by_estimator[0]},
              {"miller-madow", le.info_bits_by_estimator[1]},
              {"jackknife", le.info_bits_by_estimator[2]}}},
            {"estimator_spread_bits", le.estimator_spread_bits},
            {"info_se_bits", le.info_se_bits},
            {"info_half_trials_bits", le.info_half_bits},
            {"well_sampled", le.well_sampled}};
}

json calibration_json(const direct_estimate& e) {
    if (!e.calibration) return nullptr;
    const rate_calibration& c = *e.calibration;
    json by_fit = json::array();
    for (const auto& f: c.by_fit) {
        by_fit.push_back({{"fit_letters", {f.fit.first, f.fit.second}},
                          {"info_rate_plain_bits_per_s", f.rate},
                          {"model_info_rate_bits_per_s", f.model_rate},
                          {"bias_bits_per_s", f.bias},
                          {"spread_bits_per_s", f.spread},
                          {"error_bits_per_s", f.error},
                          {"within_tolerance", f.within_tolerance}});
    }
    json by_estimator = json::object();
    for (std::size_t m = 0; m < c.by_estimator.size(); ++m) {
        const estimator_calibration& x = c.by_estimator[m];
        by_estimator[subset_estimator_name(static_cast<subset_estimator>(m))] = {
            {"info_rate_bits_per_s", x.estimate}, {"bias_bits_per_s", x.bias}, {"spread_bits_per_s", x.spread}, {"rmse_bits_per_s", x.rmse}, {"error_bits_per_s", x.error}};
    }
    json larger = nullptr;
    if (c.uncertain) {
        larger = {{"error_bits_per_s_at_1_2_4_times_the_trials", c.error_by_trials},
                  {"trials_needed", c.trials_needed > 0 ? json(c.trials_needed) : json(nullptr)}};
    }
    return {{"surrogates", c.surrogates},
            {"by_subset_estimator", by_estimator},
            {"more_trials", larger},
            {"tolerance_bits_per_s", c.tolerance},
            {"uncertain", c.uncertain},
            {"bias_bits_per_s", c.by_fit[c.chosen].bias},
            {"error_bits_per_s", c.by_fit[c.chosen].error},
            {"plain",
             {{"info_rate_bits_per_s", c.plain_info_rate},
              {"info_rate_se_bits_per_s", c.plain_info_rate_se},
              {"info_rate_ci95_bits_per_s", {c.plain_info_rate_ci95.first, c.plain_info_rate_ci95.second}}}},
            {"by_fit", by_fit}};
}

json record_json(const direct_record& r) {
    const direct_estimate& e = r.estimate;
    json by_letters = json::array();
    for (const auto& le: e.by_letters) by_letters.push_back(letters_json(le));
    return {{"unit", r.unit},
            {"stimulus", r.stimulus ? json(*r.stimulus) : json(nullptr)},
            {"bin_ms", r.bin_ms},
            {"trials", r.trials},
            {"trial_duration_s", r.trial_duration},
            {"mean_rate_hz", r.mean_rate_hz},
            {"by_letters", by_letters},
            {"letters_computed", {e.by_letters.front().letters, e.by_letters.back().letters}},
            {"letters_computed_until", length_stop_name(e.letters_stop)},
            {"fit_letters", {e.fit_letters.first, e.fit_letters.second}},
            {"fit_letters_from", e.fit_letters_from_user ? "option" : e.calibration ? "calibration" : "sampling rule"},
            {"total_entropy_rate_bits_per_s", e.total_rate},
            {"noise_entropy_rate_bits_per_s", e.noise_rate},
            {"info_rate_bits_per_s", e.info_rate},
            {"info_rate_se_bits_per_s", e.info_rate_se},
            {"info_rate_se_parts_bits_per_s",
             {{"resampling", e.uncertainty.resampling},
              {"data_size_extrapolation", e.uncertainty.data_size},
              {"word_length_extrapolation", e.uncertainty.word_length},
              {"bias_correction", e.uncertainty.bias_correction}}},
            {"info_rate_ci95_bits_per_s", {e.info_rate_ci95.first, e.info_rate_ci95.second}},
            {"null", r.null.rotations == 0 ? json(nullptr)
                                           : json{{"rotations", r.null.rotations},
                                                  {"mean_bits_per_s", r.null.mean},
                                                  {"sd_bits_per_s", r.null.sd},
                                                  {"p_value", r.null.p_value}}},
            {"info_rate_null_subtracted_bits_per_s",
             r.null.rotations == 0 ? json(nullptr)
                                   : json((e.calibration ? e.calibration->plain_info_rate : e.info_rate) - r.null.mean)},
            {"bits_per_spike", number_or_null(r.bits_per_spike)},
            {"coding_efficiency", number_or_null(r.coding_efficiency)},
            {"calibration", calibration_json(e)},
            {"warnings", r.warnings}};
}
}  // namespace

nlohmann::ordered_json direct_parameters_json(const direct_request& q) {
    const direct_settings& s = q.settings;
    return {{"units", q.units},
            {"stimulus", q.stimulus ? json(*q.stimulus) : json(nullptr)},
            {"bin_ms", q.bin_ms},
            {"letters", {s.letters_min, s.letters_max}},
            {"binary", q.binary},
            {"fit_letters", s.fit_letters ? json{s.fit_letters->first, s.fit_letters->second} : json(nullptr)},
            {"splits", s.splits},
            {"subset_estimator", subset_estimator_name(s.subsets)},
            {"bias_tolerance", s.bias_tolerance},
            {"every_length", s.every_length},
            {"surrogates", s.surrogates},
            {"surrogate_splits", s.surrogate_splits},
            {"error_tolerance", s.error_tolerance},
            {"error_floor_bits_per_spike", s.error_floor_bits_per_spike},
            {"null_rotations", q.null_rotations},
            {"seed", s.seed},
            {"threads", q.threads}};
}

nlohmann::ordered_json direct_json(const std::vector<direct_record>& records, const direct_request& request,
                                   const provenance& origin) {
    json j = result_head("direct", origin);
    j["parameters"] = direct_parameters_json(request);
    add_trial_selection(j["parameters"], request.trials);
    j["records"] = json::array();
    for (const auto& r: records) j["records"].push_back(record_json(r));
    return j;
}

std::string direct_csv(const std::vector<direct_record>& records) {
    std::ostringstream s;
    s << "unit,stimulus,bin_ms,trials,trial_duration_s,mean_rate_hz,letters,samples,distinct_words,"
         "total_entropy_bits,noise_entropy_bits,info_bits,total_entropy_plugin_bits,noise_entropy_plugin_bits,"
         "total_entropy_miller_madow_bits,noise_entropy_miller_madow_bits,estimator_spread_bits,"
         "info_se_bits,well_sampled,in_fit,total_entropy_rate_bits_per_s,noise_entropy_rate_bits_per_s,"
         "info_rate_bits_per_s,info_rate_ci95_low_bits_per_s,info_rate_ci95_high_bits_per_s,bits_per_spike,"
         "coding_efficiency,warnings\n";
    for (const auto& r: records) {
        const auto& e = r.estimate;
        std::string warnings;
        for (const auto& w: r.warnings) warnings += (warnings.empty() ? "" : "; ") + w;
        for (const auto& le: e.by_letters) {
            const bool in_fit = le.letters >= e.fit_letters.first && le.letters <= e.fit_letters.second;
            s << csv_text(r.unit) << ',' << csv_text(r.stimulus.value_or("")) << ',' << csv_number(r.bin_ms) << ','
              << r.trials << ',' << csv_number(r.trial_duration) << ',' << csv_number(r.mean_rate_hz) << ','
              << le.letters << ',' << le.samples << ',' << le.distinct_words << ',' << csv_number(le.total_bits) << ','
              << csv_number(le.noise_bits) << ',' << csv_number(le.info_bits) << ','
              << csv_number(le.total_plugin_bits) << ',' << csv_number(le.noise_plugin_bits) << ','
              << csv_number(le.total_miller_madow_bits) << ',' << csv_number(le.noise_miller_madow_bits) << ','
              << csv_number(le.estimator_spread_bits) << ',' << csv_number(le.info_se_bits) << ','
              << (le.well_sampled ? "true" : "false") << ',' << (in_fit ? "true" : "false") << ','
              << csv_number(e.total_rate) << ',' << csv_number(e.noise_rate) << ',' << csv_number(e.info_rate) << ','
              << csv_number(e.info_rate_ci95.first) << ',' << csv_number(e.info_rate_ci95.second) << ','
              << csv_number(r.bits_per_spike) << ',' << csv_number(r.coding_efficiency) << ','
              << csv_text(warnings) << '\n';
        }
    }
    return s.str();
}

std::string direct_table(const std::vector<direct_record>& records, const direct_request& request) {
    std::ostringstream s;
    char line[320];
    s << "Direct method: information about a repeated stimulus";
    if (request.stimulus) s << " (trials labelled " << *request.stimulus << ")";
    s << "\n";
    if (!records.empty()) {
        std::snprintf(line, sizeof line, "%zu trials cut to %.4g s; %s letters; rates extrapolated to infinite data, and to infinite word length\nfrom the word lengths under 'fit L' (one length: no extrapolation in word length)\n",
                      records.front().trials, records.front().trial_duration,
                      request.binary ? "binary" : "spike-count");
        s << line;
    }
    const bool with_null = request.null_rotations > 0;
    std::snprintf(line, sizeof line, "\n%-10s %7s %8s %10s %10s %10s %21s %9s %7s %6s%s\n", "unit", "bin ms", "rate Hz",
                  "total b/s", "noise b/s", "info b/s", "info 95% interval", "bits/spk", "effic.", "fit L",
                  with_null ? "  null b/s  p(null)" : "");
    s << line;
    for (const auto& r: records) {
        const auto& e = r.estimate;
        char interval[48], bps[16], eff[16], fit[16];
        std::snprintf(interval, sizeof interval, "[%.2f, %.2f]", e.info_rate_ci95.first, e.info_rate_ci95.second);
        std::snprintf(bps, sizeof bps, std::isfinite(r.bits_per_spike) ? "%.3f" : "-", r.bits_per_spike);
        std::snprintf(eff, sizeof eff, std::isfinite(r.coding_efficiency) ? "%.3f" : "-", r.coding_efficiency);
        std::snprintf(fit, sizeof fit, "%d-%d", e.fit_letters.first, e.fit_letters.second);
        char null_columns[48] = "";
        if (with_null) std::snprintf(null_columns, sizeof null_columns, " %9.2f %8.3f", r.null.mean, r.null.p_value);
        std::snprintf(line, sizeof line, "%-10s %7g %8.2f %10.2f %10.2f %10.2f %21s %9s %7s %6s%s%s\n", r.unit.c_str(),
                      r.bin_ms, r.mean_rate_hz, e.total_rate, e.noise_rate, e.info_rate, interval, bps, eff, fit,
                      null_columns, r.warnings.empty() ? "" : "  (!)");
        s << line;
    }
    bool any = false;
    for (const auto& r: records) {
        for (const auto& w: r.warnings) {
            if (!any) s << "\nCautions:\n";
            any = true;
            std::snprintf(line, sizeof line, "  %s at %g ms: ", r.unit.c_str(), r.bin_ms);
            s << line << w << "\n";
        }
    }
    return s.str();
}

}  // namespace rastrum
