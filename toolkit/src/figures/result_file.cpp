#include <rastrum/errors.hpp>
#include <rastrum/result_file.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <limits>
#include <set>
#include <sstream>

namespace rastrum {

namespace {
using json = nlohmann::ordered_json;
constexpr double nan = std::numeric_limits<double>::quiet_NaN();

const std::set<std::string>& known_curves() {
    static const std::set<std::string> names = {"info_rate_vs_bin_width", "entropy_rate_vs_inverse_letters",
                                                "entropy_vs_inverse_trials", "info_vs_time", "info_vs_trial_fraction"};
    return names;
}

std::string kind_of(const json& j) {
    switch (j.type()) {
        case json::value_t::null: return "null";
        case json::value_t::boolean: return "true or false";
        case json::value_t::string: return "text";
        case json::value_t::array: return "an array";
        case json::value_t::object: return "an object";
        default: return "a number";
    }
}

/// Reads the parts of one curve, each error naming the JSON path inside the file.
class curve_reader {
public:
    curve_reader(std::string file, std::size_t index): file_(std::move(file)), base_("/curves/" + std::to_string(index)) {}

    [[noreturn]] void fail(const std::string& where, const std::string& expected, const std::string& found) const {
        throw input_error(file_, base_ + where, expected, found);
    }

    std::string text(const json& c, const char* key) const {
        if (!c.contains(key) || !c[key].is_string()) fail(std::string("/") + key, "text", c.contains(key) ? kind_of(c[key]) : "nothing");
        return c[key].get<std::string>();
    }

    std::optional<std::string> optional_text(const json& c, const char* key) const {
        if (!c.contains(key) || c[key].is_null()) return std::nullopt;
        return text(c, key);
    }

    std::optional<double> optional_number(const json& c, const char* key) const {
        if (!c.contains(key) || c[key].is_null()) return std::nullopt;
        if (!c[key].is_number()) fail(std::string("/") + key, "a number or null", kind_of(c[key]));
        return c[key].get<double>();
    }

    std::vector<double> numbers(const json& c, const std::string& where) const {
        if (!c.is_array()) fail(where, "an array of numbers", kind_of(c));
        std::vector<double> out;
        for (std::size_t i = 0; i < c.size(); ++i) {
            if (c[i].is_null()) {
                out.push_back(nan);
            } else if (c[i].is_number()) {
                out.push_back(c[i].get<double>());
            } else {
                fail(where + "/" + std::to_string(i), "a number or null", kind_of(c[i]));
            }
        }
        return out;
    }

    curve_axis axis(const json& c, const char* key) const {
        const std::string where = std::string("/") + key;
        if (!c.contains(key) || !c[key].is_object()) fail(where, "an object with \"values\"", c.contains(key) ? kind_of(c[key]) : "nothing");
        const json& a = c[key];
        curve_axis out;
        out.quantity = a.value("quantity", "");
        out.unit = a.value("unit", "");
        if (!a.contains("values")) fail(where + "/values", "an array of numbers", "nothing");
        out.values = numbers(a["values"], where + "/values");
        return out;
    }

    /// The 95% band of y, when the curve has one: both ends or neither, one per point.
    void band(const json& c, curve_series& out) const {
        const json& y = c["y"];
        const bool low = y.contains("ci95_low") && !y["ci95_low"].is_null();
        const bool high = y.contains("ci95_high") && !y["ci95_high"].is_null();
        if (low != high) fail("/y", "both ci95_low and ci95_high or neither", low ? "only ci95_low" : "only ci95_high");
        if (!low) return;
        out.y_low = numbers(y["ci95_low"], "/y/ci95_low");
        out.y_high = numbers(y["ci95_high"], "/y/ci95_high");
        same_length(out.y_low.size(), out.x.values.size(), "/y/ci95_low");
        same_length(out.y_high.size(), out.x.values.size(), "/y/ci95_high");
    }

    void same_length(std::size_t n, std::size_t wanted, const std::string& where) const {
        if (n != wanted) fail(where, std::to_string(wanted) + " values (one per x value)", std::to_string(n));
    }

    std::optional<curve_fit> fit(const json& c) const {
        if (!c.contains("fit") || c["fit"].is_null()) return std::nullopt;
        const json& f = c["fit"];
        if (!f.is_object()) fail("/fit", "an object or null", kind_of(f));
        const std::string form = f.value("form", "polynomial");
        if (form != "polynomial") fail("/fit/form", "\"polynomial\"", "\"" + form + "\"");
        curve_fit out;
        if (!f.contains("coefficients")) fail("/fit/coefficients", "an array of numbers", "nothing");
        out.coefficients = numbers(f["coefficients"], "/fit/coefficients");
        if (out.coefficients.empty()) fail("/fit/coefficients", "at least one coefficient", "none");
        if (!f.contains("x_range")) fail("/fit/x_range", "[low, high]", "nothing");
        const auto range = numbers(f["x_range"], "/fit/x_range");
        if (range.size() != 2) fail("/fit/x_range", "[low, high]", std::to_string(range.size()) + " values");
        out.x_range = {range[0], range[1]};
        return out;
    }

private:
    std::string file_;
    std::string base_;
};
}  // namespace

double number_or_nan(const json& object, const char* key) {
    if (!object.is_object() || !object.contains(key) || !object[key].is_number()) return nan;
    return object[key].get<double>();
}

std::vector<std::string> estimator_names(const json& record) {
    std::vector<std::string> names;
    if (!record.is_object() || !record.contains("info_bits") || !record["info_bits"].is_object()) return names;
    for (const auto& [name, value]: record["info_bits"].items()) names.push_back(name);
    return names;
}

std::vector<curve_series> read_curves(const json& result, const std::string& file) {
    std::vector<curve_series> curves;
    const json& all = result["curves"];
    if (!all.is_array()) throw input_error(file, "/curves", "an array of curves", kind_of(all));
    for (std::size_t i = 0; i < all.size(); ++i) {
        const json& c = all[i];
        const curve_reader read(file, i);
        if (!c.is_object()) read.fail("", "an object", kind_of(c));
        curve_series out;
        out.curve = read.text(c, "curve");
        if (!known_curves().count(out.curve)) continue;
        out.unit = read.text(c, "unit");
        out.series = read.text(c, "series");
        out.stimulus = read.optional_text(c, "stimulus");
        out.bin_ms = read.optional_number(c, "bin_ms");
        if (const auto letters = read.optional_number(c, "letters")) out.letters = static_cast<int>(std::lround(*letters));
        if (c.contains("window_ms") && !c["window_ms"].is_null()) {
            const auto w = read.numbers(c["window_ms"], "/window_ms");
            if (w.size() != 2) read.fail("/window_ms", "[start, stop]", std::to_string(w.size()) + " values");
            out.window_ms = std::make_pair(w[0], w[1]);
        }
        out.x = read.axis(c, "x");
        out.y = read.axis(c, "y");
        read.same_length(out.y.values.size(), out.x.values.size(), "/y/values");
        read.band(c, out);
        if (c.contains("in_fit") && !c["in_fit"].is_null()) {
            if (!c["in_fit"].is_array()) read.fail("/in_fit", "an array of true/false", kind_of(c["in_fit"]));
            for (std::size_t k = 0; k < c["in_fit"].size(); ++k) {
                if (!c["in_fit"][k].is_boolean()) read.fail("/in_fit/" + std::to_string(k), "true or false", kind_of(c["in_fit"][k]));
                out.in_fit.push_back(c["in_fit"][k].get<bool>());
            }
            read.same_length(out.in_fit.size(), out.x.values.size(), "/in_fit");
        }
        out.fit = read.fit(c);
        curves.push_back(std::move(out));
    }
    return curves;
}

result_document read_result_file(const std::string& path) {
    const std::string expected = "a result file of rastrum direct or rastrum stiminfo (written with --json)";
    std::error_code ec;
    if (!std::filesystem::exists(path, ec)) throw input_error(path, "", expected, "no such file");
    if (std::filesystem::is_directory(path, ec)) throw input_error(path, "", expected, "a folder");
    std::ifstream in(path, std::ios::binary);
    if (!in) throw input_error(path, "", expected, "a file that cannot be opened");
    std::ostringstream bytes;
    bytes << in.rdbuf();
    result_document doc;
    doc.path = path;
    try {
        doc.content = json::parse(bytes.str());
    } catch (const json::parse_error& e) {
        throw input_error(path, "byte " + std::to_string(e.byte), "JSON", "text that is not JSON");
    }
    const json& c = doc.content;
    if (!c.is_object()) throw input_error(path, "", expected, "JSON that is " + kind_of(c));
    if (!c.contains("tool") || c["tool"] != "rastrum") {
        throw input_error(path, "/tool", "\"rastrum\" (" + expected + ")", c.contains("tool") ? c["tool"].dump() : "no \"tool\" key");
    }
    const json analysis = c.value("analysis", json());
    if (analysis != "direct" && analysis != "stiminfo") {
        throw input_error(path, "/analysis", "\"direct\" or \"stiminfo\"",
                          analysis.is_null() ? std::string("no \"analysis\" key") : analysis.dump());
    }
    doc.analysis = analysis.get<std::string>();
    if (!c.contains("records") || !c["records"].is_array()) {
        throw input_error(path, "/records", "an array of records", c.contains("records") ? kind_of(c["records"]) : "nothing");
    }
    for (std::size_t i = 0; i < c["records"].size(); ++i) {
        const json& r = c["records"][i];
        if (!r.is_object() || !r.contains("unit") || !r["unit"].is_string()) {
            throw input_error(path, "/records/" + std::to_string(i) + "/unit", "the unit's id as text",
                              r.is_object() && r.contains("unit") ? kind_of(r["unit"]) : "nothing");
        }
    }
    if (c.contains("curves")) {
        doc.curves = read_curves(c, path);
    } else {
        doc.curves = curves_from_records(c, doc.analysis);
        doc.curves_from_records = true;
    }
    return doc;
}

}  // namespace rastrum
