#include <rastrum/errors.hpp>
#include <rastrum/information.hpp>

#include <cmath>

namespace rastrum {

double entropy_bits(const Eigen::Ref<const Eigen::ArrayXd>& weights) {
    const double total = weights.sum();
    if (!(total > 0)) return 0;
    double h = 0;
    for (Eigen::Index i = 0; i < weights.size(); ++i) {
        const double p = weights[i] / total;
        if (p > 0) h -= p * std::log2(p);
    }
    return h;
}

joint_information information_of_table(const Eigen::Ref<const Eigen::ArrayXXd>& joint) {
    if (!joint.allFinite() || (joint < 0).any()) {
        throw usage_error("a joint table needs finite, non-negative entries");
    }
    joint_information r;
    const Eigen::ArrayXXd table = joint;
    const Eigen::Map<const Eigen::ArrayXd> flat(table.data(), table.size());
    r.joint_entropy = entropy_bits(flat);
    r.x_entropy = entropy_bits(joint.rowwise().sum());
    r.y_entropy = entropy_bits(joint.colwise().sum().transpose());
    r.x_given_y_entropy = r.joint_entropy - r.y_entropy;
    r.y_given_x_entropy = r.joint_entropy - r.x_entropy;
    r.mutual_information = r.x_entropy + r.y_entropy - r.joint_entropy;
    return r;
}

}  // namespace rastrum
