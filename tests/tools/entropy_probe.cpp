// Reads joint count tables from stdin and prints what rastrum's estimators make of them, one JSON
// object per table, for the reference checks against scipy and scikit-learn
// (tests/reference/check_estimators.py). Input per table: "ROWS COLS" then ROWS*COLS counts.
#include <rastrum/entropy.hpp>
#include <rastrum/information.hpp>

#include <nlohmann/json.hpp>

#include <iostream>
#include <vector>

int main() {
    using namespace rastrum;
    Eigen::Index rows = 0, cols = 0;
    while (std::cin >> rows >> cols) {
        Eigen::ArrayXXd table(rows, cols);
        std::vector<count> flat;
        for (Eigen::Index i = 0; i < rows; ++i) {
            for (Eigen::Index j = 0; j < cols; ++j) {
                count c = 0;
                std::cin >> c;
                table(i, j) = static_cast<double>(c);
                flat.push_back(c);
            }
        }
        const auto info = information_of_table(table);
        const auto summary = summarize_counts(flat);
        nlohmann::json out = {{"x_entropy_bits", info.x_entropy},
                              {"y_entropy_bits", info.y_entropy},
                              {"joint_entropy_bits", info.joint_entropy},
                              {"mutual_information_bits", info.mutual_information},
                              {"joint_plugin_from_counts_bits", plugin_entropy(summary)},
                              {"joint_miller_madow_bits", miller_madow_entropy(summary)},
                              {"samples", summary.samples},
                              {"distinct", summary.distinct}};
        std::cout << out.dump() << "\n";
    }
    return 0;
}
