#pragma once
/// Synthetic recordings with known answers, for validation and for the demo. Each generator
/// returns the recording and the exact information-theoretic values of the process it sampled.
#include <rastrum/recording.hpp>

#include <cstdint>
#include <functional>
#include <map>
#include <string>
#include <vector>

namespace rastrum {

/// Shared shape of a repeated-stimulus session: `trials` trials of `duration` seconds separated
/// by `gap` seconds, with background firing at `background_hz` in the gaps (outside every trial).
struct session_shape {
    std::size_t trials = 100;
    seconds duration = 8.0;
    seconds gap = 0.5;
    double background_hz = 5.0;
};

/// Independent bins with a frozen spike probability: in bin t of width `bin_ms` each trial fires
/// at most one spike, with probability p_t = min(1, p g_t), p = rate dt, where the gain g_t has a
/// gamma distribution with mean 1 and coefficient of variation m (the modulation), drawn once per
/// bin and unit and frozen across trials. m = 0 is homogeneous firing; m = 1 makes g exponential;
/// larger m makes responses sparser and more reliable. With `refractory` R > 0 the probability
/// right after a spike is p_t (1 - R), so letters form a Markov chain along each trial and the
/// information per word has a 1/L term. The exact answers use the realised p_t.
struct frozen_bins_spec {
    session_shape session;
    double bin_ms = 2.0;
    std::vector<double> rates_hz{20.0};      // one unit per entry
    std::vector<double> modulations{0.8};    // one per unit, or one for all
    double refractory = 0;                   // 0..1
    std::uint64_t seed = 1;
};

/// Inhomogeneous Poisson firing with a frozen rate r(t) = rate (1 + modulation g(t)), clipped at 0,
/// where g is a smooth random signal (Gaussian noise low-passed with time constant
/// `correlation_ms`, scaled to unit variance), the same on every trial; held constant over steps of
/// `resolution_ms`.
struct poisson_spec {
    session_shape session;
    std::vector<double> rates_hz{20.0};
    std::vector<double> modulations{0.8};
    double correlation_ms = 20.0;
    double resolution_ms = 0.1;
    std::uint64_t seed = 1;
};

/// Discrete stimulus conditions: `trials_per_condition` trials of each condition in random
/// order; in each trial a unit fires a Poisson number of spikes with mean means[unit][condition],
/// placed uniformly in [0, duration).
struct conditions_spec {
    session_shape session;  // session.trials is ignored: conditions x trials_per_condition
    std::vector<std::string> labels{"a", "b", "c", "d"};
    std::size_t trials_per_condition = 30;
    std::vector<std::vector<double>> means{{2, 4, 6, 9}};  // one row per unit
    std::uint64_t seed = 1;
};

/// Exact values for one unit. Keys name the quantity with its unit (see notes/methods.md).
struct unit_truth {
    std::string unit;
    std::map<std::string, double> values;                  // e.g. "info_rate_bits_per_s"
    std::map<std::string, std::vector<double>> by_letters; // e.g. "info_bits": index L-1
};

struct synthetic_recording {
    recording rec;
    std::string kind;
    std::vector<unit_truth> truth;
};

/// Told about each unit as soon as its spike times are final (sorted), with the recording so far
/// (trials and labels laid out); it may take rec.units[u].spike_times away (write them and let them
/// go), so that a recording larger than memory can be made one unit at a time. The random draws,
/// and so the recording, are the same with or without it.
using unit_ready = std::function<void(recording& rec, std::size_t u)>;

/// Checks a spec before anything is made (the make_ functions call it first): usage_error naming
/// the option for values out of range, a label named twice (two conditions would be one in the
/// file, and the answers would describe another recording), too few bins for the answers, a
/// session too long for its spike times to resolve the finest time scale (--duration-s 1e308), and
/// one unit's spikes beyond the default memory bound (memory_bound.hpp).
void check_spec(const frozen_bins_spec& spec);
void check_spec(const poisson_spec& spec);
void check_spec(const conditions_spec& spec);

synthetic_recording make_frozen_bins(const frozen_bins_spec& spec, const unit_ready& ready = {});
synthetic_recording make_poisson(const poisson_spec& spec, const unit_ready& ready = {});
synthetic_recording make_conditions(const conditions_spec& spec, const unit_ready& ready = {});

/// Binary entropy -p log2 p - (1-p) log2 (1-p), in bits.
double binary_entropy(double p);

/// Exact I(S;R) in bits for a Poisson count R with mean means[s] under condition s, conditions
/// equally likely, summing the probability mass functions until the tails fall below 1e-16.
double poisson_count_information(const std::vector<double>& means);

/// Information per spike about time carried by a single spike of a process with rate `rate`
/// sampled on a regular grid: (1/T) sum (r/rbar) log2(r/rbar) dt, in bits
/// (Brenner, Strong, Koberle, Bialek & de Ruyter van Steveninck 2000, Neural Comput. 12:1531).
double single_spike_information(const std::vector<double>& rate);

}  // namespace rastrum
