#pragma once
/// The pieces of the NSB estimator at one fixed Dirichlet concentration beta, exposed so the tests
/// can check each against Monte Carlo or a closed form. Everything here is in nats.
#include <rastrum/types.hpp>

#include <vector>

namespace rastrum::nsb_detail {

/// Symbols sharing a count contribute identically to every sum, so each distinct count is evaluated
/// once, times its multiplicity; this is what makes alphabets of 2^40 symbols cheap.
struct count_group {
    double value;         // the count n
    double multiplicity;  // how many symbols have it (for n = 0: K minus the symbols seen)
};

struct grouped_counts {
    std::vector<count_group> groups;  // distinct counts, the zero group (if any) included
    double samples = 0;               // N
    double alphabet = 0;              // K
    double seen = 0;                  // symbols with a non-zero count
};

/// Groups `counts` over an alphabet of `alphabet` symbols. Throws usage_error when the alphabet is
/// outside [1, 1e100] or smaller than the number of non-zero counts.
grouped_counts group_counts(const std::vector<count>& counts, double alphabet);

struct entropy_moments {
    double mean = 0;      // E[H | n, beta]
    double variance = 0;  // Var[H | n, beta]
};

/// Posterior mean of H = -sum p_i ln p_i when p ~ Dirichlet(n_i + beta).
double dirichlet_entropy_mean(const grouped_counts& g, double beta);

/// Posterior mean and variance of H = -sum p_i ln p_i when p ~ Dirichlet(n_i + beta).
entropy_moments dirichlet_entropy_moments(const grouped_counts& g, double beta);
entropy_moments dirichlet_entropy_moments(const std::vector<count>& counts, double alphabet, double beta);

/// ln P(n | beta) for one ordered sequence of samples with histogram n (the Dirichlet-multinomial
/// evidence without the multinomial coefficient, which does not depend on beta).
double log_evidence(const grouped_counts& g, double beta);
double log_evidence(const std::vector<count>& counts, double alphabet, double beta);

/// xi(beta) = E[H | no data, beta], the prior mean entropy, and its derivative in beta.
double prior_mean_entropy(double alphabet, double beta);
double prior_mean_entropy_slope(double alphabet, double beta);
/// ln K - xi(beta), accurate where it is tiny (large beta).
double prior_mean_entropy_gap(double alphabet, double beta);

/// lnGamma(z + m) - lnGamma(z) - m ln z, accurate for z up to 1e30 and beyond where the plain
/// difference of lgamma values loses every digit.
double log_rising_excess(double z, double m);

}  // namespace rastrum::nsb_detail
