#include "analysis_memory.hpp"

#include <rastrum/aligned_units.hpp>
#include <rastrum/direct_analysis.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/parallel.hpp>
#include <rastrum/random.hpp>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <limits>
#include <tuple>

namespace rastrum {

void check_direct_request(const direct_request& request) {
    if (request.bin_ms.empty()) throw usage_error("--bin-ms: give at least one bin width");
    for (double b: request.bin_ms) {
        if (!(b > 0) || !std::isfinite(b)) throw usage_error("--bin-ms: bin widths must be positive, got " + format_number(b));
    }
    check_direct_settings(request.settings);
}

namespace {

std::uint64_t bits_of(double x) {
    std::uint64_t u;
    std::memcpy(&u, &x, sizeof u);
    return u;
}

seconds common_duration(const recording& rec, const std::vector<std::size_t>& trials) {
    seconds d = std::numeric_limits<seconds>::infinity();
    for (std::size_t k: trials) d = std::min(d, rec.trial_stop[k] - rec.trial_start[k]);
    return d;
}

count spikes_before(const std::vector<std::vector<seconds>>& aligned, seconds end) {
    count n = 0;
    for (const auto& trial: aligned) {
        n += static_cast<count>(std::lower_bound(trial.begin(), trial.end(), end) - trial.begin());
    }
    return n;
}

}  // namespace

std::vector<direct_record> run_direct(const recording& rec, const direct_request& request) {
    check_direct_request(request);
    std::vector<std::size_t> units;
    if (request.units.empty()) {
        for (std::size_t u = 0; u < rec.units.size(); ++u) units.push_back(u);
    } else {
        for (const auto& id: request.units) units.push_back(rec.unit_index(id));
    }
    const std::vector<std::size_t> trials = select_trials(rec, request.stimulus, request.trials);
    if (trials.size() < 2) {
        throw insufficient_data(rec.source + ": the direct method needs repeated trials; " + std::to_string(trials.size()) +
                                " selected");
    }
    const seconds duration = common_duration(rec, trials);
    // Before any unit is read or any letter allocated: what the tasks and their results will hold.
    check_direct_memory(rec, request, units, trials.size(), duration);
    std::vector<std::string> pooled_labels;
    if (!request.stimulus && rec.has_stimulus()) {
        for (const auto& [label, n]: stimulus_labels(rec)) pooled_labels.push_back(label);
    }

    const std::size_t n_bins = request.bin_ms.size();
    // Each unit is read when its first bin width starts and let go after its last: tasks of one unit
    // are adjacent, so about one unit per thread is held, not the recording.
    std::vector<std::size_t> uses(rec.units.size(), 0);
    for (const std::size_t u: units) uses[u] += n_bins;
    aligned_units aligned(rec, trials, uses);

    std::vector<direct_record> records(units.size() * n_bins);
    // Each worker keeps its letters and the estimates' buffers from task to task.
    struct kept_per_worker {
        sparse_letters letters;
        direct_workspace workspace;
    };
    std::vector<kept_per_worker> kept(std::min<std::size_t>(effective_threads(request.threads), records.size()));
    parallel_for_workers(records.size(), request.threads, [&](std::size_t task, unsigned worker) {
        sparse_letters& letters = kept[worker].letters;
        direct_workspace& workspace = kept[worker].workspace;
        const std::size_t u = units[task / n_bins];
        const double bin_ms = request.bin_ms[task % n_bins];
        const seconds bin_width = bin_ms / 1000.0;
        direct_record& r = records[task];
        r.unit = rec.units[u].id;
        r.stimulus = request.stimulus;
        r.bin_ms = bin_ms;
        r.trials = trials.size();
        r.trial_duration = duration;
        const std::size_t bins = whole_bins(duration, bin_width);
        const seconds analysed = static_cast<double>(bins) * bin_width;
        count spikes = 0;
        {  // the spike times are needed only until they are letters
            const aligned_units::hold unit(aligned, u);
            bin_spikes_sparse(unit.spikes(), bin_width, bins, request.binary, letters);
            spikes = spikes_before(unit.spikes(), analysed);
        }
        r.mean_rate_hz = static_cast<double>(spikes) / (static_cast<double>(trials.size()) * analysed);

        direct_settings settings = request.settings;
        // Each task's randomness depends only on its own unit and bin width.
        settings.seed = derive_seed(request.settings.seed, {text_hash(r.unit), bits_of(bin_ms)});
        try {
            r.estimate = estimate_direct(letters, bin_width, settings, workspace);
        } catch (const insufficient_data& e) {
            throw insufficient_data(rec.source + ", unit " + r.unit + " at " + format_number(bin_ms) + " ms: " + e.what());
        }
        // Ratios only where their denominators are more than rounding: without a spike the entropy
        // rates are rounding noise (about 1e-12 bits/s from log N - n log n / N of the one word),
        // and a total rate of a unit with spikes is far above this floor (one spike in 40 trials of
        // 2 s at 2 ms: about 0.2 bits/s).
        constexpr double rounding_floor_bits_per_s = 1e-9;
        const double nan = std::numeric_limits<double>::quiet_NaN();
        r.bits_per_spike = spikes > 0 ? r.estimate.info_rate / r.mean_rate_hz : nan;
        r.coding_efficiency = spikes > 0 && r.estimate.total_rate > rounding_floor_bits_per_s
                                  ? r.estimate.info_rate / r.estimate.total_rate
                                  : nan;
        r.warnings = r.estimate.warnings;
        if (request.null_rotations > 0) {
            // The rotated estimates use the real one's fit range, and only those lengths are computed:
            // a rate depends on no other (words still grow from one letter up).
            direct_settings same_lengths = settings;
            same_lengths.fit_letters = r.estimate.fit_letters;
            std::tie(same_lengths.letters_min, same_lengths.letters_max) = r.estimate.fit_letters;
            same_lengths.every_length = false;
            // The null compares like with like: the rotations' plain rates with the record's plain rate.
            same_lengths.surrogates = 0;
            const double observed = r.estimate.calibration ? r.estimate.calibration->plain_info_rate : r.estimate.info_rate;
            r.null = rotation_null_distribution(letters, bin_width, same_lengths, request.null_rotations, observed,
                                                settings.seed, workspace);
            if (r.null.p_value > 0.05) {
                r.warnings.push_back("not distinguishable from trials rotated out of register with the stimulus (p = " +
                                     format_number(r.null.p_value) + ")");
            }
            // The rotated trials' mean estimates the plain estimator's bias under no information. A
            // calibrated rate has had its own bias, at this record's sample size, measured and
            // removed, and its error counts what remains: there the caution would repeat on every
            // record what the interval already says (notes/validation-coverage.md: it fired on 100%
            // of calibrated records whose error was within tolerance), so only plain rates carry it.
            if (!r.estimate.calibration && std::abs(r.null.mean) > r.estimate.info_rate_se) {
                r.warnings.push_back("trials rotated out of register with the stimulus, which carry no information, "
                                     "still show " + format_fixed(r.null.mean, 2) +
                                     " bits/s: a bias of about that size is possible here");
            }
        }
        if (pooled_labels.size() > 1) {
            r.warnings.push_back("trials with " + std::to_string(pooled_labels.size()) +
                                 " different stimulus labels were pooled as one frozen stimulus; choose one with --stimulus");
        }
        if (spikes == 0) r.warnings.push_back("no spikes in the analysed trials: bits per spike undefined");
        else if (spikes < 200) {
            r.warnings.push_back("only " + std::to_string(spikes) + " spikes in the analysed trials: estimates are rough");
        }
        if (request.binary && letters.spikes < spikes) {
            r.warnings.push_back("binary letters dropped " + std::to_string(spikes - letters.spikes) +
                                 " spikes that shared a bin with another");
        }
    }, request.progress);
    return records;
}

}  // namespace rastrum
