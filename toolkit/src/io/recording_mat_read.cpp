#include "hdf5_read_helpers.hpp"
#include "loader_steps.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/recording_mat.hpp>

#include <algorithm>
#include <memory>
#include <unordered_map>

namespace rastrum {

namespace {

// MATLAB keeps the targets of cell arrays and its class objects in these root groups; they are not variables.
bool is_housekeeping(const std::string& name) { return name == "#refs#" || name == "#subsystem#"; }

bool is_float_class(const std::string& c) { return c == "double" || c == "single"; }
bool is_integer_class(const std::string& c) {
    static const std::vector<std::string> classes = {"int8",  "uint8",  "int16", "uint16",
                                                     "int32", "uint32", "int64", "uint64"};
    return std::find(classes.begin(), classes.end(), c) != classes.end();
}
bool is_numeric_class(const std::string& c) { return is_float_class(c) || is_integer_class(c) || c == "logical"; }

// One MATLAB array as stored: where it is in HDF5, what MATLAB calls it, and what it is.
struct matlab_array {
    std::string path;            // HDF5 path ("/ts", "/#refs#/b")
    std::string name;            // as a MATLAB expression ("ts", "spikes{2}")
    std::string matlab_class;    // MATLAB_class ("double", "cell", ...); empty when absent
    bool dataset = false;
    bool empty = false;          // MATLAB_empty: the dataset holds the dimensions, not data
    std::string size;            // MATLAB's size, "1x40"
    std::size_t rows = 0, columns = 0;
    std::string unreadable;      // why rastrum cannot read it and what to save instead; empty when it can
};

std::string matlab_size(const std::vector<std::uint64_t>& dims) {
    // Column-major: HDF5 lists the dimensions in the reverse of MATLAB's order.
    std::string size;
    for (auto d = dims.rbegin(); d != dims.rend(); ++d) size += (size.empty() ? "" : "x") + std::to_string(*d);
    return dims.size() == 1 ? "1x" + size : size;
}

// MATLAB's own index notation, which is what the user typed: element i of a vector is name(i + 1).
std::string matlab_element(const std::string& name, std::size_t i) { return name + "(" + std::to_string(i + 1) + ")"; }
std::string matlab_cell(const std::string& name, std::size_t i) { return name + "{" + std::to_string(i + 1) + "}"; }

// Runs a read of HDF5 path `a.path`, naming any object in its messages as MATLAB would: "/ts[3]"
// becomes "ts(4)".
template <class F>
auto as_matlab(const matlab_array& a, F read) -> decltype(read()) {
    try {
        return read();
    } catch (const input_error& e) {
        std::string object = e.object;
        if (object.rfind(a.path, 0) == 0) {
            const std::string rest = object.substr(a.path.size());
            if (rest.empty()) {
                object = a.name;
            } else if (rest.front() == '[' && rest.back() == ']') {
                object = matlab_element(a.name, std::stoull(rest.substr(1, rest.size() - 2)));
            } else if (rest.front() == '@') {
                object = a.name + " (attribute " + rest.substr(1) + ")";
            }
        }
        throw input_error(e.file, object, e.expected, e.found);
    }
}

matlab_array inspect(hdf5::source& src, const std::string& path, const std::string& name) {
    matlab_array a;
    a.path = path;
    a.name = name;
    const hdf5::object_kind kind = src.kind(path);
    if (kind == hdf5::object_kind::missing) {
        a.unreadable = "nothing at " + path;
        return a;
    }
    a.dataset = kind == hdf5::object_kind::dataset;
    if (src.has_attribute(path, "MATLAB_class")) a.matlab_class = src.read_string_attribute(path, "MATLAB_class");
    if (src.has_attribute(path, "MATLAB_empty")) a.empty = src.read_int64_attribute(path, "MATLAB_empty") != 0;
    if (a.dataset && !a.empty) {
        const std::vector<std::uint64_t> dims = as_matlab(a, [&] { return src.dimensions(path); });
        a.size = matlab_size(dims);
        a.rows = static_cast<std::size_t>(dims.size() == 2 ? dims[1] : 1);
        a.columns = static_cast<std::size_t>(dims.empty() ? 1 : dims[0]);
    }
    if (a.empty) a.size = "empty";
    const std::string& c = a.matlab_class;
    if (src.has_attribute(path, "MATLAB_object_decode") || c == "string" || c == "table" || c == "timetable" ||
        c == "categorical" || c == "datetime" || c == "duration") {
        a.unreadable = c == "string"
                           ? "a MATLAB string array, which MATLAB saves as an opaque object; save cellstr(" + name +
                                 ") instead (a cell array of char vectors)"
                       : c == "categorical"
                           ? "a MATLAB categorical array (an opaque object); save cellstr(" + name + ") or double(" +
                                 name + ") instead"
                           : "a MATLAB " + (c.empty() ? std::string("object") : c + " object") +
                                 ", which MATLAB saves opaquely; save its contents as double vectors or cell arrays "
                                 "of char vectors instead";
    } else if (c == "struct") {
        a.unreadable = "a MATLAB struct; save its fields as variables of their own: save(file, '-struct', '" + name +
                       "', '-v7.3')";
    } else if (src.has_attribute(path, "MATLAB_sparse")) {
        a.unreadable = "a sparse MATLAB array; save full(" + name + ") instead";
    } else if (c.empty()) {
        a.unreadable = "an HDF5 object without the MATLAB_class attribute MATLAB gives every variable";
    } else if (!a.dataset) {
        a.unreadable = "a MATLAB " + c + " stored as a group; save it as a double vector or a cell array";
    }
    return a;
}

// "a double 1x40", "an int32 2x2": what the array is, for messages.
std::string described(const matlab_array& a) {
    const bool vowel = !a.matlab_class.empty() && std::string("aeiou").find(a.matlab_class[0]) != std::string::npos;
    return (vowel ? "an " : "a ") + a.matlab_class + " " + a.size;
}

void require_readable(const std::string& file, const matlab_array& a, const std::string& expected) {
    if (!a.unreadable.empty()) throw input_error(file, a.name, expected, a.unreadable);
    if (a.rows > 1 && a.columns > 1) {
        throw input_error(file, a.name, expected, described(a) + " matrix");
    }
}

const char* times_expected = "a double vector of times in seconds";

// How many times `a` holds, every check of read_times made but the values unread.
std::size_t times_count(hdf5::source& src, const matlab_array& a) {
    require_readable(src.path(), a, times_expected);
    if (!is_float_class(a.matlab_class)) {
        const std::string advice = is_integer_class(a.matlab_class) || a.matlab_class == "logical"
                                       ? " (convert with double(" + a.name + "), in seconds)"
                                       : "";
        throw input_error(src.path(), a.name, times_expected, described(a) + advice);
    }
    if (a.empty) return 0;
    return as_matlab(a, [&] { return src.float64_count(a.path, hdf5::shape::matlab_vector); });
}

std::vector<double> read_times(hdf5::source& src, const matlab_array& a) {
    if (times_count(src, a) == 0) return {};
    return as_matlab(a, [&] { return src.read_float64(a.path, hdf5::shape::matlab_vector); });
}

// Unit u is the array one cell of the spikes variable refers to, read when asked.
class mat_loader: public unit_loader {
public:
    mat_loader(std::shared_ptr<hdf5::source> src, std::vector<std::string> ids, std::vector<matlab_array> cells):
        src_(std::move(src)), ids_(std::move(ids)), cells_(std::move(cells)) {
        for (const auto& cell: cells_) counts_.push_back(times_count(*src_, cell));
    }
    std::size_t spike_count(std::size_t u) const override { return counts_[u]; }
    std::vector<seconds> load(std::size_t u, std::vector<std::string>& warnings) override {
        const hdf5::error_capture capture;  // on the thread that reads
        const matlab_array& cell = cells_[u];
        std::vector<seconds> times = read_times(*src_, cell);
        settle_spike_times(times, ids_[u], [&](std::size_t k) { return place{src_->path(), matlab_element(cell.name, k)}; },
                           warnings);
        return times;
    }

private:
    std::shared_ptr<hdf5::source> src_;
    std::vector<std::string> ids_;
    std::vector<matlab_array> cells_;
    std::vector<std::size_t> counts_;
};

// MATLAB char arrays hold UTF-16 code units; labels are UTF-8.
std::string utf8_of_utf16(const std::vector<std::int64_t>& units, const std::string& file, const std::string& name) {
    std::string out;
    for (std::size_t i = 0; i < units.size(); ++i) {
        std::uint32_t code = static_cast<std::uint32_t>(units[i]);
        if (code >= 0xd800 && code <= 0xdbff && i + 1 < units.size() && units[i + 1] >= 0xdc00 && units[i + 1] <= 0xdfff) {
            code = 0x10000 + ((code - 0xd800) << 10) + (static_cast<std::uint32_t>(units[++i]) - 0xdc00);
        } else if ((code >= 0xd800 && code <= 0xdfff) || units[i] < 0 || units[i] > 0xffff) {
            throw input_error(file, matlab_element(name, i), "a character (a UTF-16 code unit that is not half a pair)",
                              std::to_string(units[i]));
        }
        if (code == 0) throw input_error(file, matlab_element(name, i), "a character other than NUL", "char(0)");
        if (code < 0x80) {
            out += static_cast<char>(code);
        } else if (code < 0x800) {
            out += static_cast<char>(0xc0 | (code >> 6));
            out += static_cast<char>(0x80 | (code & 0x3f));
        } else if (code < 0x10000) {
            out += static_cast<char>(0xe0 | (code >> 12));
            out += static_cast<char>(0x80 | ((code >> 6) & 0x3f));
            out += static_cast<char>(0x80 | (code & 0x3f));
        } else {
            out += static_cast<char>(0xf0 | (code >> 18));
            out += static_cast<char>(0x80 | ((code >> 12) & 0x3f));
            out += static_cast<char>(0x80 | ((code >> 6) & 0x3f));
            out += static_cast<char>(0x80 | (code & 0x3f));
        }
    }
    return out;
}

const char* labels_expected = "a numeric vector or a cell array of char vectors";

// Cells may point at one object many times, so a label's length is capped: otherwise a small file
// whose cells all name one long char array could ask for far more memory than it holds.
constexpr std::size_t longest_label = 4096;

std::string read_char_vector(hdf5::source& src, const matlab_array& a) {
    const std::string expected = "a char vector";
    require_readable(src.path(), a, expected);
    if (a.matlab_class != "char") {
        throw input_error(src.path(), a.name, expected, described(a));
    }
    if (a.empty) return "";
    if (a.rows * a.columns > longest_label) {
        throw input_error(src.path(), a.name, expected + " of at most " + std::to_string(longest_label) + " characters",
                          "a char " + a.size);
    }
    return utf8_of_utf16(as_matlab(a, [&] { return src.read_int64(a.path, hdf5::shape::matlab_vector); }), src.path(),
                         a.name);
}

std::vector<std::string> cell_targets(hdf5::source& src, const matlab_array& cell) {
    if (cell.empty) return {};
    return as_matlab(cell, [&] { return src.read_reference_paths(cell.path, hdf5::shape::matlab_vector); });
}

std::vector<std::string> read_labels(hdf5::source& src, const matlab_array& a) {
    require_readable(src.path(), a, labels_expected);
    if (a.matlab_class == "cell") {
        std::vector<std::string> labels;
        const std::vector<std::string> targets = cell_targets(src, a);
        for (std::size_t i = 0; i < targets.size(); ++i) {
            labels.push_back(read_char_vector(src, inspect(src, targets[i], matlab_cell(a.name, i))));
        }
        return labels;
    }
    if (!is_numeric_class(a.matlab_class)) {
        const std::string advice = a.matlab_class == "char" ? " (save one label per trial: cellstr(" + a.name + "))" : "";
        throw input_error(src.path(), a.name, labels_expected, described(a) + advice);
    }
    if (a.empty) return {};
    return as_matlab(a, [&] {
        return src.read_labels(a.path, hdf5::label_types::numbers_and_text, hdf5::shape::matlab_vector);
    });
}

std::vector<std::pair<std::string, std::string>> variables_of(hdf5::source& src) {
    std::vector<std::pair<std::string, std::string>> out;
    for (const auto& name: src.member_names("/")) {
        if (is_housekeeping(name)) continue;
        const matlab_array a = inspect(src, "/" + name, name);
        std::string what = a.matlab_class.empty() ? "not a MATLAB variable" : a.matlab_class;
        if (!a.size.empty()) what += " " + a.size;
        out.emplace_back(name, what);
    }
    return out;
}

std::string listing(const std::vector<std::pair<std::string, std::string>>& variables) {
    std::string out;
    for (const auto& [name, what]: variables) out += (out.empty() ? "" : ", ") + name + " (" + what + ")";
    return out.empty() ? "none" : out;
}

matlab_array variable(hdf5::source& src, const std::optional<std::string>& name, const std::string& option,
                      const std::string& meaning) {
    if (!name) {
        throw usage_error(src.path() + " is a MAT-file: name its variables with --mat-spikes VAR (a cell array of "
                          "spike-time vectors, one cell per unit), --mat-trial-start VAR and --mat-trial-stop VAR "
                          "(double vectors, seconds), and optionally --mat-stimulus VAR; missing " + option +
                          "; variables in the file: " + listing(variables_of(src)));
    }
    const bool plain = !name->empty() && name->find('/') == std::string::npos && !is_housekeeping(*name);
    const matlab_array a = plain ? inspect(src, "/" + *name, *name) : matlab_array{};
    if (!plain || src.kind(a.path) == hdf5::object_kind::missing) {
        throw usage_error(option + " " + *name + ": " + src.path() + " has no variable " + *name + " (" + meaning +
                          "); variables in the file: " + listing(variables_of(src)));
    }
    return a;
}

// Names objects as MATLAB expressions of the user's variables.
class mat_places: public recording_places {
public:
    mat_places(const recording& rec, std::string spikes, std::string ids, std::vector<std::size_t> cells,
               std::string start, std::string stop, std::string labels):
        recording_places(rec), spikes_(std::move(spikes)), ids_(std::move(ids)), cells_(std::move(cells)),
        start_(std::move(start)), stop_(std::move(stop)), labels_(std::move(labels)) {}
    place units() const override { return {rec_.source, spikes_}; }
    place unit(std::size_t u) const override {
        return {rec_.source, ids_.empty() ? matlab_cell(spikes_, cells_[u]) : matlab_element(ids_, cells_[u])};
    }
    place spike(std::size_t u, std::size_t i) const override {
        return {rec_.source, matlab_element(matlab_cell(spikes_, cells_[u]), i)};
    }
    place trial_starts() const override { return {rec_.source, start_}; }
    place trial_start(std::size_t k) const override { return {rec_.source, matlab_element(start_, k)}; }
    place trial_stops() const override { return {rec_.source, stop_}; }
    place trial_stop(std::size_t k) const override { return {rec_.source, matlab_element(stop_, k)}; }
    place labels() const override { return {rec_.source, labels_}; }

private:
    std::string spikes_, ids_;
    std::vector<std::size_t> cells_;
    std::string start_, stop_, labels_;
};

}  // namespace

std::vector<std::pair<std::string, std::string>> mat_variables(const std::string& path) {
    hdf5::source src(path);
    return variables_of(src);
}

recording open_recording_mat(const std::string& path, const mat_choice& choice) {
    const auto shared = std::make_shared<hdf5::source>(path);
    hdf5::source& src = *shared;
    recording rec;
    rec.source = path;
    rec.origin.format = "mat";
    rec.origin.format_detail = "a MATLAB 7.3 MAT-file";
    const matlab_array spikes = variable(src, choice.spikes, "--mat-spikes", "a cell array of spike-time vectors");
    const matlab_array start = variable(src, choice.trial_start, "--mat-trial-start", "trial start times");
    const matlab_array stop = variable(src, choice.trial_stop, "--mat-trial-stop", "trial stop times");

    const std::string cells_expected = "a cell array of spike-time vectors, one cell per unit ({t1, t2, ...})";
    require_readable(path, spikes, cells_expected);
    if (spikes.matlab_class != "cell") {
        const std::string advice = is_float_class(spikes.matlab_class) ? " (one unit? save {" + spikes.name + "})" : "";
        throw input_error(path, spikes.name, cells_expected, described(spikes) + advice);
    }
    const std::vector<std::string> targets = cell_targets(src, spikes);
    std::vector<std::string> ids;
    if (choice.unit_ids) {
        const matlab_array id_array = variable(src, choice.unit_ids, "--mat-unit-ids", "one unit id per cell");
        ids = read_labels(src, id_array);
        if (ids.size() != targets.size()) {
            throw input_error(path, id_array.name, std::to_string(targets.size()) + " unit ids, one per cell of " + spikes.name,
                              std::to_string(ids.size()));
        }
    } else {
        for (std::size_t i = 0; i < targets.size(); ++i) ids.push_back("u" + std::to_string(i + 1));
    }
    // Each unit's times stored once: a shared object would be one unit counted twice (and would let
    // a small file claim many copies of a large array).
    std::unordered_map<std::string, std::size_t> first_cell;
    for (std::size_t i = 0; i < targets.size(); ++i) {
        const auto [seen, fresh] = first_cell.emplace(targets[i], i);
        if (!fresh) {
            throw input_error(path, matlab_cell(spikes.name, i), "spike times of its own (a cell per unit)",
                              "the same array as " + matlab_cell(spikes.name, seen->second) + " (" + targets[i] + ")");
        }
    }
    std::vector<std::size_t> cells;
    std::vector<std::string> unit_ids;
    std::vector<matlab_array> arrays;
    for (const std::size_t i: natural_order(ids)) {
        arrays.push_back(inspect(src, targets[i], matlab_cell(spikes.name, i)));
        rec.units.push_back({ids[i], {}});
        unit_ids.push_back(ids[i]);
        cells.push_back(i);
    }
    rec.store = std::make_shared<unit_store>(std::make_unique<mat_loader>(shared, unit_ids, arrays), unit_ids.size());
    rec.origin.units = {"", spikes.name + (choice.unit_ids ? " (ids from " + *choice.unit_ids + ")" : "")};

    rec.trial_start = read_times(src, start);
    rec.trial_stop = read_times(src, stop);
    rec.origin.trials = {"", start.name + ", " + stop.name};
    std::string labels_name;
    if (choice.stimulus) {
        const matlab_array labels = variable(src, choice.stimulus, "--mat-stimulus", "one label per trial");
        rec.stimulus = read_labels(src, labels);
        labels_name = labels.name;
        rec.origin.labels = {"", labels.name};
    } else {
        rec.origin.labels = {"", ""};
        rec.origin.labels_hint = "; name the variable holding one label per trial with --mat-stimulus VAR";
    }
    // The trials first: with no trial starts, the labels cannot be matched to anything, and the
    // message must name the start variable, not the labels.
    validate(rec, mat_places(rec, spikes.name, choice.unit_ids.value_or(""), cells, start.name, stop.name, labels_name));
    // validate() reads no labels as "unlabelled", but an empty variable beside T trials is a mismatch.
    if (choice.stimulus && rec.stimulus.size() != rec.trial_start.size()) {
        throw input_error(path, labels_name, std::to_string(rec.trial_start.size()) + " labels, one per trial",
                          std::to_string(rec.stimulus.size()));
    }
    return rec;
}

recording read_recording_mat(const std::string& path, const mat_choice& choice) {
    recording rec = open_recording_mat(path, choice);
    read_all_units(rec);
    return rec;
}

}  // namespace rastrum
