#include "csv_reader.hpp"

#include <rastrum/format_detection.hpp>
#include <rastrum/recording_mat.hpp>
#include <rastrum/recording_nwb.hpp>
#include <rastrum/recording_source.hpp>

namespace rastrum {

namespace {
offered_group csv_columns(const std::string& path) {
    const csv_reader csv(path);
    offered_group g{path, "CSV", {}};
    for (const auto& name: csv.header()) g.items.emplace_back(name, "");
    return g;
}
}  // namespace

source_contents describe_source(const recording_source& source) {
    const detected_format found = source_format(source);
    source_contents c{found.format, found.detail, {}};
    switch (found.format) {
    case recording_format::native: break;
    case recording_format::nwb:
        for (auto& t: nwb_tables(source.path)) c.groups.push_back({t.path, t.type, std::move(t.columns)});
        break;
    case recording_format::mat: c.groups.push_back({"variables", "MAT-file", mat_variables(source.path)}); break;
    case recording_format::text:
        c.groups.push_back(csv_columns(source.path));
        if (source.trials_csv) c.groups.push_back(csv_columns(*source.trials_csv));
        break;
    }
    return c;
}

}  // namespace rastrum
