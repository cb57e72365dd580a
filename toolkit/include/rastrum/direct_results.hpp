#pragma once
/// How direct-method results leave the tool: stable JSON for scripts (keys are added, never
/// renamed), tidy CSV (one row per unit, bin width and word length) and a table for people.
#include <rastrum/direct_analysis.hpp>
#include <rastrum/provenance.hpp>

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

namespace rastrum {

nlohmann::ordered_json direct_parameters_json(const direct_request& request);
/// The result without its `curves` (curves_json of direct_curves gives them).
nlohmann::ordered_json direct_json(const std::vector<direct_record>& records, const direct_request& request,
                                   const provenance& origin);
std::string direct_csv(const std::vector<direct_record>& records);
/// The readable summary: one block per unit with rates, interval, bits per spike and warnings.
std::string direct_table(const std::vector<direct_record>& records, const direct_request& request);

}  // namespace rastrum
