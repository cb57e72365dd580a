// Joint, conditional and mutual information of tables: a published worked example and the
// identities any correct implementation satisfies.
#include <rastrum/errors.hpp>
#include <rastrum/information.hpp>
#include <rastrum/random.hpp>

#include <gtest/gtest.h>

using namespace rastrum;

// Cover & Thomas, Elements of Information Theory, 2nd ed. (2006), Example 2.2.1: the joint
// distribution p(x, y) below (rows y = 1..4, columns x = 1..4) has H(X) = 7/4, H(Y) = 2,
// H(X|Y) = 11/8, H(Y|X) = 13/8, H(X,Y) = 27/8 and I(X;Y) = 3/8 bits (Example 2.3.1 gives I).
TEST(information, cover_thomas_example_2_2_1) {
    Eigen::ArrayXXd by_y(4, 4);
    by_y << 1. / 8, 1. / 16, 1. / 32, 1. / 32,
            1. / 16, 1. / 8, 1. / 32, 1. / 32,
            1. / 16, 1. / 16, 1. / 16, 1. / 16,
            1. / 4, 0, 0, 0;
    const Eigen::ArrayXXd joint = by_y.transpose();  // rows index X
    const auto r = information_of_table(joint);
    EXPECT_NEAR(r.x_entropy, 7. / 4, 1e-14);
    EXPECT_NEAR(r.y_entropy, 2.0, 1e-14);
    EXPECT_NEAR(r.x_given_y_entropy, 11. / 8, 1e-14);
    EXPECT_NEAR(r.y_given_x_entropy, 13. / 8, 1e-14);
    EXPECT_NEAR(r.joint_entropy, 27. / 8, 1e-14);
    EXPECT_NEAR(r.mutual_information, 3. / 8, 1e-14);
    // Counts in place of probabilities give the same plug-in values.
    const auto c = information_of_table(joint * 32);
    EXPECT_NEAR(c.mutual_information, 3. / 8, 1e-14);
}

namespace {
Eigen::ArrayXXd random_table(random_stream& rng, Eigen::Index rows, Eigen::Index cols) {
    Eigen::ArrayXXd t(rows, cols);
    for (Eigen::Index i = 0; i < rows; ++i) {
        for (Eigen::Index j = 0; j < cols; ++j) t(i, j) = rng.uniform() < 0.2 ? 0.0 : rng.uniform();
    }
    t(0, 0) += 0.1;
    return t;
}
}  // namespace

// Identities that are common practice (Cover & Thomas 2006, Theorems 2.2.1, 2.4.1, 2.6.3-2.6.6; theorem numbers from memory):
// chain rule, subadditivity, conditioning reduces entropy, and I = H(X) - H(X|Y) >= 0.
TEST(information, identities_on_random_tables) {
    random_stream rng(11);
    for (int rep = 0; rep < 200; ++rep) {
        const auto t = random_table(rng, 1 + static_cast<Eigen::Index>(rng.below(7)), 1 + static_cast<Eigen::Index>(rng.below(7)));
        const auto r = information_of_table(t);
        EXPECT_NEAR(r.joint_entropy, r.x_entropy + r.y_given_x_entropy, 1e-12);
        EXPECT_LE(r.joint_entropy, r.x_entropy + r.y_entropy + 1e-12);
        EXPECT_LE(r.x_given_y_entropy, r.x_entropy + 1e-12);
        EXPECT_NEAR(r.mutual_information, r.x_entropy - r.x_given_y_entropy, 1e-12);
        EXPECT_NEAR(r.mutual_information, r.y_entropy - r.y_given_x_entropy, 1e-12);
        EXPECT_GE(r.mutual_information, -1e-12);
    }
}

// Y a function of X gives H(Y|X) = 0 and I = H(Y); independent X and Y (an outer product) give
// I = 0 and H(X,Y) = H(X) + H(Y) (Cover & Thomas 2006, Problem 2.5 and Theorem 2.6.6; numbers from memory).
TEST(information, deterministic_and_independent_tables) {
    random_stream rng(5);
    Eigen::ArrayXXd deterministic = Eigen::ArrayXXd::Zero(6, 3);
    for (Eigen::Index x = 0; x < 6; ++x) deterministic(x, x % 3) = 0.1 + rng.uniform();
    const auto d = information_of_table(deterministic);
    EXPECT_NEAR(d.y_given_x_entropy, 0.0, 1e-12);
    EXPECT_NEAR(d.mutual_information, d.y_entropy, 1e-12);

    Eigen::ArrayXd px(5), py(4);
    for (auto& v: px) v = 0.1 + rng.uniform();
    for (auto& v: py) v = 0.1 + rng.uniform();
    const Eigen::ArrayXXd independent = (px.matrix() * py.matrix().transpose()).array();
    const auto i = information_of_table(independent);
    EXPECT_NEAR(i.mutual_information, 0.0, 1e-12);
    EXPECT_NEAR(i.joint_entropy, i.x_entropy + i.y_entropy, 1e-12);
}

TEST(information, rejects_negative_entries) {
    Eigen::ArrayXXd t(1, 2);
    t << 0.5, -0.1;
    EXPECT_THROW(information_of_table(t), usage_error);
}
