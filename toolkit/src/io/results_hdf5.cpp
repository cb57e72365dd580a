#include "hdf5_read_helpers.hpp"

#include <rastrum/curves_output.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>

#include <cstdint>
#include <map>

namespace rastrum {

namespace {

/// A unit id or label as one HDF5 link name: '/' cannot appear in one and "." means the group itself,
/// so '%', '/' and a lone '.' are percent-encoded (decode %XX to get the original back).
std::string link_name(const std::string& text) {
    if (text == ".") return "%2E";
    std::string out;
    for (char c: text) {
        if (c == '%') {
            out += "%25";
        } else if (c == '/') {
            out += "%2F";
        } else {
            out += c;
        }
    }
    return out.empty() ? "%00" : out;
}

H5::LinkCreatPropList utf8_links() {
    H5::LinkCreatPropList lcpl;
    lcpl.setCharEncoding(H5T_CSET_UTF8);
    lcpl.setCreateIntermediateGroup(true);
    return lcpl;
}

/// Fixed-length UTF-8 text, so it sits in the checksummed object header (not the global heap).
void text_attribute(const H5::H5Object& object, const std::string& name, const std::string& value) {
    H5::StrType type(H5::PredType::C_S1, std::max<std::size_t>(1, value.size()));
    type.setCset(H5T_CSET_UTF8);
    type.setStrpad(H5T_STR_NULLPAD);
    const H5::DataSpace scalar(H5S_SCALAR);
    const std::string padded = value.empty() ? std::string(1, '\0') : value;
    object.createAttribute(name, type, scalar).write(type, padded.data());
}

void numbers_dataset(const H5::Group& group, const std::string& name, const std::vector<double>& values,
                     const std::string& quantity, const std::string& unit, const std::string& description) {
    const hsize_t n = values.size();
    const H5::DataSpace space(1, &n);
    const H5::DataSet ds = group.createDataSet(name, H5::PredType::IEEE_F64LE, space);
    if (n > 0) ds.write(values.data(), H5::PredType::NATIVE_DOUBLE);
    text_attribute(ds, "quantity", quantity);
    text_attribute(ds, "units", unit);
    text_attribute(ds, "description", description);
}

std::string series_path(const std::string& analysis, const curve_series& c) {
    std::string path = "/" + analysis + "/" + link_name(c.unit) + "/" + c.curve;
    if (c.stimulus) path += "/stimulus_" + link_name(*c.stimulus);
    if (c.bin_ms) path += "/bin_" + format_number(*c.bin_ms) + "ms";
    if (c.letters) path += "/letters_" + std::to_string(*c.letters);
    if (c.window_ms) path += "/window_" + format_number(c.window_ms->first) + "-" + format_number(c.window_ms->second) + "ms";
    return path + "/" + link_name(c.series);
}

void write_series(const H5::H5File& file, const std::string& analysis, const curve_series& c) {
    const H5::Group g = file.createGroup(series_path(analysis, c), utf8_links());
    const std::string what = c.series + ": " + c.y.quantity + " against " + c.x.quantity + ", unit " + c.unit;
    text_attribute(g, "description", what);
    numbers_dataset(g, "x", c.x.values, c.x.quantity, c.x.unit, c.x.quantity + " of each point");
    numbers_dataset(g, "y", c.y.values, c.y.quantity, c.y.unit, what);
    if (!c.y_low.empty()) {
        numbers_dataset(g, "y_ci95_low", c.y_low, c.y.quantity, c.y.unit, "lower end of the 95% band of y");
        numbers_dataset(g, "y_ci95_high", c.y_high, c.y.quantity, c.y.unit, "upper end of the 95% band of y");
    }
    if (!c.in_fit.empty()) {
        const hsize_t n = c.in_fit.size();
        std::vector<std::uint8_t> flags(c.in_fit.begin(), c.in_fit.end());
        const H5::DataSpace space(1, &n);
        const H5::DataSet ds = g.createDataSet("in_fit", H5::PredType::STD_U8LE, space);
        ds.write(flags.data(), H5::PredType::NATIVE_UINT8);
        text_attribute(ds, "units", "");
        text_attribute(ds, "description", "1 where the point was used by the fit");
    }
    if (c.fit) {
        numbers_dataset(g, "fit_coefficients", c.fit->coefficients, "polynomial coefficients", "",
                        "y = c0 + c1 x + c2 x^2 ...; c0 is the value extrapolated to x = 0");
        numbers_dataset(g, "fit_x_range", {c.fit->x_range.first, c.fit->x_range.second}, c.x.quantity, c.x.unit,
                        "range of x the fit was made over");
    }
}

}  // namespace

void write_results_hdf5(const std::string& path, const nlohmann::ordered_json& result,
                        const std::vector<curve_series>& curves, const std::string& shown_as) {
    const hdf5::error_capture capture;
    try {
        H5::FileAccPropList access;
        access.setLibverBounds(H5F_LIBVER_V18, H5F_LIBVER_LATEST);
        H5::H5File file(path, H5F_ACC_TRUNC, H5::FileCreatPropList::DEFAULT, access);
        const std::string analysis = result.value("analysis", std::string("results"));
        text_attribute(file, "layout", "rastrum-results");
        text_attribute(file, "tool", result.value("tool", std::string("rastrum")));
        text_attribute(file, "version", result.value("version", std::string()));
        text_attribute(file, "analysis", analysis);
        // A dataset, not an attribute: attributes beyond 64 KiB need dense storage some readers lack.
        const std::string whole = result.dump();
        H5::StrType type(H5::PredType::C_S1, std::max<std::size_t>(1, whole.size()));
        type.setCset(H5T_CSET_UTF8);
        type.setStrpad(H5T_STR_NULLPAD);
        const H5::DataSet json_text = file.createDataSet("result_json", type, H5::DataSpace(H5S_SCALAR));
        json_text.write(whole.data(), type);
        text_attribute(json_text, "description", "the whole result as JSON (the same as the --json output, without curves)");
        for (const auto& c: curves) write_series(file, analysis, c);
        file.close();
    } catch (const H5::Exception& e) {
        throw output_error(shown_as.empty() ? path : shown_as, hdf5::write_failure(e, path));
    }
}

}  // namespace rastrum
