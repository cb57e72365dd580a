#include "hdf5_read_helpers.hpp"
#include "loader_steps.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/recording_nwb.hpp>

#include <memory>

namespace rastrum {

namespace {

constexpr const char* units_table = "/units";
constexpr const char* intervals_group = "/intervals";
constexpr const char* default_intervals = "trials";
constexpr const char* default_label_column = "stimulus";
constexpr const char* default_unit_column = "unit_name";

bool ends_with(const std::string& s, const std::string& tail) {
    return s.size() >= tail.size() && s.compare(s.size() - tail.size(), tail.size(), tail) == 0;
}

std::string joined(const std::vector<std::string>& items) {
    std::string out;
    for (const auto& i: items) out += (out.empty() ? "" : ", ") + i;
    return items.empty() ? "none" : out;
}

// The columns of a DynamicTable as they are on disk: its datasets but the row ids and the
// VectorIndex datasets that make other columns ragged.
std::vector<std::string> columns_of(hdf5::source& src, const std::string& table) {
    std::vector<std::string> columns;
    for (const auto& name: src.member_names(table)) {
        if (name == "id" || ends_with(name, "_index")) continue;
        if (src.kind(table + "/" + name) == hdf5::object_kind::dataset) columns.push_back(name);
    }
    return columns;
}

// "2.7.0" from the root; NWB 1.x files (a root dataset nwb_version) and other files are refused.
std::string check_nwb_root(hdf5::source& src) {
    const std::string expected = "an NWB 2.x file (root attribute nwb_version = \"2.x.y\", neurodata_type = \"NWBFile\")";
    if (src.has_attribute("/", "neurodata_type")) {
        const std::string type = src.read_string_attribute("/", "neurodata_type");
        if (type != "NWBFile") {
            throw input_error(src.path(), hdf5::attribute_path("/", "neurodata_type"), expected, "\"" + type + "\"");
        }
    }
    if (!src.has_attribute("/", "nwb_version")) {
        const bool old = src.kind("/nwb_version") == hdf5::object_kind::dataset;
        throw input_error(src.path(), hdf5::attribute_path("/", "nwb_version"), expected,
                          old ? "a root dataset nwb_version, as NWB 1.x files have (convert the file to NWB 2)"
                              : "no such attribute");
    }
    const std::string version = src.read_string_attribute("/", "nwb_version");
    if (version.rfind("2.", 0) != 0) {
        throw input_error(src.path(), hdf5::attribute_path("/", "nwb_version"), expected, "\"" + version + "\"");
    }
    return version;
}

// Exclusive end offsets of each row in a VectorIndex over `data_size` elements (the NWB format's
// "Tables and ragged arrays"): ascending, none past the data, the last equal to its size (else
// some data would belong to no row).
void check_offsets(const std::string& file, const std::string& index_path, const std::vector<std::int64_t>& ends,
                   std::size_t data_size, const std::string& data_path) {
    std::int64_t previous = 0;
    for (std::size_t i = 0; i < ends.size(); ++i) {
        if (ends[i] < previous) {
            throw input_error(file, hdf5::element_path(index_path, i),
                              "end offsets in ascending order (>= " + std::to_string(previous) + ")",
                              std::to_string(ends[i]));
        }
        if (static_cast<std::uint64_t>(ends[i]) > data_size) {
            throw input_error(file, hdf5::element_path(index_path, i),
                              "an end offset within " + data_path + " (at most " + std::to_string(data_size) + ")",
                              std::to_string(ends[i]));
        }
        previous = ends[i];
    }
    const std::uint64_t last = ends.empty() ? 0 : static_cast<std::uint64_t>(ends.back());
    if (last != data_size) {
        throw input_error(file, ends.empty() ? index_path : hdf5::element_path(index_path, ends.size() - 1),
                          "a last end offset equal to the " + std::to_string(data_size) + " elements of " + data_path +
                              " (every element in some row)",
                          std::to_string(last));
    }
}

void require_rows(const std::string& file, const std::string& column, std::size_t found, std::size_t rows,
                  const std::string& id_path) {
    if (found != rows) {
        throw input_error(file, column, std::to_string(rows) + " rows, as in " + id_path, std::to_string(found));
    }
}

// Names objects by the NWB datasets they came from: unit u is row rows[u] of the Units table.
class nwb_places: public recording_places {
public:
    nwb_places(const recording& rec, std::string ids, std::vector<std::size_t> rows, std::vector<std::size_t> first,
               std::string table, std::string labels):
        recording_places(rec), ids_(std::move(ids)), rows_(std::move(rows)), first_(std::move(first)),
        table_(std::move(table)), labels_(std::move(labels)) {}
    place units() const override { return {rec_.source, units_table}; }
    place unit(std::size_t u) const override { return {rec_.source, hdf5::element_path(ids_, rows_[u])}; }
    place spike(std::size_t u, std::size_t i) const override {
        return {rec_.source, hdf5::element_path(std::string(units_table) + "/spike_times", first_[u] + i)};
    }
    place trial_starts() const override { return {rec_.source, table_ + "/start_time"}; }
    place trial_start(std::size_t k) const override { return {rec_.source, hdf5::element_path(table_ + "/start_time", k)}; }
    place trial_stops() const override { return {rec_.source, table_ + "/stop_time"}; }
    place trial_stop(std::size_t k) const override { return {rec_.source, hdf5::element_path(table_ + "/stop_time", k)}; }
    place labels() const override { return {rec_.source, labels_}; }

private:
    std::string ids_;
    std::vector<std::size_t> rows_;
    std::vector<std::size_t> first_;
    std::string table_;
    std::string labels_;
};

struct units_read {
    std::string id_path;
    std::vector<std::size_t> rows;   // table row of each unit, in the recording's order
    std::vector<std::size_t> first;  // index in spike_times of each unit's first spike
};

// Unit u is a hyperslab of /units/spike_times, read when asked.
class nwb_loader: public unit_loader {
public:
    nwb_loader(std::shared_ptr<hdf5::source> src, std::vector<std::string> ids, std::vector<std::size_t> first,
               std::vector<std::size_t> counts):
        src_(std::move(src)), ids_(std::move(ids)), first_(std::move(first)), counts_(std::move(counts)) {}
    std::size_t spike_count(std::size_t u) const override { return counts_[u]; }
    std::vector<seconds> load(std::size_t u, std::vector<std::string>& warnings) override {
        const hdf5::error_capture capture;  // on the thread that reads
        const std::string times_path = std::string(units_table) + "/spike_times";
        std::vector<seconds> times = src_->read_float64_range(times_path, first_[u], counts_[u]);
        settle_spike_times(times, ids_[u],
                           [&](std::size_t i) { return place{src_->path(), hdf5::element_path(times_path, first_[u] + i)}; },
                           warnings);
        return times;
    }

private:
    std::shared_ptr<hdf5::source> src_;
    std::vector<std::string> ids_;
    std::vector<std::size_t> first_, counts_;
};

units_read read_units(const std::shared_ptr<hdf5::source>& shared, const std::optional<std::string>& unit_column,
                      recording& rec) {
    hdf5::source& src = *shared;
    const std::string table = units_table;
    src.group(table, "an NWB Units table (a group /units with spike_times and spike_times_index)");
    const std::string id_path = table + "/id";
    const std::vector<std::string> row_ids = src.read_labels(id_path);
    const std::size_t rows = row_ids.size();
    std::string names_path = id_path;
    std::vector<std::string> ids = row_ids;
    const std::string chosen = unit_column.value_or(default_unit_column);
    if (chosen != "id" && (unit_column || src.exists(table + "/" + chosen))) {
        names_path = table + "/" + chosen;
        if (src.kind(names_path) != hdf5::object_kind::dataset) {
            throw usage_error("--unit-column " + chosen + ": " + src.path() + " has no column " + names_path +
                              "; its columns: id, " + joined(columns_of(src, table)));
        }
        if (src.exists(names_path + "_index")) {
            throw input_error(src.path(), names_path, "a column with one value per unit", "a ragged column (with " +
                                                                                             names_path + "_index)");
        }
        ids = src.read_labels(names_path, hdf5::label_types::numbers_and_text);
        require_rows(src.path(), names_path, ids.size(), rows, id_path);
    }
    const std::string times_path = table + "/spike_times";
    const std::string index_path = times_path + "_index";
    const std::size_t spikes = src.float64_count(times_path);
    src.dataset(index_path, "a VectorIndex of end offsets into " + times_path + " (one per unit)");
    const std::vector<std::int64_t> ends = src.read_int64(index_path);
    require_rows(src.path(), index_path, ends.size(), rows, id_path);
    check_offsets(src.path(), index_path, ends, spikes, times_path);

    units_read out{names_path, {}, {}};
    std::vector<std::string> unit_ids;
    std::vector<std::size_t> counts;
    for (const std::size_t row: natural_order(ids)) {
        const std::size_t begin = row == 0 ? 0 : static_cast<std::size_t>(ends[row - 1]);
        rec.units.push_back({ids[row], {}});
        unit_ids.push_back(ids[row]);
        counts.push_back(static_cast<std::size_t>(ends[row]) - begin);
        out.rows.push_back(row);
        out.first.push_back(begin);
    }
    rec.store = std::make_shared<unit_store>(std::make_unique<nwb_loader>(shared, unit_ids, out.first, counts), ids.size());
    rec.origin.units = {"", names_path == id_path ? table : table + " (ids from " + names_path + ")"};
    return out;
}

std::string intervals_table(hdf5::source& src, const std::optional<std::string>& intervals) {
    const std::string name = intervals.value_or(default_intervals);
    if (name.empty() || name.find('/') != std::string::npos) {
        throw usage_error("--intervals " + name + ": expected the name of a table in " + std::string(intervals_group));
    }
    const std::string table = std::string(intervals_group) + "/" + name;
    if (src.kind(table) == hdf5::object_kind::group) return table;
    const bool any = src.kind(intervals_group) == hdf5::object_kind::group;
    const std::string present = any ? joined(src.member_names(intervals_group)) : "none (no /intervals group)";
    if (intervals) {
        throw usage_error("--intervals " + name + ": " + src.path() + " has no table " + table +
                          "; tables in /intervals: " + present);
    }
    throw input_error(src.path(), table,
                      "a TimeIntervals table of trials (or name another table in /intervals with --intervals)",
                      "nothing; tables in /intervals: " + present);
}

std::string read_trials(hdf5::source& src, const std::string& table, const std::optional<std::string>& stimulus_column,
                        recording& rec) {
    rec.trial_start = src.read_float64(table + "/start_time");
    rec.trial_stop = src.read_float64(table + "/stop_time");
    rec.origin.trials = {"", table};
    const std::string name = stimulus_column.value_or(default_label_column);
    const std::string column = table + "/" + name;
    const std::vector<std::string> columns = columns_of(src, table);
    rec.origin.labels = {"", column};
    if (src.kind(column) != hdf5::object_kind::dataset) {
        if (stimulus_column) {
            throw usage_error("--stimulus-column " + name + ": " + src.path() + " has no column " + column +
                              "; columns of " + table + ": " + joined(columns));
        }
        rec.origin.labels_hint = "; name the label column of " + table + " with --stimulus-column (its columns: " +
                                 joined(columns) + ")";
        return column;
    }
    if (src.exists(column + "_index")) {
        throw input_error(src.path(), column, "a label column with one value per trial",
                          "a ragged column (with " + column + "_index), several values per trial");
    }
    rec.stimulus = src.read_labels(column, hdf5::label_types::numbers_and_text);
    // validate() reads no labels as "unlabelled", but an empty column beside T trials is a mismatch.
    require_rows(src.path(), column, rec.stimulus.size(), rec.trial_start.size(), table + "/start_time");
    return column;
}

std::string column_description(hdf5::source& src, const std::string& column) {
    const H5::DataSet ds = src.dataset(column, "a column");
    std::string type = src.guard(column, "a readable column", [&] { return hdf5::describe_type(ds.getDataType()); });
    std::string shape;
    for (const std::uint64_t d: src.dimensions(column)) shape += (shape.empty() ? "" : " x ") + std::to_string(d);
    type += " [" + shape + "]";
    if (src.exists(column + "_index")) type += ", ragged (" + column + "_index)";
    return type;
}

nwb_table describe_table(hdf5::source& src, const std::string& table) {
    nwb_table t{table, "", {}};
    if (src.has_attribute(table, "neurodata_type")) t.type = src.read_string_attribute(table, "neurodata_type");
    for (const auto& name: src.member_names(table)) {
        if (ends_with(name, "_index") || src.kind(table + "/" + name) != hdf5::object_kind::dataset) continue;
        t.columns.emplace_back(name, column_description(src, table + "/" + name));
    }
    return t;
}

}  // namespace

std::vector<nwb_table> nwb_tables(const std::string& path) {
    hdf5::source src(path);
    std::vector<nwb_table> tables;
    if (src.kind(units_table) == hdf5::object_kind::group) tables.push_back(describe_table(src, units_table));
    if (src.kind(intervals_group) == hdf5::object_kind::group) {
        for (const auto& name: src.member_names(intervals_group)) {
            const std::string table = std::string(intervals_group) + "/" + name;
            if (src.kind(table) == hdf5::object_kind::group) tables.push_back(describe_table(src, table));
        }
    }
    return tables;
}

recording open_recording_nwb(const std::string& path, const nwb_choice& choice,
                             const std::optional<std::string>& stimulus_column) {
    auto src = std::make_shared<hdf5::source>(path);
    recording rec;
    rec.source = path;
    rec.origin.format = "nwb";
    rec.origin.format_detail = "an NWB " + check_nwb_root(*src) + " file";
    const units_read units = read_units(src, choice.unit_column, rec);
    const std::string table = intervals_table(*src, choice.intervals);
    const std::string labels = read_trials(*src, table, stimulus_column, rec);
    validate(rec, nwb_places(rec, units.id_path, units.rows, units.first, table, labels));
    return rec;
}

recording read_recording_nwb(const std::string& path, const nwb_choice& choice,
                             const std::optional<std::string>& stimulus_column) {
    recording rec = open_recording_nwb(path, choice, stimulus_column);
    read_all_units(rec);
    return rec;
}

}  // namespace rastrum
