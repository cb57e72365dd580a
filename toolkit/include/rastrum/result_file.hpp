#pragma once
/// Result files read back for figures and the report: the JSON that `rastrum direct` and
/// `rastrum stiminfo` write (--json), checked to be one of them, with its curves read back into the
/// model they were written from (curves.hpp).
#include <rastrum/curves.hpp>

#include <nlohmann/json.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum {

struct result_document {
    std::string path;
    std::string analysis;                       // "direct" or "stiminfo"
    nlohmann::ordered_json content;
    std::vector<curve_series> curves;
    bool curves_from_records = false;           // the file has no "curves": rebuilt from its records
};

/// Reads and checks a result file. Throws input_error naming the file and the offending part when
/// it is missing, not JSON, not written by rastrum direct or stiminfo, or a curve is malformed.
result_document read_result_file(const std::string& path);

/// The "curves" of a parsed result, checked (input_error names `file` and the curve's index).
/// Curves of kinds this version does not know are skipped: results may gain curves.
std::vector<curve_series> read_curves(const nlohmann::ordered_json& result, const std::string& file);

/// What can be drawn from the records alone, for results written before curves existed: direct
/// rates against bin width and entropy rates against 1/L (the 1/L line refitted by least squares
/// over the fitted lengths, as the direct method fits it), and stiminfo time courses.
std::vector<curve_series> curves_from_records(const nlohmann::ordered_json& result, const std::string& analysis);

/// A number of a JSON value, NaN when it is null, absent or not a number.
double number_or_nan(const nlohmann::ordered_json& object, const char* key);

/// The estimators of a stiminfo record, in the order its "info_bits" lists them.
std::vector<std::string> estimator_names(const nlohmann::ordered_json& record);

}  // namespace rastrum
