#include "analysis_memory.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/memory_bound.hpp>
#include <rastrum/trial_partition.hpp>

#include <algorithm>
#include <cmath>

namespace rastrum {

namespace {

// Measured on Debian 12 x86-64 (peak resident size against the request, notes/robustness.md),
// rounded up. Per spike of a unit held: its times as read and aligned to trials (8 bytes each),
// and for stiminfo the copy inside the window.
constexpr double per_spike_held = 16, per_trial_held = 64;
// direct: letters are 4 bytes per bin and trial (a rotated copy as much again); a word that holds a
// spike is 16 bytes in each of the lists sparse_words keeps (by position, pooled, the next length's,
// the fresh ones, the sort's scratch): measured 60-65 bytes per word, taken as 80; each bin position
// keeps offsets into them and per-position values: measured about 70 bytes, taken as 80.
constexpr double per_letter = 4, per_spiky_word = 80, per_position = 80;
// direct: one result (unit and bin width) in memory and in its JSON, CSV and HDF5 renderings:
// about 20 KiB per word length (every estimate and its curves against 1/N) and a little more.
constexpr double per_direct_result = 8 * 1024, per_direct_word_length = 24 * 1024;
// stiminfo: codes, labelled copies, histograms and the jackknife's maps per trial and response held.
constexpr double per_trial_response = 512;
// stiminfo: one record in memory and in its renderings (measured: 42 KiB with every estimator).
constexpr double per_stiminfo_record = 48 * 1024;
// One joint response of the independent-units information: a map node holding the responses of M
// units and its probability, in about three maps at once.
constexpr double per_joint_response = 3 * 96, per_joint_member = 3 * 8;

/// A count as people read it, also when it is beyond any double.
std::string count_text(double n) { return std::isfinite(n) ? format_number(n) : "more than 1e+308"; }

std::string ms_text(seconds s) { return format_number(s * 1000) + " ms"; }

/// "1 unit", "3 units".
std::string counted(std::size_t n, const std::string& thing) {
    return std::to_string(n) + " " + thing + (n == 1 ? "" : "s");
}

/// Bytes of the two subset tallies of the direct method (subset_tally.hpp): a table of counts up to
/// 4096 (pooled words) or the trial count (words at one position) per subset, and lanes per trial.
double subset_tallies(double trials, double splits) {
    return 4 * (4097 + trials + 3) * nested_subsets * splits + 12 * trials * splits;
}

/// The part of an estimate that dominates it, and what the user can do about it.
struct memory_part {
    double bytes = 0;
    std::string request;
    std::string advice;
};

/// Checks threads x the largest task and the results together; returns their total.
double require(double threads, const memory_part& task, const memory_part& results, std::uint64_t max_memory) {
    const double total = task.bytes * threads + results.bytes;
    const memory_part& larger = task.bytes * threads >= results.bytes ? task : results;
    require_memory(total, max_memory, larger.request, larger.advice);
    return total;
}

}  // namespace

void check_direct_memory(const recording& rec, const direct_request& q, const std::vector<std::size_t>& units,
                         std::size_t trials, seconds duration) {
    const double t = static_cast<double>(trials);
    const double narrowest_ms = *std::min_element(q.bin_ms.begin(), q.bin_ms.end());
    const double bins = duration / (narrowest_ms / 1000), cells = bins * t;
    const std::string request = rec.source + ": --bin-ms " + format_number(narrowest_ms) + " with " + std::to_string(trials) +
                                " trials of " + format_number(duration) + " s makes " + count_text(cells) +
                                " bins (trials x bins per trial)";
    // The words of one length are numbered with 32 bits (sparse_words.hpp).
    if (!(cells < 4294967295.0)) {
        throw insufficient_data(request + ", beyond the 2^32 words per word length the counting can hold; use a "
                                "wider bin or fewer trials");
    }
    double spikes = 0;
    for (const std::size_t u: units) spikes = std::max(spikes, static_cast<double>(rec.spike_count(u)));
    const double letters = static_cast<double>(q.settings.letters_max);
    const double task = per_letter * cells * (q.null_rotations > 0 ? 2 : 1) + per_position * bins +
                        per_spiky_word * std::min(spikes * letters, cells) + per_spike_held * spikes +
                        per_trial_held * t + subset_tallies(t, q.settings.splits);
    // The calibration's surrogates (direct_calibration.cpp): each holds its own letters (8 bytes a
    // spike), words and tallies, and the model two letter distributions per bin; its enumeration of
    // pooled words at most 2^14 doubles twice. An uncertain record's surrogates of 4 times the
    // trials are drawn one at a time into the first surrogate's buffers: about 4 surrogates' worth.
    const double surrogates = q.settings.surrogates;
    const double calibration = surrogates == 0 ? 0
                                               : std::max(surrogates, 4.0) * (8 * spikes + per_position * bins +
                                                               per_spiky_word * std::min(spikes * letters, cells) +
                                                               subset_tallies(t, q.settings.splits)) +
                                                     2 * 8 * 8 * bins + 2 * 8 * 16384;
    const double tasks = static_cast<double>(units.size() * q.bin_ms.size());
    const double threads = std::min(tasks, static_cast<double>(effective_threads(q.threads)));
    const double lengths = static_cast<double>(q.settings.letters_max - q.settings.letters_min + 1);
    const std::string fewer = calibration > task ? "fewer --surrogates, " : "";
    const memory_part per_task{task + calibration,
                               request + (surrogates > 0 ? " and " + format_number(surrogates) + " surrogates of it" : "") +
                                   (threads > 1 ? ", held by each of " + format_number(threads) + " threads" : ""),
                               threads > 1 ? "use " + fewer + "a wider bin, fewer trials or fewer --threads"
                                           : "use " + fewer + "a wider bin or fewer trials"};
    const memory_part results{tasks * (per_direct_result + per_direct_word_length * lengths),
                              rec.source + ": " + counted(units.size(), "unit") + " x " + counted(q.bin_ms.size(), "bin width") +
                                  " x " + counted(static_cast<std::size_t>(lengths), "word length") + " (--letters " +
                                  std::to_string(q.settings.letters_min) + "-" + std::to_string(q.settings.letters_max) +
                                  ") of results",
                              "analyse fewer units, bin widths or word lengths at once"};
    require(threads, per_task, results, q.max_memory);
}

namespace {

/// The windows the code is read across: --slide-ms's width, or --window-ms.
seconds coded_width(const stiminfo_request& q) {
    return q.slide ? q.slide->first : q.response.window_stop - q.response.window_start;
}

std::string window_text(const stiminfo_request& q) {
    const auto& r = q.response;
    return "--window-ms " + format_number(r.window_start * 1000) + ":" + format_number(r.window_stop * 1000);
}

/// What the code is read across, in the options' terms.
std::string coded_text(const stiminfo_request& q) {
    return q.slide ? "windows of " + ms_text(q.slide->first) + " (--slide-ms)" : window_text(q);
}


}  // namespace

void check_stiminfo_size(const stiminfo_request& q) {
    const auto& r = q.response;
    if (r.code == response_code::spike_count || !(r.bin_width > 0)) return;
    const seconds width = coded_width(q);
    const double bins = std::floor(width / r.bin_width + 1e-9);
    const std::string made = "--bin-ms " + format_number(r.bin_width * 1000) + " across " + coded_text(q) + " makes ";
    if (r.code == response_code::word && !(bins <= 64)) {
        throw insufficient_data("--code word: " + made + "words of " + count_text(bins) +
                                " letters, and at most 64 fit in a 64-bit code (binary letters; fewer with spike "
                                "counts): use --bin-ms " + format_number(width / 64 * 1000) +
                                " or wider, a shorter window, or --code count or latency");
    }
    constexpr double countable = 9007199254740992.0;  // 2^53: bins beyond it cannot be numbered exactly
    if (r.code == response_code::latency && !(bins < countable)) {
        throw insufficient_data("--code latency: " + made + count_text(bins) +
                                " bins, more than the 2^53 that can be numbered exactly: use --bin-ms " +
                                format_number(width / countable * 1000 * 2) + " or wider");
    }
}

double stiminfo_window_count(const stiminfo_request& q) {
    if (!q.slide) return 1;
    const seconds span = q.response.window_stop - q.response.window_start;
    const auto [width, step] = *q.slide;
    if (width > span + 1e-12) return 0;
    return std::floor((span - width + 1e-12) / step) + 1;
}

std::size_t check_stiminfo_memory(const recording& rec, const stiminfo_request& q,
                           const std::vector<std::vector<std::size_t>>& groups,
                           const std::vector<std::size_t>& per_condition, double windows) {
    double trials = 0;
    for (const std::size_t n: per_condition) trials += static_cast<double>(n);
    const double letters = q.response.code == response_code::word
                               ? std::floor(coded_width(q) / q.response.bin_width + 1e-9)
                               : 0;
    double task = 0, most_members = 1;
    memory_part largest_task;
    for (const auto& g: groups) {
        const double members = static_cast<double>(g.size());
        most_members = std::max(most_members, members);
        // The values of the label-shuffle null and of the bootstrap (a population keeps five per resample).
        const double resamples = 8.0 * (q.null_shuffles + q.bootstrap) + (g.size() > 1 ? 40.0 * q.bootstrap : 0);
        double responses = per_letter * letters * trials + per_trial_response * trials * (members + 1);
        // The calibration (stiminfo_calibration.cpp) holds one surrogate at a time, of up to 4x the
        // trials, and 8 bytes per surrogate and estimator.
        if (q.surrogates > 0) responses += per_trial_response * 4 * trials + 8.0 * 3 * q.surrogates * info_estimator_count;
        for (const std::size_t u: g) responses += per_spike_held * static_cast<double>(rec.spike_count(u)) + per_trial_held * trials;
        if (resamples + responses <= task) continue;
        task = resamples + responses;
        largest_task.request =
            rec.source + ": " +
            (resamples > responses ? "--null-shuffles " + std::to_string(q.null_shuffles) + " and --bootstrap " +
                                         std::to_string(q.bootstrap) + " values"
                                   : std::to_string(static_cast<std::size_t>(trials)) + " trials of " + counted(g.size(), "unit"));
        largest_task.advice = resamples > responses ? "use fewer --null-shuffles or --bootstrap" : "use fewer trials or units";
    }
    const double tasks = static_cast<double>(groups.size()) * windows;
    const double threads = std::min(tasks, static_cast<double>(effective_threads(q.threads)));
    largest_task.bytes = task;
    if (threads > 1) largest_task.request += ", held by each of " + format_number(threads) + " threads";
    if (threads > 1) largest_task.advice += ", or fewer --threads";
    memory_part results{tasks * per_stiminfo_record, "", "use fewer units or windows"};
    const std::string groups_text = q.populations.empty() ? counted(groups.size(), "unit")
                                                          : std::to_string(groups.size()) + " units and populations";
    results.request = rec.source + ": " + (q.slide ? "--slide-ms " + format_number(q.slide->first * 1000) + ":" +
                                    format_number(q.slide->second * 1000) + " across " + window_text(q) + " makes " +
                                    count_text(windows) + " windows x " + groups_text + " = " + count_text(tasks) + " records"
                              : groups_text);
    if (q.slide) results.advice = "use a larger --slide-ms step, a shorter --window-ms or fewer units";
    const double total = require(threads, largest_task, results, q.max_memory);
    const double spare = (static_cast<double>(memory_bound_of(q.max_memory)) - total) / threads;
    const double joint = std::floor(spare / (per_joint_response + per_joint_member * most_members));
    return static_cast<std::size_t>(std::max(0.0, std::min(joint, static_cast<double>(independent_joint_limit))));
}

}  // namespace rastrum
