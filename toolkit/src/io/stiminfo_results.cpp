#include <rastrum/stiminfo_results.hpp>

#include <cmath>
#include <cstdio>
#include <sstream>

namespace rastrum {

namespace {
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
            {"ci95_bits",
             {{"joint", pair(p.low.joint, p.high.joint)},
              {"sum_single", pair(p.low.sum_single, p.high.sum_single)},
              {"synergy", pair(p.low.synergy, p.high.synergy)},
              {"independent", pair(p.low.independent, p.high.independent)},
              {"shuffle_corrected", pair(p.low.shuffle_corrected, p.high.shuffle_corrected)}}}};
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
            {"seed", q.settings.seed},
            {"threads", q.threads}};
}

nlohmann::ordered_json stiminfo_json(const std::vector<stiminfo_record>& records, const stiminfo_request& q,
                                     const provenance& origin) {
    json j = result_head("stiminfo", origin);
    j["parameters"] = stiminfo_parameters_json(q);
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
                                                  {"p_value", r.null_p_value}}},
             {"info_null_subtracted_bits", q.null_shuffles == 0 ? json(nullptr) : json(r.null_subtracted_bits)},
             {"info_ci95_bits", q.bootstrap > 1 ? json{r.interval.first, r.interval.second} : json(nullptr)},
             {"info_ci95_estimator", info_estimator_name(q.interval_estimator)},
             {"mean_spikes", r.mean_spikes},
             {"bits_per_spike", per_estimator(r, r.mean_spikes)},
             {"population", population_json(r, q)},
             {"warnings", r.warnings}});
    }
    return j;
}

std::string stiminfo_csv(const std::vector<stiminfo_record>& records, const stiminfo_request& q) {
    std::ostringstream s;
    s << "unit,window_start_ms,window_stop_ms,code,bin_ms,trials,stimuli,stimulus_entropy_bits,response_alphabet,"
         "distinct_responses,estimator,info_bits,bits_per_spike,null_mean_bits,null_p_value,info_null_subtracted_bits,"
         "info_ci95_low_bits,info_ci95_high_bits,warnings\n";
    char number[40];
    auto num = [&](double x) {
        if (!std::isfinite(x)) return std::string();
        std::snprintf(number, sizeof number, "%.10g", x);
        return std::string(number);
    };
    for (const auto& r: records) {
        std::string warnings;
        for (const auto& w: r.warnings) warnings += (warnings.empty() ? "" : "; ") + w;
        std::string quoted = "\"";
        for (char c: warnings) quoted += c == '"' ? std::string("\"\"") : std::string(1, c);
        quoted += "\"";
        for (const auto& [e, v]: r.info_bits) {
            s << r.unit << ',' << num(r.window.first * 1000) << ',' << num(r.window.second * 1000) << ','
              << response_code_name(q.response.code) << ','
              << (q.response.code == response_code::spike_count ? "" : num(q.response.bin_width * 1000)) << ','
              << r.trials << ',' << r.trials_per_stimulus.size() << ',' << num(r.stimulus_entropy_bits) << ','
              << num(r.response_alphabet) << ',' << r.distinct_responses << ',' << info_estimator_name(e) << ','
              << num(v) << ',' << (r.mean_spikes > 0 ? num(v / r.mean_spikes) : "") << ','
              << (q.null_shuffles ? num(r.null_mean_bits) : "") << ',' << (q.null_shuffles ? num(r.null_p_value) : "")
              << ',' << (q.null_shuffles ? num(r.null_subtracted_bits) : "") << ','
              << (q.bootstrap > 1 ? num(r.interval.first) : "") << ',' << (q.bootstrap > 1 ? num(r.interval.second) : "")
              << ',' << quoted << '\n';
        }
    }
    return s.str();
}

std::string stiminfo_table(const std::vector<stiminfo_record>& records, const stiminfo_request& q) {
    std::ostringstream s;
    char line[512];
    s << "Stimulus information: bits about which condition was shown, " << response_code_name(q.response.code)
      << " code";
    if (q.response.code != response_code::spike_count) {
        std::snprintf(line, sizeof line, " in %g ms bins%s", q.response.bin_width * 1000, q.response.binary ? " (binary)" : "");
        s << line;
    }
    s << "\n";
    if (!records.empty()) {
        std::snprintf(line, sizeof line, "%zu trials, %zu conditions, stimulus entropy %.3f bits; interval: %s, bootstrap %u\n",
                      records[0].trials, records[0].trials_per_stimulus.size(), records[0].stimulus_entropy_bits,
                      info_estimator_name(q.interval_estimator), q.bootstrap);
        s << line;
    }
    s << "\n" << "unit       window ms   ";
    for (info_estimator e: q.estimators) {
        std::snprintf(line, sizeof line, "%11.11s ", info_estimator_name(e));
        s << line;
    }
    s << "   95% interval    p(shuffle)\n";
    for (const auto& r: records) {
        std::snprintf(line, sizeof line, "%-10s %5g-%-5g ", r.unit.c_str(), r.window.first * 1000, r.window.second * 1000);
        s << line;
        for (info_estimator e: q.estimators) {
            std::snprintf(line, sizeof line, "%11.4f ", r.info_bits.at(e));
            s << line;
        }
        std::snprintf(line, sizeof line, " [%6.3f, %6.3f]  %8.3f%s\n", r.interval.first, r.interval.second, r.null_p_value,
                      r.warnings.empty() ? "" : "  (!)");
        s << line;
    }
    bool populations = false;
    for (const auto& r: records) {
        if (!r.population) continue;
        if (!populations) {
            std::snprintf(line, sizeof line, "\nPopulations (%s):\n%-16s %9s %9s %9s %12s %17s\n",
                          info_estimator_name(q.population_estimator), "units", "joint", "sum", "synergy", "independent",
                          "shuffle-corrected");
            s << line;
        }
        populations = true;
        const auto& v = r.population->values;
        std::snprintf(line, sizeof line, "%-16s %9.4f %9.4f %9.4f %12.4f %17.4f\n", r.unit.c_str(), v.joint, v.sum_single,
                      v.synergy, v.independent, v.shuffle_corrected);
        s << line;
    }
    bool any = false;
    for (const auto& r: records) {
        for (const auto& w: r.warnings) {
            if (!any) s << "\nCautions:\n";
            any = true;
            std::snprintf(line, sizeof line, "  %s at %g-%g ms: ", r.unit.c_str(), r.window.first * 1000, r.window.second * 1000);
            s << line << w << "\n";
        }
    }
    s << "\nColumns are information in bits per trial by each estimator (plug-in is biased upward).\n";
    return s.str();
}

}  // namespace rastrum
