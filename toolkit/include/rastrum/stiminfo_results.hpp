#pragma once
/// How stimulus-information results leave the tool: stable JSON (keys are added, never renamed),
/// tidy CSV (one row per record and estimator) and a table for people.
#include <rastrum/provenance.hpp>
#include <rastrum/stiminfo_analysis.hpp>

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace rastrum {

nlohmann::ordered_json stiminfo_parameters_json(const stiminfo_request& request);
/// The result without its `curves` (curves_json of stiminfo_curves gives them).
nlohmann::ordered_json stiminfo_json(const std::vector<stiminfo_record>& records, const stiminfo_request& request,
                                     const provenance& origin);
std::string stiminfo_csv(const std::vector<stiminfo_record>& records, const stiminfo_request& request);
std::string stiminfo_table(const std::vector<stiminfo_record>& records, const stiminfo_request& request);

}  // namespace rastrum
