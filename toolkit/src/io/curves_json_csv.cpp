#include <rastrum/csv.hpp>
#include <rastrum/curves_output.hpp>

#include <cmath>
#include <sstream>

namespace rastrum {

namespace {
using json = nlohmann::ordered_json;

/// NaN and infinities have no JSON form; they are null, as everywhere in rastrum's JSON.
json numbers(const std::vector<double>& values) {
    json a = json::array();
    for (double v: values) a.push_back(std::isfinite(v) ? json(v) : json(nullptr));
    return a;
}

double polynomial(const std::vector<double>& c, double x) {
    double y = 0;
    for (auto it = c.rbegin(); it != c.rend(); ++it) y = y * x + *it;
    return y;
}
}  // namespace

json curves_json(const std::vector<curve_series>& curves) {
    json out = json::array();
    for (const auto& c: curves) {
        json y{{"quantity", c.y.quantity}, {"unit", c.y.unit}, {"values", numbers(c.y.values)}};
        if (!c.y_low.empty()) {
            y["ci95_low"] = numbers(c.y_low);
            y["ci95_high"] = numbers(c.y_high);
        }
        json s{{"curve", c.curve},
               {"unit", c.unit},
               {"stimulus", c.stimulus ? json(*c.stimulus) : json(nullptr)},
               {"bin_ms", c.bin_ms ? json(*c.bin_ms) : json(nullptr)},
               {"letters", c.letters ? json(*c.letters) : json(nullptr)},
               {"window_ms", c.window_ms ? json{c.window_ms->first, c.window_ms->second} : json(nullptr)},
               {"series", c.series},
               {"x", {{"quantity", c.x.quantity}, {"unit", c.x.unit}, {"values", numbers(c.x.values)}}},
               {"y", y}};
        if (!c.in_fit.empty()) s["in_fit"] = c.in_fit;
        s["fit"] = c.fit ? json{{"form", "polynomial"},
                                {"coefficients", numbers(c.fit->coefficients)},
                                {"x_range", {c.fit->x_range.first, c.fit->x_range.second}},
                                {"at_zero", c.fit->coefficients.front()}}
                         : json(nullptr);
        out.push_back(std::move(s));
    }
    return out;
}

std::string curves_csv(const std::vector<curve_series>& curves, const std::string& analysis) {
    std::ostringstream s;
    s << "analysis,curve,unit,stimulus,bin_ms,letters,window_start_ms,window_stop_ms,series,x_quantity,x_unit,x,"
         "y_quantity,y_unit,y,y_ci95_low,y_ci95_high,in_fit,fit_value\n";
    for (const auto& c: curves) {
        std::ostringstream head;
        head << analysis << ',' << c.curve << ',' << csv_text(c.unit) << ',' << csv_text(c.stimulus.value_or("")) << ','
             << (c.bin_ms ? csv_number(*c.bin_ms) : "") << ',' << (c.letters ? std::to_string(*c.letters) : "") << ','
             << (c.window_ms ? csv_number(c.window_ms->first) : "") << ','
             << (c.window_ms ? csv_number(c.window_ms->second) : "") << ',' << csv_text(c.series) << ','
             << csv_text(c.x.quantity) << ',' << csv_text(c.x.unit) << ',';
        for (std::size_t i = 0; i < c.x.values.size(); ++i) {
            s << head.str() << csv_number(c.x.values[i]) << ',' << csv_text(c.y.quantity) << ',' << csv_text(c.y.unit)
              << ',' << csv_number(c.y.values[i]) << ',' << (c.y_low.empty() ? "" : csv_number(c.y_low[i])) << ','
              << (c.y_high.empty() ? "" : csv_number(c.y_high[i])) << ','
              << (c.in_fit.empty() ? "" : (c.in_fit[i] ? "true" : "false")) << ','
              << (c.fit ? csv_number(polynomial(c.fit->coefficients, c.x.values[i])) : "") << '\n';
        }
    }
    return s.str();
}

}  // namespace rastrum
