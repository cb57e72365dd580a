#include "analysis_memory.hpp"
#include "ranked_trials.hpp"

#include <rastrum/aligned_units.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/binning.hpp>
#include <rastrum/format.hpp>
#include <rastrum/memory_bound.hpp>
#include <rastrum/parallel.hpp>
#include <rastrum/random.hpp>
#include <rastrum/stiminfo_analysis.hpp>

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <map>
#include <set>

namespace rastrum {

void check_stiminfo_request(const stiminfo_request& q) {
    const auto& r = q.response;
    if (!(r.window_start >= 0) || !(r.window_stop > r.window_start)) {
        throw usage_error("--window-ms A:B needs 0 <= A < B, got " + format_number(r.window_start * 1000) + ":" +
                          format_number(r.window_stop * 1000));
    }
    if (r.code != response_code::spike_count && !(r.bin_width > 0)) throw usage_error("--bin-ms must be positive");
    if (q.slide && (!(q.slide->first > 0) || !(q.slide->second > 0))) {
        throw usage_error("--slide-ms W:S needs a positive width and step, got " + format_number(q.slide->first * 1000) +
                          ":" + format_number(q.slide->second * 1000));
    }
    const seconds coded = q.slide ? q.slide->first : r.window_stop - r.window_start;
    if (r.code != response_code::spike_count && whole_bins(coded, r.bin_width) == 0) {
        throw usage_error("--bin-ms " + format_number(r.bin_width * 1000) + " is wider than " +
                          (q.slide ? "the --slide-ms windows of " + format_number(coded * 1000) + " ms"
                                   : "--window-ms " + format_number(r.window_start * 1000) + ":" +
                                         format_number(r.window_stop * 1000)));
    }
    if (q.estimators.empty()) throw usage_error("--estimators: name at least one");
    if (q.settings.splits < 1) throw usage_error("--splits must be at least 1");
    if (q.surrogates == 1) throw usage_error("--surrogates: 0 (no calibration) or at least 2, got 1");
}

namespace {

/// The windows, `count` of them (stiminfo_window_count, already checked against the memory bound).
std::vector<std::pair<seconds, seconds>> windows_of(const stiminfo_request& q, double count) {
    const seconds a = q.response.window_start, b = q.response.window_stop;
    if (!q.slide) return {{a, b}};
    const auto [width, step] = *q.slide;
    std::vector<std::pair<seconds, seconds>> w;
    // Each start from its index, not by adding steps: a step below the resolution of the start
    // would otherwise never advance.
    for (std::size_t i = 0; static_cast<double>(i) < count; ++i) {
        const seconds t = a + static_cast<double>(i) * step;
        w.emplace_back(t, t + width);
    }
    return w;
}

/// Trials resampled with replacement within each condition, the same draw for every unit.
std::vector<labelled_responses> resample_within_conditions(const std::vector<labelled_responses>& units,
                                                           const std::vector<std::vector<std::size_t>>& members,
                                                           random_stream& rng) {
    std::vector<labelled_responses> out = units;
    std::size_t i = 0;
    for (const auto& m: members) {
        for (std::size_t j = 0; j < m.size(); ++j, ++i) {
            const std::size_t k = m[static_cast<std::size_t>(rng.below(m.size()))];
            for (std::size_t u = 0; u < units.size(); ++u) {
                out[u].condition[i] = units[u].condition[k];
                out[u].response[i] = units[u].response[k];
            }
        }
    }
    return out;
}

std::vector<std::vector<std::size_t>> trials_by_condition(const labelled_responses& t) {
    std::vector<std::vector<std::size_t>> members(t.conditions);
    for (std::size_t k = 0; k < t.condition.size(); ++k) members[t.condition[k]].push_back(k);
    return members;
}

const std::array<double population_values::*, 5> population_fields{
    &population_values::joint, &population_values::sum_single, &population_values::synergy,
    &population_values::independent, &population_values::shuffle_corrected};

/// The estimators whose values bound the interval: every bias-corrected one asked for, and the one the
/// interval is centred on (even when that is plug-in).
std::vector<info_estimator> envelope_estimators(const std::vector<info_estimator>& asked, info_estimator centre) {
    std::vector<info_estimator> out{centre};
    for (info_estimator e: asked) {
        if (e != info_estimator::plugin && e != centre) out.push_back(e);
    }
    return out;
}

double standard_deviation(const std::vector<double>& values) {
    double mean = 0, ss = 0;
    for (double v: values) mean += v / static_cast<double>(values.size());
    for (double v: values) ss += (v - mean) * (v - mean);
    return std::sqrt(ss / static_cast<double>(values.size() - 1));
}

/// The splits of each extrapolation inside a bootstrap resample of a population (the estimate itself
/// keeps settings.splits). Fewer splits make each resample's value noisier, never less so, so the
/// spread can only grow; measured in notes/methods.md, section 8.3.
constexpr unsigned population_bootstrap_splits = 2;
/// The within-condition shuffles inside a bootstrap resample of a population (the estimate itself
/// keeps --within-condition-shuffles): they enter only the shuffle-corrected value, whose spread over
/// resamples they can only widen; measured in notes/methods.md, section 8.3.
constexpr unsigned population_bootstrap_shuffles = 1;

/// `joint_limit`: the joint responses the independent-units information may hold (check_stiminfo_memory).
population_record population_of(const std::vector<labelled_responses>& units, const stiminfo_request& q,
                                const info_settings& settings, std::size_t joint_limit) {
    population_record p;
    p.values = population_information(units, q.population_estimator, settings, q.within_condition_shuffles, joint_limit);
    p.low = p.high = p.values;
    if (q.bootstrap < 2) return p;
    // The same interval as for single units (see run_stiminfo): the envelope of the bias-corrected
    // estimators, widened on each side by 1.96 bootstrap standard deviations of the population estimator.
    for (info_estimator e: envelope_estimators(q.estimators, q.population_estimator)) {
        if (e == q.population_estimator) continue;
        const population_values v =
            population_information_given(units, e, settings, q.within_condition_shuffles, p.values.independent);
        for (auto field: population_fields) {
            p.low.*field = std::min(p.low.*field, v.*field);
            p.high.*field = std::max(p.high.*field, v.*field);
        }
    }
    const auto members = trials_by_condition(units[0]);
    random_stream rng(derive_seed(settings.seed, {0xb0b0ULL}));
    std::vector<population_values> boot;
    info_settings resampled = settings;
    resampled.splits = std::min(settings.splits, population_bootstrap_splits);
    for (unsigned b = 0; b < q.bootstrap; ++b) {
        boot.push_back(population_information(resample_within_conditions(units, members, rng), q.population_estimator,
                                              resampled, std::min(q.within_condition_shuffles, population_bootstrap_shuffles),
                                              joint_limit));
    }
    for (auto field: population_fields) {
        std::vector<double> values;
        for (const auto& v: boot) values.push_back(v.*field);
        const double sd = standard_deviation(values);
        p.low.*field -= 1.96 * sd;
        p.high.*field += 1.96 * sd;
    }
    return p;
}

/// Why a population's independent-units information was refused, with what set its limit.
std::string joint_refusal(const std::string& source, const std::vector<std::string>& units, const stiminfo_request& q,
                          std::size_t joint_limit, const std::string& what) {
    std::string ids;
    for (const auto& id: units) ids += (ids.empty() ? "" : ",") + id;
    std::string out = source + ", --population " + ids + ": " + what;
    if (joint_limit >= independent_joint_limit) return out + "; use a coarser code or fewer units";
    const unsigned threads = effective_threads(q.threads);
    return out + " within --max-memory " + format_bytes(static_cast<double>(memory_bound_of(q.max_memory))) +
           (threads > 1 ? " shared by " + std::to_string(threads) + " threads" : "") +
           "; use a coarser code, fewer units, fewer --threads or a larger --max-memory";
}

/// Highest minus lowest bias-corrected estimate (0 when fewer than two were asked for).
double spread_of_corrected(const std::map<info_estimator, double>& info_bits) {
    double low = INFINITY, high = -INFINITY;
    for (const auto& [e, v]: info_bits) {
        if (e == info_estimator::plugin) continue;
        low = std::min(low, v);
        high = std::max(high, v);
    }
    return high > low ? high - low : 0.0;
}

/// The q-quantile of `values` by linear interpolation between order statistics (common practice:
/// Hyndman & Fan 1996, definition 7).
double quantile(std::vector<double> values, double q) {
    std::sort(values.begin(), values.end());
    const double at = q * static_cast<double>(values.size() - 1);
    const auto below = static_cast<std::size_t>(std::floor(at));
    const std::size_t above = std::min(below + 1, values.size() - 1);
    return values[below] + (at - static_cast<double>(below)) * (values[above] - values[below]);
}

/// Each estimator on growing fractions of the trials, drawn without replacement within each
/// condition (at least two per condition), averaged over `repeats` draws.
void trial_fraction_curve(const labelled_responses& t, const stiminfo_request& q, const info_settings& settings,
                          stiminfo_record& r) {
    if (q.trial_fraction_repeats == 0) return;
    r.trial_fractions = {0.25, 0.5, 0.75, 1.0};
    const auto members = trials_by_condition(t);
    random_stream rng(derive_seed(settings.seed, {0xf4acULL}));
    for (double f: r.trial_fractions) {
        if (f == 1) {  // all trials: the estimates already made
            for (info_estimator e: q.estimators) r.info_by_fraction[e].push_back(r.info_bits.at(e));
            continue;
        }
        std::map<info_estimator, double> sum;
        for (unsigned k = 0; k < q.trial_fraction_repeats; ++k) {
            labelled_responses part;
            part.conditions = t.conditions;
            part.alphabet = t.alphabet;
            for (const auto& m: members) {
                std::vector<std::size_t> order = m;
                shuffle(order, rng);
                const auto keep = std::max<std::size_t>(std::min<std::size_t>(2, m.size()),
                                                        static_cast<std::size_t>(std::lround(f * static_cast<double>(m.size()))));
                for (std::size_t i = 0; i < keep; ++i) {
                    part.condition.push_back(t.condition[order[i]]);
                    part.response.push_back(t.response[order[i]]);
                }
            }
            for (info_estimator e: q.estimators) sum[e] += stimulus_information(part, e, settings);
        }
        for (info_estimator e: q.estimators) r.info_by_fraction[e].push_back(sum[e] / q.trial_fraction_repeats);
    }
}

calibration_request calibration_request_of(const stiminfo_request& q) {
    calibration_request c;
    c.surrogates = c.scaled_surrogates = q.surrogates;
    return c;
}

/// "a", "b" and "c" as "'a', 'b', 'c'", sorted, for messages.
std::string sorted_labels(std::vector<std::string> labels) {
    std::sort(labels.begin(), labels.end());
    std::string out;
    for (const auto& l: labels) out += (out.empty() ? "'" : ", '") + l + "'";
    return out;
}

void refuse_repeats(const std::vector<std::string>& names, const std::string& option) {
    std::set<std::string> seen;
    for (const auto& n: names) {
        if (!seen.insert(n).second) throw usage_error(option + ": '" + n + "' is named twice");
    }
}

}  // namespace

std::vector<stiminfo_record> run_stiminfo(const recording& rec, const stiminfo_request& q) {
    check_stiminfo_request(q);
    check_stiminfo_size(q);
    if (!rec.has_stimulus()) {
        const place labels = rec.labels_place();
        throw input_error(labels.file, labels.object,
                          "a stimulus label for every trial (stimulus information needs labelled conditions)",
                          "no labels" + rec.origin.labels_hint);
    }
    refuse_repeats(q.units, "--unit");
    refuse_repeats(q.stimuli, "--stimuli");
    // Groups: each single unit asked for (every unit when neither units nor populations are given),
    // then each population.
    std::vector<std::vector<std::size_t>> groups;  // indices of units in rec.units
    if (q.units.empty() && q.populations.empty()) {
        for (std::size_t u = 0; u < rec.units.size(); ++u) groups.push_back({u});
    }
    for (const auto& id: q.units) groups.push_back({rec.unit_index(id)});
    // A population's members are analysed alone too, so its synergy can be read against them.
    for (const auto& members: q.populations) {
        if (members.size() < 2) throw usage_error("--population " + members[0] + ": a population needs at least two units");
        refuse_repeats(members, "--population");
        for (const auto& id: members) {
            const std::size_t u = rec.unit_index(id);
            const bool listed = std::any_of(groups.begin(), groups.end(), [&](const auto& g) { return g.size() == 1 && g[0] == u; });
            if (!listed) groups.push_back({u});
        }
    }
    for (const auto& members: q.populations) {
        std::vector<std::size_t> g;
        for (const auto& id: members) g.push_back(rec.unit_index(id));
        groups.push_back(g);
    }
    // Conditions: the chosen labels, each keeping at least two trials.
    // Labels and their trial counts among the selected trials, in order of first appearance.
    const std::vector<std::size_t> selected = select_trials(rec, std::nullopt, q.trials);
    std::vector<std::pair<std::string, std::size_t>> labels;
    for (std::size_t k: selected) {
        auto it = std::find_if(labels.begin(), labels.end(), [&](const auto& l) { return l.first == rec.stimulus[k]; });
        if (it == labels.end()) {
            labels.emplace_back(rec.stimulus[k], 1);
        } else {
            ++it->second;
        }
    }
    if (!q.stimuli.empty()) {
        std::vector<std::pair<std::string, std::size_t>> chosen;
        for (const auto& name: q.stimuli) {
            auto it = std::find_if(labels.begin(), labels.end(), [&](const auto& l) { return l.first == name; });
            if (it == labels.end()) {
                std::vector<std::string> known;
                for (const auto& l: labels) known.push_back(l.first);
                throw usage_error("--stimuli: no trial is labelled '" + name + "'; labels: " + sorted_labels(known));
            }
            chosen.push_back(*it);
        }
        labels = chosen;
    }
    std::vector<std::string> common_warnings;
    std::vector<std::string> kept;
    for (const auto& [label, n]: labels) {
        if (n < 2) {
            common_warnings.push_back("condition '" + label + "' has " + std::to_string(n) + " trial and was left out");
        } else {
            kept.push_back(label);
        }
    }
    if (kept.size() < 2) throw insufficient_data(rec.source + ": fewer than two conditions with at least two trials");
    std::vector<std::size_t> trials;
    std::vector<std::uint32_t> condition;
    for (std::size_t k: selected) {
        const auto it = std::find(kept.begin(), kept.end(), rec.stimulus[k]);
        if (it == kept.end()) continue;
        trials.push_back(k);
        condition.push_back(static_cast<std::uint32_t>(it - kept.begin()));
    }
    seconds shortest = std::numeric_limits<seconds>::infinity();
    for (std::size_t k: trials) shortest = std::min(shortest, rec.trial_stop[k] - rec.trial_start[k]);
    if (q.response.window_stop > shortest + 1e-12) {
        throw insufficient_data(rec.source + ": the window ends at " + format_number(q.response.window_stop * 1000) +
                                " ms but the shortest trial lasts " + format_number(shortest * 1000) + " ms");
    }
    std::vector<std::size_t> per_condition(kept.size(), 0);
    for (std::uint32_t c: condition) ++per_condition[c];
    double stimulus_entropy = 0;
    for (std::size_t n: per_condition) {
        const double p = static_cast<double>(n) / static_cast<double>(trials.size());
        stimulus_entropy -= p * std::log2(p);
    }

    const double window_count = stiminfo_window_count(q);
    if (window_count < 1) {
        throw usage_error("--slide-ms: the sliding window of " + format_number(q.slide->first * 1000) +
                          " ms is wider than --window-ms " + format_number(q.response.window_start * 1000) + ":" +
                          format_number(q.response.window_stop * 1000));
    }
    // Before any unit is read or any record allocated: what the tasks and their results will hold.
    const std::size_t joint_limit = check_stiminfo_memory(rec, q, groups, per_condition, window_count);
    const auto windows = windows_of(q, window_count);
    // Each unit is read when the first task needing it starts and let go after the last one: a
    // single unit's windows are adjacent tasks, and a population holds its members together.
    std::vector<std::size_t> uses(rec.units.size(), 0);
    for (const auto& g: groups) {
        for (const std::size_t u: g) uses[u] += windows.size();
    }
    aligned_units aligned(rec, trials, uses);
    std::vector<stiminfo_record> records(groups.size() * windows.size());
    parallel_for(records.size(), q.threads, [&](std::size_t task) {
        const auto& group = groups[task / windows.size()];
        const std::size_t w = task % windows.size();
        stiminfo_record& r = records[task];
        for (const std::size_t u: group) {
            r.unit += (r.unit.empty() ? "" : "+") + rec.units[u].id;
            r.units.push_back(rec.units[u].id);
        }
        r.window = windows[w];
        r.trials = trials.size();
        for (std::size_t c = 0; c < kept.size(); ++c) r.trials_per_stimulus.emplace_back(kept[c], per_condition[c]);
        r.stimulus_entropy_bits = stimulus_entropy;
        r.warnings = common_warnings;

        response_spec spec = q.response;
        spec.window_start = windows[w].first;
        spec.window_stop = windows[w].second;
        std::vector<labelled_responses> members;
        double spikes = 0;
        for (const std::size_t u: group) {
            const aligned_units::hold unit(aligned, u);
            const trial_responses resp = code_responses(unit.spikes(), spec);
            members.push_back({condition, resp.codes, kept.size(), resp.alphabet});
            for (count c: resp.spikes) spikes += static_cast<double>(c);
        }
        const labelled_responses t = members.size() == 1 ? members[0] : joint_responses(members);
        r.response_alphabet = t.alphabet;
        r.distinct_responses = std::set<word_code>(t.response.begin(), t.response.end()).size();
        r.mean_spikes = spikes / static_cast<double>(trials.size());

        info_settings settings = q.settings;
        settings.seed = derive_seed(q.settings.seed, {text_hash(r.unit), static_cast<std::uint64_t>(w)});
        if (members.size() > 1) {
            try {
                r.population = population_of(members, q, settings, joint_limit);
            } catch (const too_many_joint_responses& e) {
                throw insufficient_data(joint_refusal(rec.source, r.units, q, joint_limit, e.what()));
            }
        }
        for (info_estimator e: q.estimators) r.info_bits[e] = stimulus_information(t, e, settings);
        if (q.surrogates > 0) r.calibration = calibrate_stiminfo(t, r.info_bits, settings, calibration_request_of(q));
        trial_fraction_curve(t, q, settings, r);

        // Label-shuffle null of the plug-in value: its mean is the plug-in bias under no information.
        const double plugin = stimulus_information(t, info_estimator::plugin, settings);
        random_stream rng(derive_seed(settings.seed, {0x5b0ffULL}));
        detail::ranked_trials ranked(t.condition, t.conditions, t.response);  // the plug-in value of each relabelling
        std::vector<std::uint32_t> shuffled = t.condition;
        std::size_t at_least = 0;
        double sum = 0;
        std::vector<double> null_values;
        for (unsigned i = 0; i < q.null_shuffles; ++i) {
            shuffle(shuffled, rng);
            const double v = ranked.plugin_information_relabelled(shuffled);
            null_values.push_back(v);
            sum += v;
            if (v >= plugin - 1e-12) ++at_least;
        }
        r.null_shuffles = q.null_shuffles;
        if (q.null_shuffles > 0) {
            r.null_band = {quantile(null_values, 0.025), quantile(null_values, 0.975)};
            r.null_mean_bits = sum / q.null_shuffles;
            r.null_p_value = (1.0 + static_cast<double>(at_least)) / (1.0 + q.null_shuffles);
            r.null_subtracted_bits = plugin - r.null_mean_bits;
        }

        // The interval spans the envelope of the bias-corrected estimates (and the null-subtracted
        // plug-in value), widened on each side by 1.96 bootstrap standard deviations of the interval
        // estimator. The bootstrap alone is centred on one estimator's bias: with few trials per
        // distinct response that bias exceeds the sampling spread and a spread-only interval is
        // confidently wrong (notes/methods.md, section 8). The bootstrap is used for the spread only:
        // resampling duplicates trials, and duplicates look like reliable responses, so the bootstrap
        // values carry a bias of their own that says nothing about the estimator's.
        const double centre = stimulus_information(t, q.interval_estimator, settings);
        double envelope_low = centre, envelope_high = centre;
        for (info_estimator e: envelope_estimators(q.estimators, q.interval_estimator)) {
            const double v = e == q.interval_estimator ? centre : r.info_bits.at(e);
            envelope_low = std::min(envelope_low, v);
            envelope_high = std::max(envelope_high, v);
        }
        if (q.null_shuffles > 0) {
            envelope_low = std::min(envelope_low, r.null_subtracted_bits);
            envelope_high = std::max(envelope_high, r.null_subtracted_bits);
        }
        if (q.bootstrap > 1) {
            const auto by_condition = trials_by_condition(t);
            std::vector<double> values;
            random_stream boot(derive_seed(settings.seed, {0xb007ULL}));
            for (unsigned b = 0; b < q.bootstrap; ++b) {
                values.push_back(stimulus_information(resample_within_conditions({t}, by_condition, boot)[0],
                                                      q.interval_estimator, settings));
            }
            const double sd = standard_deviation(values);
            r.interval = {envelope_low - 1.96 * sd, envelope_high + 1.96 * sd};
        }

        const std::size_t fewest = *std::min_element(per_condition.begin(), per_condition.end());
        r.few_trials = fewest < r.distinct_responses;
        // Calibrated, the few-trials and disagreement cautions give way to the measured error ("uncertain").
        if (r.calibration && r.calibration->uncertain) r.warnings.push_back(uncertain_caution(*r.calibration));
        if (r.few_trials && !r.calibration) {
            const auto c = static_cast<std::size_t>(std::min_element(per_condition.begin(), per_condition.end()) - per_condition.begin());
            const bool all_equal = std::all_of(per_condition.begin(), per_condition.end(), [&](std::size_t n) { return n == fewest; });
            r.warnings.push_back("few trials for this code: " + std::to_string(r.distinct_responses) + " distinct responses, but " +
                                 (all_equal ? std::string("every condition has only ") : "condition '" + kept[c] + "' has only ") +
                                 std::to_string(fewest) + " trials; the estimators disagree by " +
                                 format_fixed(spread_of_corrected(r.info_bits), 3) + " bits and the interval spans them");
        }
        if (q.response.code != response_code::spike_count) {
            const double letters = (r.window.second - r.window.first) / q.response.bin_width;
            if (std::fabs(letters - std::round(letters)) > 1e-6) {
                const double coded = static_cast<double>(whole_bins(r.window.second - r.window.first, q.response.bin_width)) *
                                     q.response.bin_width;
                r.warnings.push_back("the window is not a whole number of " + format_number(q.response.bin_width * 1000) +
                                     " ms bins: spikes in its last " +
                                     format_number((r.window.second - r.window.first - coded) * 1000) + " ms are not coded");
            }
        }
        const auto nsb = r.info_bits.find(info_estimator::nsb);
        if (nsb != r.info_bits.end() && nsb->second < -0.02 &&
            (!r.calibration || r.calibration->recommended == info_estimator::nsb)) {
            r.warnings.push_back("nsb is " + format_fixed(nsb->second, 3) +
                                 " bits, below zero: its prior does not suit these responses; read the other estimators");
        }
        const double spread = spread_of_corrected(r.info_bits);
        if (!r.few_trials && spread > 0.1 && !r.calibration) {
            r.warnings.push_back("the bias-corrected estimators disagree by " + format_fixed(spread, 3) +
                                 " bits; the interval spans them");
        }
        if (q.null_shuffles > 0 && r.null_p_value > 0.05) {
            r.warnings.push_back("not significant against shuffled labels (p = " + format_fixed(r.null_p_value, 3) + ")");
        }
        const bool calibrated = r.calibration && !r.calibration->not_calibrated;
        const double low = calibrated ? r.calibration->interval.first : r.interval.first;  // the headline interval's
        if (q.null_shuffles > 0 && (q.bootstrap > 1 || calibrated) && (r.null_p_value <= 0.05) != (low > 0)) {
            r.warnings.push_back(r.null_p_value <= 0.05
                                     ? "significant against shuffled labels, but the interval reaches 0: the amount is uncertain"
                                     : "the interval excludes 0, but the shuffle test does not reject 0: treat as not shown");
        }
        if (spikes == 0) r.warnings.push_back("no spikes in the window: bits per spike undefined");
    }, q.progress);
    return records;
}

}  // namespace rastrum
