#pragma once
/// NSB entropy estimator (Nemenman, Shafee & Bialek 2002): the posterior mean and standard
/// deviation of the entropy under a mixture of symmetric Dirichlet priors chosen to be nearly flat in
/// the entropy, for a histogram over an alphabet of known size.
#include <rastrum/types.hpp>

#include <vector>

namespace rastrum {

struct nsb_estimate {
    double entropy_bits = 0;  // posterior mean of H
    double sd_bits = 0;       // posterior standard deviation of H
};

/// `counts`: the non-zero (or any) counts of observed symbols; `alphabet_size` K >= number of entries
/// (symbols never seen count as zeros). Throws usage_error when K < 1 or K is smaller than the number
/// of non-zero counts (and when K is above 1e100, where K beta would overflow). With no samples
/// returns the prior mean and sd.
nsb_estimate nsb_entropy(const std::vector<count>& counts, double alphabet_size);

/// The posterior mean alone, in bits: what the information estimators use. The same integral with
/// its accuracy target on the mean only, the variance's terms (about a third of the work) skipped:
/// nsb_entropy's entropy_bits within its accuracy (1e-9 of the value). Same contract otherwise.
double nsb_entropy_mean(const std::vector<count>& counts, double alphabet_size);

}  // namespace rastrum
