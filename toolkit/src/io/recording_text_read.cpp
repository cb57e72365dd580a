#include "csv_reader.hpp"
#include "loader_steps.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/recording_text.hpp>

#include <cmath>
#include <unordered_map>

namespace rastrum {

namespace {

std::string column_list(const csv_reader& csv) {
    std::string names;
    for (const auto& h: csv.header()) names += (names.empty() ? "" : ", ") + h;
    return names;
}

std::size_t required_column(const csv_reader& csv, const std::string& name, const std::string& header) {
    const std::size_t c = csv.column(name);
    if (c == std::string::npos) {
        throw input_error(csv.path(), "line " + std::to_string(csv.line()),
                          "a header naming the column " + name + " (" + header + ")", "columns " + column_list(csv));
    }
    return c;
}

double time_field(const csv_reader& csv, const std::vector<std::string>& fields, std::size_t c) {
    double t = 0;
    if (!parse_decimal(fields[c], t)) {
        throw input_error(csv.path(), csv.where(c), "a time in seconds (a decimal number such as 1.25 or 3e-4)",
                          "\"" + fields[c] + "\"");
    }
    if (!std::isfinite(t)) throw input_error(csv.path(), csv.where(c), "a finite time in seconds", fields[c]);
    return t;
}

// Names trials by their rows in the trials CSV; units by the spikes CSV as a whole (a unit's rows
// may be anywhere in it, and its times are checked row by row as they are read).
class text_places: public recording_places {
public:
    text_places(const recording& rec, std::string trials, std::vector<std::size_t> lines):
        recording_places(rec), trials_(std::move(trials)), lines_(std::move(lines)) {}
    place units() const override { return {rec_.source, "rows"}; }
    place unit(std::size_t u) const override { return {rec_.source, "unit " + rec_.units[u].id}; }
    place spike(std::size_t u, std::size_t i) const override {
        return {rec_.source, "unit " + rec_.units[u].id + ", spike " + std::to_string(i)};
    }
    place trial_starts() const override { return {trials_, "column start_s"}; }
    place trial_start(std::size_t k) const override { return {trials_, row(k) + ", start_s"}; }
    place trial_stops() const override { return {trials_, "column stop_s"}; }
    place trial_stop(std::size_t k) const override { return {trials_, row(k) + ", stop_s"}; }

private:
    std::string row(std::size_t k) const { return "line " + std::to_string(lines_[k]); }
    std::string trials_;
    std::vector<std::size_t> lines_;
};

void read_spikes(const std::string& path, recording& rec) {
    csv_reader csv(path);
    const std::string header = "unit,time_s";
    const std::size_t unit_column = required_column(csv, "unit", header);
    const std::size_t time_column = required_column(csv, "time_s", header);
    std::unordered_map<std::string, std::size_t> index;
    std::vector<unit_spikes> units;
    std::vector<std::string> fields;
    while (csv.next(fields)) {
        const std::string& id = fields[unit_column];
        if (id.empty()) throw input_error(path, csv.where(unit_column), "a unit id", "an empty field");
        const auto [it, fresh] = index.emplace(id, units.size());
        if (fresh) units.push_back({id, {}});
        // An empty time declares a unit with no spikes, so such a unit survives a round trip.
        if (!fields[time_column].empty()) units[it->second].spike_times.push_back(time_field(csv, fields, time_column));
    }
    if (units.empty()) throw input_error(path, "", "at least one row (unit,time_s) after the header", "none");
    std::vector<std::string> ids;
    for (const auto& u: units) ids.push_back(u.id);
    for (const std::size_t u: natural_order(ids)) {
        // Times were checked finite row by row, with their lines; this sorts and warns.
        settle_spike_times(units[u].spike_times, units[u].id, [&](std::size_t) { return place{path, "unit " + ids[u]}; },
                           rec.warnings);
        rec.units.push_back(std::move(units[u]));
    }
}

std::vector<std::size_t> read_trials(const std::string& path, const std::optional<std::string>& stimulus_column,
                                     recording& rec) {
    csv_reader csv(path);
    const std::string header = "start_s,stop_s[,stimulus]";
    const std::size_t start_column = required_column(csv, "start_s", header);
    const std::size_t stop_column = required_column(csv, "stop_s", header);
    const std::string label_name = stimulus_column.value_or("stimulus");
    const std::size_t label_column = csv.column(label_name);
    if (stimulus_column && label_column == std::string::npos) {
        throw usage_error("--stimulus-column " + label_name + ": " + path + " has no such column; its columns: " +
                          column_list(csv));
    }
    std::vector<std::size_t> lines;
    std::vector<std::string> fields;
    while (csv.next(fields)) {
        lines.push_back(csv.line());
        rec.trial_start.push_back(time_field(csv, fields, start_column));
        rec.trial_stop.push_back(time_field(csv, fields, stop_column));
        if (label_column != std::string::npos) rec.stimulus.push_back(fields[label_column]);
    }
    rec.origin.trials = {path, "rows"};
    if (label_column != std::string::npos) {
        rec.origin.labels = {path, "column " + label_name};
    } else {
        rec.origin.labels = {path, "column stimulus"};
        rec.origin.labels_hint = "; " + path + " has the columns " + column_list(csv) +
                                 " (name the label column with --stimulus-column)";
    }
    return lines;
}

}  // namespace

recording read_recording_text(const std::string& spikes_csv, const std::string& trials_csv,
                              const std::optional<std::string>& stimulus_column) {
    recording rec;
    rec.source = spikes_csv;
    rec.origin.format = "text";
    rec.origin.format_detail = "a spikes CSV (unit,time_s) with a trials CSV";
    rec.origin.units = {spikes_csv, "rows (unit,time_s)"};
    read_spikes(spikes_csv, rec);
    const std::vector<std::size_t> lines = read_trials(trials_csv, stimulus_column, rec);
    validate(rec, text_places(rec, trials_csv, lines));
    return rec;
}

}  // namespace rastrum
