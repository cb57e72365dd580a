#pragma once
// The HTML tables of the report: one row per record, and under each row that carries cautions a
// row that states them, so each caution sits beside the numbers it concerns.
#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace rastrum::report {

/// A caution and the record it belongs to.
struct caution {
    std::size_t record = 0;
    std::string where;  // "u1 at 2 ms", "u1 at 0-100 ms"
    std::string text;
};

/// Every record's cautions, in record order.
std::vector<caution> cautions_of(const nlohmann::ordered_json& result);

/// Cautions that every record of a result shares are said once, above its table; the rest under
/// their rows.
struct grouped_cautions {
    std::vector<std::string> shared;
    std::vector<caution> own;
};
grouped_cautions group_cautions(const std::vector<caution>& cautions, std::size_t records);

std::string direct_table(const nlohmann::ordered_json& result, const grouped_cautions& cautions);
/// The records' table, and a second one for populations when there are any.
std::string stiminfo_table(const nlohmann::ordered_json& result, const grouped_cautions& cautions);

/// Text for HTML content: escaped.
std::string html(const std::string& text);

}  // namespace rastrum::report
