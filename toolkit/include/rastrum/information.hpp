#pragma once
/// Joint, conditional and mutual information of two discrete variables from a joint table of
/// counts or probabilities (rows index X, columns index Y). Plug-in values, in bits.
#include <Eigen/Core>

namespace rastrum {

/// Entropy of a distribution given by non-negative weights (normalised here). 0 for all-zero weights.
double entropy_bits(const Eigen::Ref<const Eigen::ArrayXd>& weights);

struct joint_information {
    double x_entropy = 0;          // H(X)
    double y_entropy = 0;          // H(Y)
    double joint_entropy = 0;      // H(X,Y)
    double x_given_y_entropy = 0;  // H(X|Y) = H(X,Y) - H(Y)
    double y_given_x_entropy = 0;  // H(Y|X) = H(X,Y) - H(X)
    double mutual_information = 0; // I(X;Y) = H(X) + H(Y) - H(X,Y)
};

/// Throws usage_error when the table has a negative or non-finite entry.
joint_information information_of_table(const Eigen::Ref<const Eigen::ArrayXXd>& joint);

}  // namespace rastrum
