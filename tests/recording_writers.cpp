#include "recording_writers.hpp"

#include <H5Cpp.h>

#include <charconv>
#include <cstdint>
#include <fstream>
#include <stdexcept>

namespace rastrum::testing {

namespace {

// ---- HDF5 pieces both formats use ----

H5::StrType utf8_text() {
    H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
    t.setCset(H5T_CSET_UTF8);
    return t;
}

void text_attribute(const H5::H5Object& on, const std::string& name, const std::string& value) {
    const H5::StrType t = utf8_text();
    on.createAttribute(name, t, H5::DataSpace(H5S_SCALAR)).write(t, value);
}

// MATLAB writes its attributes as fixed-length ASCII strings (MAT.jl, from the shared formats notes).
void ascii_attribute(const H5::H5Object& on, const std::string& name, const std::string& value) {
    H5::StrType t(H5::PredType::C_S1, value.size());
    t.setCset(H5T_CSET_ASCII);
    t.setStrpad(H5T_STR_NULLTERM);
    on.createAttribute(name, t, H5::DataSpace(H5S_SCALAR)).write(t, value.data());
}

void uint8_attribute(const H5::H5Object& on, const std::string& name, std::uint8_t value) {
    on.createAttribute(name, H5::PredType::STD_U8LE, H5::DataSpace(H5S_SCALAR)).write(H5::PredType::NATIVE_UINT8, &value);
}

void text_list_attribute(const H5::H5Object& on, const std::string& name, const std::vector<std::string>& values) {
    const H5::StrType t = utf8_text();
    const hsize_t n = values.size();
    std::vector<const char*> p;
    for (const auto& v: values) p.push_back(v.c_str());
    on.createAttribute(name, t, H5::DataSpace(1, &n)).write(t, p.data());
}

H5::DataSet doubles(const H5::Group& g, const std::string& name, const std::vector<double>& v, bool float32,
                    const std::vector<hsize_t>& dims) {
    const H5::DataSet ds = g.createDataSet(name, float32 ? H5::PredType::IEEE_F32LE : H5::PredType::IEEE_F64LE,
                                           H5::DataSpace(static_cast<int>(dims.size()), dims.data()));
    if (!v.empty()) ds.write(v.data(), H5::PredType::NATIVE_DOUBLE);
    return ds;
}

H5::DataSet strings(const H5::Group& g, const std::string& name, const std::vector<std::string>& v, bool fixed,
                    bool ascii) {
    const hsize_t n = v.size();
    const H5T_cset_t cset = ascii ? H5T_CSET_ASCII : H5T_CSET_UTF8;
    if (!fixed) {
        H5::StrType t = utf8_text();
        t.setCset(cset);
        std::vector<const char*> p;
        for (const auto& s: v) p.push_back(s.c_str());
        const H5::DataSet ds = g.createDataSet(name, t, H5::DataSpace(1, &n));
        if (n > 0) ds.write(p.data(), t);
        return ds;
    }
    std::size_t width = 1;
    for (const auto& s: v) width = std::max(width, s.size());
    H5::StrType t(H5::PredType::C_S1, width);
    t.setCset(cset);
    t.setStrpad(H5T_STR_NULLPAD);
    std::string buffer;
    for (const auto& s: v) buffer += s + std::string(width - s.size(), '\0');
    const H5::DataSet ds = g.createDataSet(name, t, H5::DataSpace(1, &n));
    if (n > 0) ds.write(buffer.data(), t);
    return ds;
}

std::vector<std::int64_t> integers(const std::vector<std::string>& texts) {
    std::vector<std::int64_t> out;
    for (const auto& s: texts) out.push_back(std::stoll(s));
    return out;
}

H5::DataSet int64s(const H5::Group& g, const std::string& name, const std::vector<std::int64_t>& v) {
    const hsize_t n = v.size();
    const H5::DataSet ds = g.createDataSet(name, H5::PredType::STD_I64LE, H5::DataSpace(1, &n));
    if (n > 0) ds.write(v.data(), H5::PredType::NATIVE_INT64);
    return ds;
}

// ---- NWB (nwb-schema 2.7.0: NWBFile, Units, TimeIntervals; hdmf-common DynamicTable) ----

// Deterministic stand-ins for UUID4 text: the format only asks for a unique string per object.
std::string next_object_id() {
    static unsigned serial = 0;
    char text[40];
    std::snprintf(text, sizeof text, "00000000-0000-4000-8000-%012u", ++serial);
    return text;
}

void typed(const H5::H5Object& on, const std::string& type, const std::string& space) {
    text_attribute(on, "neurodata_type", type);
    text_attribute(on, "namespace", space);
    text_attribute(on, "object_id", next_object_id());
}

void column(const H5::DataSet& ds, const std::string& description) {
    typed(ds, "VectorData", "hdmf-common");
    text_attribute(ds, "description", description);
}

void ids(const H5::Group& table, std::size_t rows) {
    std::vector<std::int64_t> v(rows);
    for (std::size_t i = 0; i < rows; ++i) v[i] = static_cast<std::int64_t>(i);
    typed(int64s(table, "id", v), "ElementIdentifiers", "hdmf-common");
}

const H5::PredType& unsigned_type(int bits) {
    switch (bits) {
    case 8: return H5::PredType::STD_U8LE;
    case 16: return H5::PredType::STD_U16LE;
    case 32: return H5::PredType::STD_U32LE;
    case 64: return H5::PredType::STD_U64LE;
    default: throw std::invalid_argument("index_bits");
    }
}

void nwb_units(const H5::H5File& f, const recording& rec, const nwb_writing& how) {
    const H5::Group units = f.createGroup("/units");
    typed(units, "Units", "core");
    text_attribute(units, "description", "invented units");
    std::vector<std::string> colnames = {"spike_times"};
    if (how.unit_name_column) colnames.push_back("unit_name");
    text_list_attribute(units, "colnames", colnames);
    std::vector<double> times;
    std::vector<std::uint64_t> ends;
    std::vector<std::string> names;
    for (const auto& u: rec.units) {
        times.insert(times.end(), u.spike_times.begin(), u.spike_times.end());
        ends.push_back(times.size());
        names.push_back(u.id);
    }
    if (how.unit_name_column) {
        ids(units, rec.units.size());
        column(strings(units, "unit_name", names, false, false), "unit names");
    } else {
        typed(int64s(units, "id", integers(names)), "ElementIdentifiers", "hdmf-common");
    }
    const H5::DataSet spikes = doubles(units, "spike_times", times, how.float32_times, {times.size()});
    column(spikes, "Spike times for each unit in seconds");
    const hsize_t n = ends.size();
    const H5::DataSet index = units.createDataSet("spike_times_index", unsigned_type(how.index_bits), H5::DataSpace(1, &n));
    if (n > 0) index.write(ends.data(), H5::PredType::NATIVE_UINT64);
    typed(index, "VectorIndex", "hdmf-common");
    text_attribute(index, "description", "Index for VectorData 'spike_times'");
    hobj_ref_t target;
    f.reference(&target, "/units/spike_times");
    index.createAttribute("target", H5::PredType::STD_REF_OBJ, H5::DataSpace(H5S_SCALAR))
        .write(H5::PredType::STD_REF_OBJ, &target);
}

void nwb_trials(const H5::H5File& f, const recording& rec, const nwb_writing& how) {
    const H5::Group intervals = f.createGroup("/intervals");
    const H5::Group table = intervals.createGroup(how.intervals);
    typed(table, "TimeIntervals", "core");
    text_attribute(table, "description", "invented trials");
    std::vector<std::string> colnames = {"start_time", "stop_time"};
    if (rec.has_stimulus()) colnames.push_back(how.label_column);
    text_list_attribute(table, "colnames", colnames);
    ids(table, rec.trial_count());
    column(doubles(table, "start_time", rec.trial_start, how.float32_times, {rec.trial_count()}), "Start time of epoch, in seconds");
    column(doubles(table, "stop_time", rec.trial_stop, how.float32_times, {rec.trial_count()}), "Stop time of epoch, in seconds");
    if (!rec.has_stimulus()) return;
    if (how.integer_labels) {
        column(int64s(table, how.label_column, integers(rec.stimulus)), "stimulus condition");
    } else {
        column(strings(table, how.label_column, rec.stimulus, how.fixed_length_labels, how.ascii_labels),
               "stimulus condition");
    }
}

// ---- MATLAB 7.3 (an HDF5 file behind a 512-byte user block; MAT.jl's writer, per the shared notes) ----

void mat_user_block(const std::string& path) {
    std::string block = "MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Thu Jan  1 00:00:00 2026 HDF5 schema 1.00 .";
    block.resize(116, ' ');
    block += std::string(8, '\0');       // subsystem data offset: none
    block += std::string("\x00\x02", 2); // version 0x0200
    block += "IM";                       // endian indicator
    block.resize(512, '\0');
    std::fstream out(path, std::ios::in | std::ios::out | std::ios::binary);
    out.write(block.data(), static_cast<std::streamsize>(block.size()));
}

std::vector<hsize_t> matlab_dims(std::size_t n, bool row) {
    // MATLAB 1xN is HDF5 [N, 1]; Nx1 is [1, N] (column-major, dimensions reversed).
    return row ? std::vector<hsize_t>{n, 1} : std::vector<hsize_t>{1, n};
}

// An empty MATLAB array: MATLAB_empty = 1 and, as data, its MATLAB dimensions.
void matlab_empty(const H5::Group& g, const std::string& name, const std::string& matlab_class) {
    const std::uint64_t dims[2] = {0, 0};
    const hsize_t two = 2;
    const H5::DataSet ds = g.createDataSet(name, H5::PredType::STD_U64LE, H5::DataSpace(1, &two));
    ds.write(dims, H5::PredType::NATIVE_UINT64);
    ascii_attribute(ds, "MATLAB_class", matlab_class);
    uint8_attribute(ds, "MATLAB_empty", 1);
}

void matlab_numbers(const H5::Group& g, const std::string& name, const std::vector<double>& v, bool single, bool row) {
    if (v.empty()) return matlab_empty(g, name, single ? "single" : "double");
    ascii_attribute(doubles(g, name, v, single, matlab_dims(v.size(), row)), "MATLAB_class", single ? "single" : "double");
}

std::vector<std::uint16_t> utf16_of(const std::string& s) {
    std::vector<std::uint16_t> out;
    for (std::size_t i = 0; i < s.size();) {
        const auto c = static_cast<unsigned char>(s[i]);
        std::uint32_t code = c;
        std::size_t length = 1;
        if (c >= 0xf0) code = c & 0x07u, length = 4;
        else if (c >= 0xe0) code = c & 0x0fu, length = 3;
        else if (c >= 0xc0) code = c & 0x1fu, length = 2;
        for (std::size_t k = 1; k < length; ++k) code = (code << 6) | (static_cast<unsigned char>(s[i + k]) & 0x3fu);
        i += length;
        if (code >= 0x10000) {
            code -= 0x10000;
            out.push_back(static_cast<std::uint16_t>(0xd800 + (code >> 10)));
            out.push_back(static_cast<std::uint16_t>(0xdc00 + (code & 0x3ff)));
        } else {
            out.push_back(static_cast<std::uint16_t>(code));
        }
    }
    return out;
}

// Cells live in /#refs#; the cell variable holds object references to them.
class refs {
public:
    explicit refs(const H5::H5File& f): file_(f), group_(f.createGroup("/#refs#")) {}
    std::string next_name() { return "c" + std::to_string(serial_++); }
    const H5::Group& group() const { return group_; }
    void cell(const H5::Group& g, const std::string& name, const std::vector<std::string>& targets, bool row) {
        std::vector<hobj_ref_t> r(targets.size());
        for (std::size_t i = 0; i < targets.size(); ++i) file_.reference(&r[i], ("/#refs#/" + targets[i]).c_str());
        if (targets.empty()) return matlab_empty(g, name, "cell");
        const std::vector<hsize_t> dims = matlab_dims(targets.size(), row);
        const H5::DataSet ds = g.createDataSet(name, H5::PredType::STD_REF_OBJ, H5::DataSpace(2, dims.data()));
        ds.write(r.data(), H5::PredType::STD_REF_OBJ);
        ascii_attribute(ds, "MATLAB_class", "cell");
    }
    std::string chars(const std::string& text, bool row) {
        const std::string name = next_name();
        const std::vector<std::uint16_t> units = utf16_of(text);
        if (units.empty()) {
            matlab_empty(group_, name, "char");
            return name;
        }
        const std::vector<hsize_t> dims = matlab_dims(units.size(), row);
        const H5::DataSet ds = group_.createDataSet(name, H5::PredType::STD_U16LE, H5::DataSpace(2, dims.data()));
        ds.write(units.data(), H5::PredType::NATIVE_UINT16);
        ascii_attribute(ds, "MATLAB_class", "char");
        ds.createAttribute("MATLAB_int_decode", H5::PredType::STD_I32LE, H5::DataSpace(H5S_SCALAR))
            .write(H5::PredType::NATIVE_INT32, std::vector<std::int32_t>{2}.data());
        return name;
    }
    void cellstr(const H5::Group& g, const std::string& name, const std::vector<std::string>& texts, bool row) {
        std::vector<std::string> targets;
        for (const auto& t: texts) targets.push_back(chars(t, true));
        cell(g, name, targets, row);
    }

private:
    const H5::H5File& file_;
    H5::Group group_;
    unsigned serial_ = 0;
};

std::string exact(double x) {
    char text[64];
    const auto r = std::to_chars(text, text + sizeof text, x);
    return std::string(text, r.ptr);
}

std::string csv_field(const std::string& s) {
    if (s.find_first_of(",\"\n\r") == std::string::npos && s.find_first_of(" \t") != 0 &&
        (s.empty() || (s.back() != ' ' && s.back() != '\t'))) {
        return s;
    }
    std::string out = "\"";
    for (const char c: s) out += c == '"' ? std::string("\"\"") : std::string(1, c);
    return out + "\"";
}

}  // namespace

void write_nwb(const recording& rec, const std::string& path, const nwb_writing& how) {
    H5::H5File f(path, H5F_ACC_TRUNC);
    text_attribute(f, "nwb_version", "2.7.0");
    typed(f, "NWBFile", "core");
    const H5::Group root = f.openGroup("/");
    const std::string when = "2026-01-01T00:00:00+00:00";
    strings(root, "file_create_date", {when}, false, false);
    for (const char* name: {"identifier", "session_description", "session_start_time", "timestamps_reference_time"}) {
        const H5::StrType t = utf8_text();
        const std::string value = std::string(name) == "identifier" ? "invented-recording" : std::string(name).find("time") != std::string::npos ? when : "an invented session";
        root.createDataSet(name, t, H5::DataSpace(H5S_SCALAR)).write(value, t);
    }
    for (const char* group: {"/acquisition", "/analysis", "/processing", "/stimulus", "/stimulus/presentation",
                             "/stimulus/templates", "/general"}) {
        f.createGroup(group);
    }
    nwb_units(f, rec, how);
    nwb_trials(f, rec, how);
}

void write_mat(const recording& rec, const std::string& path, const mat_writing& how) {
    {
        H5::FileCreatPropList create;
        create.setUserblock(512);
        H5::H5File f(path, H5F_ACC_TRUNC, create);
        const H5::Group root = f.openGroup("/");
        refs r(f);
        std::vector<std::string> cells;
        for (const auto& u: rec.units) {
            cells.push_back(r.next_name());
            matlab_numbers(r.group(), cells.back(), u.spike_times, how.single_times, how.row_vectors);
        }
        r.cell(root, "spikes", cells, how.row_vectors);
        matlab_numbers(root, "trial_start", rec.trial_start, how.single_times, how.row_vectors);
        matlab_numbers(root, "trial_stop", rec.trial_stop, how.single_times, how.row_vectors);
        if (rec.has_stimulus() && how.numeric_labels) {
            std::vector<double> v;
            for (const auto& s: rec.stimulus) v.push_back(std::stod(s));
            matlab_numbers(root, "stimulus", v, false, how.row_vectors);
        } else if (rec.has_stimulus()) {
            r.cellstr(root, "stimulus", rec.stimulus, how.row_vectors);
        }
        if (how.unit_id_variable) {
            std::vector<std::string> ids;
            for (const auto& u: rec.units) ids.push_back(u.id);
            r.cellstr(root, "ids", ids, how.row_vectors);
        }
    }
    mat_user_block(path);
}

void write_text(const recording& rec, const std::string& spikes_csv, const std::string& trials_csv) {
    std::ofstream spikes(spikes_csv, std::ios::binary);
    spikes << "unit,time_s\n";
    for (const auto& u: rec.units) {
        if (u.spike_times.empty()) spikes << csv_field(u.id) << ",\n";
        for (const double t: u.spike_times) spikes << csv_field(u.id) << "," << exact(t) << "\n";
    }
    std::ofstream trials(trials_csv, std::ios::binary);
    trials << "start_s,stop_s" << (rec.has_stimulus() ? ",stimulus" : "") << "\n";
    for (std::size_t k = 0; k < rec.trial_count(); ++k) {
        trials << exact(rec.trial_start[k]) << "," << exact(rec.trial_stop[k]);
        if (rec.has_stimulus()) trials << "," << csv_field(rec.stimulus[k]);
        trials << "\n";
    }
}

}  // namespace rastrum::testing
