#include <rastrum/csv.hpp>
#include <rastrum/format.hpp>
#include <rastrum/stiminfo_results.hpp>

#include <algorithm>

#include <cmath>
#include <cstdio>
#include <set>
#include <sstream>

namespace rastrum {

namespace {

/// Records whose caution is "uncertain" (or "not calibrated"): printed one by one when few, else in
/// one line (below).
constexpr std::size_t uncertain_listed_alone = 3;

bool is_uncertain(const std::string& caution) { return caution.rfind("uncertain:", 0) == 0; }
bool is_not_calibrated(const std::string& caution) { return caution.rfind("not calibrated:", 0) == 0; }

/// The records with a caution of `kind`, unit by unit with their windows.
std::string records_named(const std::vector<stiminfo_record>& records, bool (*kind)(const std::string&)) {
    std::vector<std::pair<std::string, std::string>> by_unit;  // unit, its windows
    for (const auto& r: records) {
        if (std::none_of(r.warnings.begin(), r.warnings.end(), kind)) continue;
        char window[64];
        std::snprintf(window, sizeof window, "%g-%g", r.window.first * 1000, r.window.second * 1000);
        auto it = std::find_if(by_unit.begin(), by_unit.end(), [&](const auto& u) { return u.first == r.unit; });
        if (it == by_unit.end()) {
            by_unit.emplace_back(r.unit, window);
        } else {
            it->second += std::string(", ") + window;
        }
    }
    std::string units;
    for (const auto& [unit, windows]: by_unit) units += (units.empty() ? "" : "; ") + unit + " at " + windows + " ms";
    return units;
}

std::size_t records_with(const std::vector<stiminfo_record>& records, bool (*kind)(const std::string&)) {
    return static_cast<std::size_t>(std::count_if(records.begin(), records.end(), [&](const stiminfo_record& r) {
        return std::any_of(r.warnings.begin(), r.warnings.end(), kind);
    }));
}

/// One line for many uncertain records: which they are and where each one's error and trials
/// needed are. Each record's full sentence stays in the JSON and CSV; printed fifteen times over,
/// three lines each, it hid every other caution of the table.
std::string uncertain_summary(const std::vector<stiminfo_record>& records, std::size_t count) {
    return "uncertain, " + std::to_string(count) + " of " + std::to_string(records.size()) + " records (" +
           records_named(records, is_uncertain) +
           "): each calibrated error exceeds its tolerance (10% of the value, or 0.02 bits); the 95% interval "
           "shows the error and 'trials needed' the trials per condition that would meet it (each record's own "
           "caution is in the JSON and CSV); more trials per condition, a coarser code or a shorter window would help";
}
using json = nlohmann::ordered_json;

json bin_ms_of(const stiminfo_request& q) {
    return q.response.code == response_code::spike_count ? json(nullptr) : json(q.response.bin_width * 1000);
}

json per_estimator(const stiminfo_record& r, double divide_by) {
    json j = json::object();
    for (const auto& [e, v]: r.info_bits) {
        j[info_estimator_name(e)] = divide_by > 0 ? json(v / divide_by) : json(nullptr);
    }
    return j;
}
json population_json(const stiminfo_record& r, const stiminfo_request& q) {
    if (!r.population) return nullptr;
    const auto& p = *r.population;
    auto pair = [](double lo, double hi) { return json{lo, hi}; };
    return {{"estimator", info_estimator_name(q.population_estimator)},
            {"joint_bits", p.values.joint},
            {"sum_single_bits", p.values.sum_single},
            {"synergy_bits", p.values.synergy},
            {"independent_bits", p.values.independent},
            {"shuffle_corrected_bits", p.values.shuffle_corrected},
            {"ci95_bits", q.bootstrap < 2 ? json(nullptr) : json
             {{"joint", pair(p.low.joint, p.high.joint)},
              {"sum_single", pair(p.low.sum_single, p.high.sum_single)},
              {"synergy", pair(p.low.synergy, p.high.synergy)},
              {"independent", pair(p.low.independent, p.high.independent)},
              {"shuffle_corrected", pair(p.low.shuffle_corrected, p.high.shuffle_corrected)}}}};
}

json calibration_json(const stiminfo_record& r) {
    if (!r.calibration) return nullptr;
    const stiminfo_calibration& c = *r.calibration;
    json by = json::object();
    for (const auto& [e, v]: c.by_estimator) {
        by[info_estimator_name(e)] = {{"estimate_bits", v.estimate}, {"bias_bits", v.bias}, {"spread_bits", v.spread},
                                      {"rmse_bits", v.rmse}, {"error_bits", v.error}, {"corrected_bits", v.estimate - v.bias}};
    }
    json sizes = json::array();
    for (const auto& z: c.by_size) {
        sizes.push_back({{"scale", z.scale}, {"trials_per_condition", z.trials_per_condition}, {"surrogates", z.surrogates},
                         {"bias_bits", z.bias}, {"spread_bits", z.spread}, {"error_bits", z.error}});
    }
    json unlike = json::array();
    for (info_estimator e: c.unlike_model) unlike.push_back(info_estimator_name(e));
    return {{"surrogates", c.surrogates},
            {"model", c.smoothing == response_smoothing::variance_matched ? "shrunk toward the pooled responses, sized by the plug-in bias" : "raw frequencies"},
            {"shrinkage", c.shrinkage},
            {"first_model_bits", c.first_model_bits},
            {"first_plugin_bias_bits", c.first_plugin_bias},
            {"model_bits", c.model_bits},
            {"recommended_estimator", c.by_estimator.count(c.recommended) ? json(info_estimator_name(c.recommended)) : json(nullptr)},
            {"value_bits", c.value},
            {"error_bits", c.error},
            {"t_quantile", c.t_quantile},
            {"ci95_bits", {c.interval.first, c.interval.second}},
            {"tolerance_bits", c.tolerance},
            {"uncertain", c.uncertain},
            {"not_calibrated", c.not_calibrated},
            {"unseen_mass", c.unseen_mass},
            {"unlike_model", unlike},
            {"trials_per_condition_needed", c.trials_per_condition_needed ? json(*c.trials_per_condition_needed) : json(nullptr)},
            {"by_trials", sizes},
            {"by_estimator", by}};
}

}  // namespace

nlohmann::ordered_json stiminfo_parameters_json(const stiminfo_request& q) {
    json estimators = json::array();
    for (info_estimator e: q.estimators) estimators.push_back(info_estimator_name(e));
    json populations = json::array();
    for (const auto& p: q.populations) populations.push_back(p);
    return {{"units", q.units},
            {"populations", populations},
            {"population_estimator", info_estimator_name(q.population_estimator)},
            {"within_condition_shuffles", q.within_condition_shuffles},
            {"stimuli", q.stimuli},
            {"window_ms", {q.response.window_start * 1000, q.response.window_stop * 1000}},
            {"code", response_code_name(q.response.code)},
            {"bin_ms", bin_ms_of(q)},
            {"binary", q.response.binary},
            {"slide_ms", q.slide ? json{q.slide->first * 1000, q.slide->second * 1000} : json(nullptr)},
            {"estimators", estimators},
            {"null_shuffles", q.null_shuffles},
            {"bootstrap", q.bootstrap},
            {"interval_estimator", info_estimator_name(q.interval_estimator)},
            {"splits", q.settings.splits},
            {"surrogates", q.surrogates},
            {"seed", q.settings.seed},
            {"threads", q.threads}};
}

nlohmann::ordered_json stiminfo_json(const std::vector<stiminfo_record>& records, const stiminfo_request& q,
                                     const provenance& origin) {
    json j = result_head("stiminfo", origin);
    j["parameters"] = stiminfo_parameters_json(q);
    add_trial_selection(j["parameters"], q.trials);
    j["records"] = json::array();
    for (const auto& r: records) {
        json per_stimulus = json::object();
        for (const auto& [label, n]: r.trials_per_stimulus) per_stimulus[label] = n;
        j["records"].push_back(
            {{"unit", r.unit},
             {"units", r.units},
             {"window_ms", {r.window.first * 1000, r.window.second * 1000}},
             {"code", response_code_name(q.response.code)},
             {"bin_ms", bin_ms_of(q)},
             {"trials", r.trials},
             {"stimuli", r.trials_per_stimulus.size()},
             {"trials_per_stimulus", per_stimulus},
             {"stimulus_entropy_bits", r.stimulus_entropy_bits},
             {"response_alphabet", r.response_alphabet},
             {"distinct_responses", r.distinct_responses},
             {"info_bits", per_estimator(r, 1)},
             {"null", q.null_shuffles == 0 ? json(nullptr)
                                           : json{{"shuffles", r.null_shuffles},
                                                  {"mean_bits", r.null_mean_bits},
                                                  {"p_value", r.null_p_value},
                                                  {"band95_bits", {r.null_band.first, r.null_band.second}}}},
             {"info_null_subtracted_bits", q.null_shuffles == 0 ? json(nullptr) : json(r.null_subtracted_bits)},
             {"info_ci95_bits", q.bootstrap > 1 ? json{r.interval.first, r.interval.second} : json(nullptr)},
             {"info_ci95_estimator", info_estimator_name(q.interval_estimator)},
             {"info_ci95_method", q.bootstrap > 1 ? json("envelope of the bias-corrected estimates and the null-subtracted "
                                                         "plug-in value, widened by 1.96 bootstrap standard deviations of " +
                                                         std::string(info_estimator_name(q.interval_estimator)))
                                                  : json(nullptr)},
             {"info_calibrated_bits", r.calibration ? json(r.calibration->value) : json(nullptr)},
             {"info_calibrated_ci95_bits", r.calibration ? json{r.calibration->interval.first, r.calibration->interval.second}
                                                         : json(nullptr)},
             {"info_calibrated_estimator", r.calibration && !r.calibration->not_calibrated
                                                ? json(info_estimator_name(r.calibration->recommended)) : json(nullptr)},
             {"calibration", calibration_json(r)},
             {"few_trials", r.few_trials},
             {"mean_spikes", r.mean_spikes},
             {"bits_per_spike", per_estimator(r, r.mean_spikes)},
             {"population", population_json(r, q)},
             {"warnings", r.warnings}});
    }
    return j;
}

std::string stiminfo_csv(const std::vector<stiminfo_record>& records, const stiminfo_request& q) {
    std::ostringstream s;
    // Record-level columns (unit ... info_ci95_*, population_*) repeat on each estimator's row: tidy form.
    s << "unit,window_start_ms,window_stop_ms,code,bin_ms,trials,stimuli,stimulus_entropy_bits,response_alphabet,"
         "distinct_responses,estimator,info_bits,bits_per_spike,null_mean_bits,null_p_value,info_null_subtracted_bits,"
         "info_ci95_low_bits,info_ci95_high_bits,info_ci95_bootstrap_estimator,few_trials,"
         "estimator_bias_bits,estimator_spread_bits,estimator_corrected_bits,calibrated_info_bits,"
         "calibrated_ci95_low_bits,calibrated_ci95_high_bits,recommended_estimator,uncertain,trials_per_condition_needed";
    for (const char* v: {"joint", "sum_single", "synergy", "independent", "shuffle_corrected"}) {
        s << ",population_" << v << "_bits,population_" << v << "_ci95_low_bits,population_" << v << "_ci95_high_bits";
    }
    s << ",population_estimator,warnings\n";
    const bool nulls = q.null_shuffles > 0, intervals = q.bootstrap > 1;
    auto maybe = [](bool present, double x) { return present ? csv_number(x) : std::string(); };
    for (const auto& r: records) {
        std::string warnings;
        for (const auto& w: r.warnings) warnings += (warnings.empty() ? "" : "; ") + w;
        std::ostringstream population;
        for (auto field: {&population_values::joint, &population_values::sum_single, &population_values::synergy,
                          &population_values::independent, &population_values::shuffle_corrected}) {
            const bool p = r.population.has_value();
            population << ',' << maybe(p, p ? r.population->values.*field : 0) << ','
                       << maybe(p && intervals, p ? r.population->low.*field : 0) << ','
                       << maybe(p && intervals, p ? r.population->high.*field : 0);
        }
        population << ',' << (r.population ? info_estimator_name(q.population_estimator) : "");
        const stiminfo_calibration* c = r.calibration ? &*r.calibration : nullptr;
        std::ostringstream calibrated;  // the record's calibration, after each row's estimator's own
        if (c) {
            calibrated << ',' << csv_number(c->value) << ',' << csv_number(c->interval.first) << ','
                       << csv_number(c->interval.second) << ','
                       << (c->not_calibrated ? "" : info_estimator_name(c->recommended)) << ','
                       << (c->uncertain ? "true" : "false") << ','
                       << (c->trials_per_condition_needed ? csv_number(*c->trials_per_condition_needed) : "");
        } else {
            calibrated << ",,,,,,";
        }
        for (const auto& [e, v]: r.info_bits) {
            const auto measured = c ? c->by_estimator.find(e) : decltype(c->by_estimator.end()){};
            const estimator_calibration* ec = c && measured != c->by_estimator.end() ? &measured->second : nullptr;
            s << csv_text(r.unit) << ',' << csv_number(r.window.first * 1000) << ',' << csv_number(r.window.second * 1000)
              << ',' << response_code_name(q.response.code) << ','
              << (q.response.code == response_code::spike_count ? "" : csv_number(q.response.bin_width * 1000)) << ','
              << r.trials << ',' << r.trials_per_stimulus.size() << ',' << csv_number(r.stimulus_entropy_bits) << ','
              << csv_number(r.response_alphabet) << ',' << r.distinct_responses << ',' << info_estimator_name(e) << ','
              << csv_number(v) << ',' << (r.mean_spikes > 0 ? csv_number(v / r.mean_spikes) : "") << ','
              << maybe(nulls, r.null_mean_bits) << ',' << maybe(nulls, r.null_p_value) << ','
              << maybe(nulls, r.null_subtracted_bits) << ',' << maybe(intervals, r.interval.first) << ','
              << maybe(intervals, r.interval.second) << ',' << (intervals ? info_estimator_name(q.interval_estimator) : "")
              << ',' << (r.few_trials ? "true" : "false") << ',' << maybe(ec, ec ? ec->bias : 0) << ','
              << maybe(ec, ec ? ec->spread : 0) << ',' << maybe(ec, ec ? ec->estimate - ec->bias : 0) << calibrated.str()
              << population.str() << ',' << csv_text(warnings) << '\n';
        }
    }
    return s.str();
}

namespace {
std::string interval_text(bool present, double low, double high) {
    if (!present) return "none";
    char text[64];
    std::snprintf(text, sizeof text, "[%.3f, %.3f]", low, high);
    return text;
}
}  // namespace

std::string stiminfo_table(const std::vector<stiminfo_record>& records, const stiminfo_request& q) {
    std::ostringstream s;
    char line[512];
    const bool nulls = q.null_shuffles > 0, intervals = q.bootstrap > 1;
    s << "Stimulus information: bits about which condition was shown, " << response_code_name(q.response.code)
      << " code";
    if (q.response.code != response_code::spike_count) {
        std::snprintf(line, sizeof line, " in %g ms bins%s", q.response.bin_width * 1000, q.response.binary ? " (binary)" : "");
        s << line;
    }
    s << "\n";
    if (!records.empty()) {
        std::snprintf(line, sizeof line, "%zu trials, %zu conditions, stimulus entropy %.3f bits\n", records[0].trials,
                      records[0].trials_per_stimulus.size(), records[0].stimulus_entropy_bits);
        s << line;
    }
    const bool calibrated = q.surrogates > 0;
    if (calibrated) {
        s << "calibrated: the value of the estimator of lowest error (named), less its bias, both measured on " << q.surrogates
          << " surrogate\ndata sets drawn from a model fitted to each record; 95% interval: +-t calibrated errors;\n"
             "trials needed: per condition, for an error within max(10% of the value, 0.02 bits), from surrogates\n"
             "with 2x and 4x the trials (the envelope interval of the estimators is in the JSON and CSV)\n";
    } else if (intervals) {
        s << "95% interval: from the lowest to the highest bias-corrected estimate" << (nulls ? " (null-subtracted included)" : "")
          << ",\nwidened by 1.96 bootstrap standard deviations of " << info_estimator_name(q.interval_estimator) << " ("
          << q.bootstrap << " resamples within condition)\n";
    }
    std::size_t unit_width = 10;
    for (const auto& r: records) unit_width = std::max(unit_width, r.unit.size());
    std::vector<int> widths;
    s << "\n" << std::string(unit_width - 4, ' ') << "unit  window ms";
    for (info_estimator e: q.estimators) {
        widths.push_back(std::max(9, static_cast<int>(std::string(info_estimator_name(e)).size())));
        std::snprintf(line, sizeof line, " %*s", widths.back(), info_estimator_name(e));
        s << line;
    }
    if (calibrated) {
        std::snprintf(line, sizeof line, " %10s %10s %11s  %-16s %-23s %s\n", "null-sub", "p(shuffle)", "calibrated",
                      "95% interval", "estimator", "trials needed");
    } else {
        std::snprintf(line, sizeof line, " %10s  %-16s %10s\n", "null-sub", "95% interval", "p(shuffle)");
    }
    s << line;
    for (const auto& r: records) {
        std::snprintf(line, sizeof line, "%*s %5g-%-5g", static_cast<int>(unit_width), r.unit.c_str(), r.window.first * 1000,
                      r.window.second * 1000);
        s << line;
        for (std::size_t i = 0; i < q.estimators.size(); ++i) {
            std::snprintf(line, sizeof line, " %*.4f", widths[i], r.info_bits.at(q.estimators[i]));
            s << line;
        }
        char p_value[16] = "n/a", subtracted[16] = "n/a";
        if (nulls) {
            std::snprintf(p_value, sizeof p_value, "%.3f", r.null_p_value);
            std::snprintf(subtracted, sizeof subtracted, "%.4f", r.null_subtracted_bits);
        }
        if (r.calibration) {
            const auto& c = *r.calibration;
            if (c.not_calibrated) {
                std::snprintf(line, sizeof line, " %10s %10s %11s  %-16s %-23s %s%s\n", subtracted, p_value, "-", "-", "-", "-",
                              "  (!)");
            } else {
                const std::string needed =
                    c.trials_per_condition_needed
                        ? format_number(std::ceil(*c.trials_per_condition_needed))
                        : "more than " + format_number(std::ceil(4 * c.by_size.front().trials_per_condition));
                std::snprintf(line, sizeof line, " %10s %10s %11.4f  %-16s %-23s %s%s\n", subtracted, p_value, c.value,
                              interval_text(true, c.interval.first, c.interval.second).c_str(),
                              info_estimator_name(c.recommended), needed.c_str(), r.warnings.empty() ? "" : "  (!)");
            }
        } else {
            std::snprintf(line, sizeof line, " %10s  %-16s %10s%s\n", subtracted,
                          interval_text(intervals, r.interval.first, r.interval.second).c_str(), p_value,
                          r.warnings.empty() ? "" : "  (!)");
        }
        s << line;
    }
    bool populations = false;
    for (const auto& r: records) {
        if (!r.population) continue;
        if (!populations) {
            s << "\nPopulations, by " << info_estimator_name(q.population_estimator)
              << " (independent: plug-in product of the units' conditional distributions, extrapolated);\n"
                 "synergy = joint - sum of the units alone (negative: redundancy); 95% intervals below each value\n";
            std::snprintf(line, sizeof line, "%*s  window ms %16s %16s %16s %16s %17s\n", static_cast<int>(unit_width), "units",
                          "joint", "sum", "synergy", "independent", "shuffle-corrected");
            s << line;
        }
        populations = true;
        const auto& v = r.population->values;
        std::snprintf(line, sizeof line, "%*s %5g-%-5g %16.4f %16.4f %16.4f %16.4f %17.4f\n", static_cast<int>(unit_width),
                      r.unit.c_str(), r.window.first * 1000, r.window.second * 1000, v.joint, v.sum_single, v.synergy,
                      v.independent, v.shuffle_corrected);
        s << line;
        const auto& lo = r.population->low;
        const auto& hi = r.population->high;
        std::snprintf(line, sizeof line, "%*s %11s %16s %16s %16s %16s %17s\n", static_cast<int>(unit_width), "", "",
                      interval_text(intervals, lo.joint, hi.joint).c_str(),
                      interval_text(intervals, lo.sum_single, hi.sum_single).c_str(),
                      interval_text(intervals, lo.synergy, hi.synergy).c_str(),
                      interval_text(intervals, lo.independent, hi.independent).c_str(),
                      interval_text(intervals, lo.shuffle_corrected, hi.shuffle_corrected).c_str());
        s << line;
    }
    // A caution every record shares is said once.
    std::vector<std::string> shared = records.empty() ? std::vector<std::string>{} : records[0].warnings;
    for (const auto& r: records) {
        shared.erase(std::remove_if(shared.begin(), shared.end(),
                                    [&](const std::string& w) {
                                        return std::find(r.warnings.begin(), r.warnings.end(), w) == r.warnings.end();
                                    }),
                     shared.end());
    }
    if (records.size() < 2) shared.clear();
    bool any = false;
    for (const auto& w: shared) {
        if (!any) s << "\nCautions:\n";
        any = true;
        s << "  every record: " << w << "\n";
    }
    const std::size_t uncertain = records_with(records, is_uncertain);
    const bool summarised = uncertain > uncertain_listed_alone;
    if (summarised) {
        if (!any) s << "\nCautions:\n";
        any = true;
        s << "  " << uncertain_summary(records, uncertain) << "\n";
    }
    const std::size_t not_calibrated = records_with(records, is_not_calibrated);
    const bool summarised_not = not_calibrated > uncertain_listed_alone;
    if (summarised_not) {
        if (!any) s << "\nCautions:\n";
        any = true;
        s << "  not calibrated, " << not_calibrated << " of " << records.size() << " records ("
          << records_named(records, is_not_calibrated)
          << "): each is unlike data drawn from the model fitted to it (every estimator's value lies far outside its "
             "values on the model's data sets), so its estimators cannot be judged at this sample size; a coarser code "
             "(the count code, or fewer or wider bins) would help (each record's own caution, with its figures, is in the "
             "JSON and CSV)\n";
    }
    for (const auto& r: records) {
        for (const auto& w: r.warnings) {
            if (std::find(shared.begin(), shared.end(), w) != shared.end()) continue;
            if ((summarised && is_uncertain(w)) || (summarised_not && is_not_calibrated(w))) continue;
            if (!any) s << "\nCautions:\n";
            any = true;
            std::snprintf(line, sizeof line, "  %s at %g-%g ms: ", r.unit.c_str(), r.window.first * 1000, r.window.second * 1000);
            s << line << w << "\n";
        }
    }
    s << "\nColumns are information in bits per trial by each estimator (plug-in is biased upward); null-sub is\n"
         "plug-in minus its mean under shuffled labels (the shuffle bias correction).\n";
    if (q.slide && nulls) {
        std::set<std::pair<seconds, seconds>> windows;
        for (const auto& r: records) windows.insert(r.window);
        std::snprintf(line, sizeof line,
                      "p-values are per window: over %zu windows about %.1f per unit fall below 0.05 by chance alone.\n",
                      windows.size(), 0.05 * static_cast<double>(windows.size()));
        s << line;
    }
    return s.str();
}

}  // namespace rastrum
