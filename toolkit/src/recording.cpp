#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/recording.hpp>

#include <algorithm>
#include <cmath>
#include <unordered_map>
#include <unordered_set>

namespace rastrum {

namespace {

// By default messages name objects by their place in the native layout (notes/recording-layout.md);
// loaders of other formats pass recording_places that name them in the source's own terms.
std::string indexed(const std::string& object, std::size_t index) {
    return object + "[" + std::to_string(index) + "]";
}

// Exact, so that two nearby times are told apart, and short: 7.3, not 7.3000000000000007.
std::string number(double x) { return exact_number(x); }

std::string quoted(const std::string& s) { return "\"" + s + "\""; }

// Lists at most `limit` items so a recording with thousands of labels still gives a readable line.
template <class Item, class Show>
std::string listing(const std::vector<Item>& items, Show show, std::size_t limit = 20) {
    std::string out;
    for (std::size_t i = 0; i < items.size() && i < limit; ++i) {
        if (i > 0) out += ", ";
        out += show(items[i]);
    }
    if (items.size() > limit) out += ", ... (" + std::to_string(items.size() - limit) + " more)";
    return out;
}

input_error at(const place& where, const std::string& expected, const std::string& found) {
    return input_error(where.file, where.object, expected, found);
}

void validate_units(const recording& rec, const recording_places& places) {
    if (rec.units.empty()) throw at(places.units(), "at least one unit", "no units");
    std::unordered_set<std::string> seen;
    for (std::size_t u = 0; u < rec.units.size(); ++u) {
        const auto& unit = rec.units[u];
        if (unit.id.empty()) throw at(places.unit(u), "a non-empty unit id", "an empty id");
        if (!seen.insert(unit.id).second) throw at(places.unit(u), "unit ids that differ", "this id twice");
        const auto& times = unit.spike_times;
        for (std::size_t i = 0; i < times.size(); ++i) {
            if (!std::isfinite(times[i])) throw at(places.spike(u, i), "a finite time in seconds", number(times[i]));
            // align_to_trials binary-searches the spikes, so order is a precondition, not a nicety.
            if (i > 0 && times[i] < times[i - 1]) {
                throw at(places.spike(u, i), "spike times in ascending order (>= " + number(times[i - 1]) + ")",
                         number(times[i]));
            }
        }
    }
}

void validate_trials(const recording& rec, const recording_places& places) {
    const auto& start = rec.trial_start;
    const auto& stop = rec.trial_stop;
    // No start times is the first thing to say: it is why stop times and labels then match nothing.
    if (start.empty()) throw at(places.trial_starts(), "at least one trial", "no trials");
    if (stop.size() != start.size()) {
        throw at(places.trial_stops(),
                 std::to_string(start.size()) + " stop times, one per start time in " + places.trial_starts().object,
                 std::to_string(stop.size()));
    }
    for (std::size_t k = 0; k < start.size(); ++k) {
        if (!std::isfinite(start[k])) throw at(places.trial_start(k), "a finite time in seconds", number(start[k]));
        if (!std::isfinite(stop[k])) throw at(places.trial_stop(k), "a finite time in seconds", number(stop[k]));
        if (!(stop[k] > start[k])) {
            throw at(places.trial_stop(k), "a stop time after the start time " + number(start[k]), number(stop[k]));
        }
    }
    // Trials are trusted in the order given rather than sorted, so a file whose order is wrong is
    // reported: silently reordering would also reorder the labels the user wrote beside them.
    for (std::size_t k = 1; k < start.size(); ++k) {
        if (!(start[k] > start[k - 1])) {
            throw at(places.trial_start(k),
                     "start times in ascending order (> " + number(start[k - 1]) + ", the start of trial " +
                         std::to_string(k - 1) + ")",
                     number(start[k]));
        }
        if (stop[k - 1] > start[k]) {
            throw at(places.trial_stop(k - 1),
                     "trials that do not overlap: stop time <= " + number(start[k]) + ", the start of trial " +
                         std::to_string(k),
                     number(stop[k - 1]));
        }
    }
    if (!rec.stimulus.empty() && rec.stimulus.size() != start.size()) {
        throw at(places.labels(), std::to_string(start.size()) + " labels, one per trial",
                 std::to_string(rec.stimulus.size()) + " labels");
    }
}

// Index range [first, last) of the spikes inside trial k (half-open, like the trial itself).
std::pair<std::size_t, std::size_t> spikes_in_trial(const std::vector<seconds>& spikes, const recording& rec,
                                                    std::size_t k) {
    const auto first = std::lower_bound(spikes.begin(), spikes.end(), rec.trial_start[k]);
    const auto last = std::lower_bound(first, spikes.end(), rec.trial_stop[k]);
    return {static_cast<std::size_t>(first - spikes.begin()), static_cast<std::size_t>(last - spikes.begin())};
}

}  // namespace

std::size_t recording::unit_index(const std::string& id) const {
    for (std::size_t u = 0; u < units.size(); ++u) {
        if (units[u].id == id) return u;
    }
    throw usage_error("no unit " + quoted(id) + " in " + source + "; units present: " +
                      listing(units, [](const unit_spikes& u) { return u.id; }));
}

const unit_spikes& recording::unit(const std::string& id) const {
    if (store) throw internal_error("recording::unit: the spike times of " + source + " are read on demand; use spikes()");
    return units[unit_index(id)];
}

shared_spikes recording::spikes(std::size_t u) const {
    if (u >= units.size()) throw internal_error("recording::spikes: no unit " + std::to_string(u));
    if (store) return std::make_shared<const std::vector<seconds>>(store->read(u));
    // Held in the recording: shared without an owner, valid as long as the recording is.
    return shared_spikes(shared_spikes(), &units[u].spike_times);
}

std::size_t recording::spike_count(std::size_t u) const {
    return store ? store->spike_count(u) : units.at(u).spike_times.size();
}

std::vector<std::string> recording::all_warnings() const {
    std::vector<std::string> all = warnings;
    if (store) {
        for (auto& w: store->warnings()) all.push_back(std::move(w));
    }
    return all;
}

unit_store::unit_store(std::unique_ptr<unit_loader> loader, std::size_t units):
    loader_(std::move(loader)), warnings_(units) {}

std::vector<seconds> unit_store::read(std::size_t u) {
    std::lock_guard<std::mutex> lock(mutex_);
    std::vector<std::string> noticed;
    std::vector<seconds> times = loader_->load(u, noticed);
    if (!warnings_.at(u)) warnings_[u] = std::move(noticed);
    return times;
}

std::vector<std::string> unit_store::warnings() const {
    std::lock_guard<std::mutex> lock(mutex_);
    std::vector<std::string> all;
    for (const auto& w: warnings_) {
        if (w) all.insert(all.end(), w->begin(), w->end());
    }
    return all;
}

bool unit_store::was_read(std::size_t u) const {
    std::lock_guard<std::mutex> lock(mutex_);
    return warnings_.at(u).has_value();
}

void check_unread_units(const recording& rec) {
    if (!rec.store) return;
    for (std::size_t u = 0; u < rec.units.size(); ++u) {
        if (!rec.store->was_read(u)) rec.store->read(u);
    }
}

void read_all_units(recording& rec) {
    if (!rec.store) return;
    for (std::size_t u = 0; u < rec.units.size(); ++u) rec.units[u].spike_times = rec.store->read(u);
    rec.warnings = rec.all_warnings();
    rec.store.reset();
}

place recording_places::units() const { return {rec_.source, "/units"}; }
place recording_places::unit(std::size_t u) const { return {rec_.source, "/units/" + rec_.units[u].id}; }
place recording_places::spike(std::size_t u, std::size_t i) const {
    return {rec_.source, indexed("/units/" + rec_.units[u].id + "/spike_times", i)};
}
place recording_places::trial_starts() const { return {rec_.source, "/trials/start_time"}; }
place recording_places::trial_start(std::size_t k) const { return {rec_.source, indexed("/trials/start_time", k)}; }
place recording_places::trial_stops() const { return {rec_.source, "/trials/stop_time"}; }
place recording_places::trial_stop(std::size_t k) const { return {rec_.source, indexed("/trials/stop_time", k)}; }
place recording_places::labels() const { return rec_.labels_place(); }

void validate(const recording& rec) { validate(rec, recording_places(rec)); }

void validate(const recording& rec, const recording_places& places) {
    validate_units(rec, places);
    validate_trials(rec, places);
}

std::vector<std::vector<seconds>> align_to_trials(const std::vector<seconds>& spikes, const recording& rec,
                                                  const std::vector<std::size_t>& trials) {
    std::vector<std::vector<seconds>> aligned;
    aligned.reserve(trials.size());
    for (const std::size_t k: trials) {
        if (k >= rec.trial_count()) {
            throw internal_error("align_to_trials: trial " + std::to_string(k) + " of " +
                                 std::to_string(rec.trial_count()));
        }
        const auto [first, last] = spikes_in_trial(spikes, rec, k);
        std::vector<seconds> relative;
        relative.reserve(last - first);
        // Rounding is monotone, so the differences stay ascending and t >= start gives t - start >= 0
        // exactly; t - start may round up to equal stop - start for t just below stop.
        for (std::size_t i = first; i < last; ++i) relative.push_back(spikes[i] - rec.trial_start[k]);
        aligned.push_back(std::move(relative));
    }
    return aligned;
}

std::size_t spikes_outside_trials(const std::vector<seconds>& spikes, const recording& rec) {
    // Trials do not overlap, so the spikes inside some trial are the sum over trials.
    std::size_t inside = 0;
    for (std::size_t k = 0; k < rec.trial_count(); ++k) {
        const auto [first, last] = spikes_in_trial(spikes, rec, k);
        inside += last - first;
    }
    return spikes.size() - inside;
}

std::vector<std::size_t> select_trials(const recording& rec, const std::optional<std::string>& stimulus,
                                       const trial_selection& selection) {
    std::vector<bool> allowed(rec.trial_count(), !selection.only);
    auto check = [&](std::size_t k, const char* option) {
        if (k >= rec.trial_count()) {
            throw usage_error(std::string(option) + ": trial " + std::to_string(k) + " does not exist; " + rec.source +
                              " has trials 0-" + std::to_string(rec.trial_count() - 1));
        }
    };
    if (selection.only) {
        for (std::size_t k: *selection.only) {
            check(k, "--trials");
            allowed[k] = true;
        }
    }
    for (std::size_t k: selection.excluded) {
        check(k, "--exclude-trials");
        allowed[k] = false;
    }
    std::vector<std::size_t> chosen;
    if (stimulus && !rec.has_stimulus()) {
        throw usage_error("cannot select trials with stimulus " + quoted(*stimulus) + ": " + rec.source +
                          " has no stimulus labels" +
                          (rec.labels_place().object.empty() ? "" : " (nothing at " + rec.labels_place().object + ")") +
                          rec.origin.labels_hint);
    }
    for (std::size_t k = 0; k < rec.trial_count(); ++k) {
        if (allowed[k] && (!stimulus || rec.stimulus[k] == *stimulus)) chosen.push_back(k);
    }
    if (chosen.empty() && stimulus) {
        throw usage_error("no " + std::string(selection.everything() ? "" : "selected ") + "trial has stimulus " +
                          quoted(*stimulus) + " in " + rec.source + "; labels present: " +
                          listing(stimulus_labels(rec), [](const std::pair<std::string, std::size_t>& l) {
                              return quoted(l.first) + " (" + std::to_string(l.second) + " trials)";
                          }));
    }
    if (chosen.empty()) throw usage_error("--trials and --exclude-trials leave no trial of " + rec.source);
    return chosen;
}

std::vector<std::size_t> parse_trial_list(const std::string& text, const std::string& option) {
    auto whole = [&](const std::string& part) {
        if (part.empty() || part.size() > 18 || part.find_first_not_of("0123456789") != std::string::npos) {
            throw usage_error(option + ": expected trial indices from 0 and ranges like 0-49, comma-separated; got '" +
                              text + "'");
        }
        return static_cast<std::size_t>(std::stoull(part));
    };
    std::vector<std::size_t> out;
    std::size_t start = 0;
    while (start <= text.size()) {
        const auto comma = text.find(',', start);
        const std::string item = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
        const auto dash = item.find('-');
        const std::size_t a = whole(item.substr(0, dash));
        const std::size_t b = dash == std::string::npos ? a : whole(item.substr(dash + 1));
        if (b < a) throw usage_error(option + ": the range " + item + " runs backwards");
        if (b - a > 100000000) throw usage_error(option + ": the range " + item + " is too long");
        for (std::size_t k = a; k <= b; ++k) out.push_back(k);
        if (comma == std::string::npos) break;
        start = comma + 1;
    }
    std::sort(out.begin(), out.end());
    out.erase(std::unique(out.begin(), out.end()), out.end());
    return out;
}

std::vector<std::pair<std::string, std::size_t>> stimulus_labels(const recording& rec) {
    std::vector<std::pair<std::string, std::size_t>> labels;
    std::unordered_map<std::string, std::size_t> position;
    for (const auto& s: rec.stimulus) {
        const auto [it, fresh] = position.emplace(s, labels.size());
        if (fresh) labels.emplace_back(s, 0);
        ++labels[it->second].second;
    }
    return labels;
}

}  // namespace rastrum
