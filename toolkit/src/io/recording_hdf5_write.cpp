#include "hdf5_read_helpers.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/output_file.hpp>
#include <rastrum/recording_hdf5.hpp>

#include "loader_steps.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <memory>

namespace rastrum {

namespace {

// Names and labels are stored as UTF-8 and read back through the same checks the reader applies,
// so anything the reader would refuse is refused here, before a file exists.
void check_unit_id(const std::string& id, const std::string& source);

void check_writable(const recording& rec) {
    for (const auto& u: rec.units) check_unit_id(u.id, rec.source);
    for (std::size_t k = 0; k < rec.stimulus.size(); ++k) {
        const std::string& s = rec.stimulus[k];
        if (s.find('\0') != std::string::npos || hdf5::invalid_utf8_offset(s) != std::string::npos) {
            throw input_error(rec.source, "label of trial " + std::to_string(k), "UTF-8 text without NUL bytes",
                              "other bytes");
        }
    }
}

H5::StrType utf8_variable_string() {
    H5::StrType type(H5::PredType::C_S1, H5T_VARIABLE);
    type.setCset(H5T_CSET_UTF8);
    return type;
}

H5::LinkCreatPropList utf8_names() {
    H5::LinkCreatPropList lcpl;
    lcpl.setCharEncoding(H5T_CSET_UTF8);
    return lcpl;
}

void write_times(const H5::Group& parent, const std::string& name, const std::vector<seconds>& values) {
    const hsize_t n = values.size();
    const H5::DataSpace space(1, &n);
    const H5::DataSet ds = parent.createDataSet(name, H5::PredType::IEEE_F64LE, space);
    if (n > 0) ds.write(values.data(), H5::PredType::NATIVE_DOUBLE);
}

void write_labels(const H5::Group& parent, const std::string& name, const std::vector<std::string>& labels) {
    const hsize_t n = labels.size();
    const H5::DataSpace space(1, &n);
    const H5::StrType type = utf8_variable_string();
    const H5::DataSet ds = parent.createDataSet(name, type, space);
    std::vector<const char*> pointers;
    pointers.reserve(labels.size());
    for (const auto& s: labels) pointers.push_back(s.c_str());
    if (n > 0) ds.write(pointers.data(), type);
}

// Fixed-length, so the value sits in the checksummed object header; a variable-length string
// would live in the global heap, which has no checksum.
void text_attribute(const H5::H5File& file, const std::string& name, const std::string& value) {
    H5::StrType text(H5::PredType::C_S1, std::max<std::size_t>(value.size(), 1));
    text.setCset(H5T_CSET_UTF8);
    text.setStrpad(H5T_STR_NULLPAD);
    std::string stored = value;
    stored.resize(text.getSize(), '\0');
    file.createAttribute(name, text, H5::DataSpace(H5S_SCALAR)).write(text, stored.data());
}

void root_attributes(const H5::H5File& file, const std::vector<std::pair<std::string, std::string>>& notes) {
    const H5::DataSpace scalar(H5S_SCALAR);
    text_attribute(file, "layout", "spike-recording");
    const std::int64_t version = 1;
    file.createAttribute("layout_version", H5::PredType::STD_I64LE, scalar)
        .write(H5::PredType::NATIVE_INT64, &version);
    for (const auto& [name, value]: notes) text_attribute(file, name, value);
}

// Unit ids are group names; check_writable's rule for one id.
void check_unit_id(const std::string& id, const std::string& source) {
    const bool bad_name = id == "." || id.find('/') != std::string::npos || id.find('\0') != std::string::npos;
    if (bad_name || hdf5::invalid_utf8_offset(id) != std::string::npos) {
        throw input_error(source, "unit \"" + id + "\"",
                          "unit ids that can be HDF5 group names in the native layout (UTF-8, no '/', no NUL, not \".\")",
                          "this id");
    }
}

// validate()'s rule for one unit's times, named as the file will name them.
void check_times(const std::string& id, const std::vector<seconds>& times, const std::string& source) {
    for (std::size_t i = 0; i < times.size(); ++i) {
        if (!std::isfinite(times[i]) || (i > 0 && times[i] < times[i - 1])) {
            throw input_error(source, hdf5::element_path("/units/" + id + "/spike_times", i),
                              "finite spike times in ascending order", exact_number(times[i]));
        }
    }
}

}  // namespace

struct recording_hdf5_writer::state {
    hdf5::error_capture capture;
    output_file& out;
    H5::H5File file;
    H5::Group units;
    explicit state(output_file& o): out(o) {}
};

recording_hdf5_writer::recording_hdf5_writer(output_file& out, const std::vector<std::pair<std::string, std::string>>& notes):
    state_(std::make_unique<state>(out)) {
    guarded([&] {
        // The 1.8 file format checksums every piece of metadata, so a file damaged later is
        // refused by the library with a checksum error instead of being misread (HDF5 reading
        // corrupt unchecksummed headers can even crash). Readable by every HDF5 since 1.8.
        H5::FileAccPropList access;
        access.setLibverBounds(H5F_LIBVER_V18, H5F_LIBVER_LATEST);
        state_->file = H5::H5File(out.path_to_write(), H5F_ACC_TRUNC, H5::FileCreatPropList::DEFAULT, access);
        root_attributes(state_->file, notes);
        state_->units = state_->file.createGroup("units", utf8_names());
    });
}

recording_hdf5_writer::~recording_hdf5_writer() = default;

template <class F>
void recording_hdf5_writer::guarded(F&& f) {
    try {
        f();
    } catch (const H5::Exception& e) {
        throw output_error(state_->out.target().path, hdf5::write_failure(e, state_->out.path_to_write()));
    }
}

void recording_hdf5_writer::add_unit(const std::string& id, const std::vector<seconds>& spike_times,
                                     const std::string& source) {
    check_unit_id(id, source);
    check_times(id, spike_times, source);
    guarded([&] { write_times(state_->units.createGroup(id, utf8_names()), "spike_times", spike_times); });
}

void recording_hdf5_writer::finish(const recording& rec) {
    // A file that the reader would refuse is not worth keeping: ids and trials as validate() sees them.
    validate(rec);
    check_writable(rec);
    guarded([&] {
        {
            const H5::Group trials = state_->file.createGroup("trials", utf8_names());
            write_times(trials, "start_time", rec.trial_start);
            write_times(trials, "stop_time", rec.trial_stop);
            if (rec.has_stimulus()) write_labels(trials, "stimulus", rec.stimulus);
        }
        state_->units.close();
    });
    // Every object opened here is closed by now, so close() really closes the file.
    guarded([&] { state_->file.close(); });
}

void write_recording_hdf5(const recording& rec, output_file& out, const std::vector<std::pair<std::string, std::string>>& notes) {
    // A file that the reader would refuse is not worth writing.
    validate(rec);
    check_writable(rec);
    recording_hdf5_writer writer(out, notes);
    for (std::size_t u = 0; u < rec.units.size(); ++u) writer.add_unit(rec.units[u].id, *rec.spikes(u), rec.source);
    writer.finish(rec);
}

void write_recording_hdf5(const recording& rec, const std::string& path,
                          const std::vector<std::pair<std::string, std::string>>& notes) {
    output_file out(output_target::replacing(path), output_file::content::by_path);
    write_recording_hdf5(rec, out, notes);
    finish_outputs({{&out, nullptr}});
}

}  // namespace rastrum
