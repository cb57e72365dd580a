#pragma once
/// A batch plan: which recordings to analyse, by which analyses with which options, and where the
/// results go. Plans are written in Boost.Program_options' config-file syntax; every relative path
/// in a plan is relative to the plan's own folder, so a copied folder works from anywhere.
///
///     output = results               # the output folder
///     [inputs]                       # or [inputs.NAME], a named group
///     files = sessions/*.h5          # one pattern or path a line; each must match a file
///     [direct]                       # or [direct.NAME]; keys are the command's own options
///     bin-ms = 2,4
///     inputs = NAME                  # optional: only these groups (comma-separated); the one key
///                                    # of an analysis section that is not a command option
#include <filesystem>
#include <map>
#include <string>
#include <vector>

namespace rastrum {

/// An output an analysis command writes when given `option PATH`. In a batch it is named
/// <section><extension> inside the input's task folder.
struct output_kind {
    std::string option;     // "--json"
    std::string extension;  // ".json"
};

/// A subcommand of rastrum the batch can run as `rastrum NAME FILE options`, and the outputs it asks
/// of it. Adding an output to every task of a kind is adding it to `outputs` in analysis_kinds().
struct analysis_kind {
    std::string name;
    std::vector<output_kind> outputs;
};

/// Every kind a plan may name as a section.
const std::vector<analysis_kind>& analysis_kinds();
/// nullptr when `name` is not a kind.
const analysis_kind* find_analysis_kind(const std::string& name);

/// One option of an analysis command, as the command describes itself (`--describe-options`).
struct option_facts {
    std::string name;         // without the leading "--"
    bool takes_value = true;  // false: a switch, written `name = true` or `name = false` in a plan
    bool repeatable = false;  // may be given on several lines
};
/// The options of each analysis kind, by kind name.
using option_catalogue = std::map<std::string, std::vector<option_facts>>;

/// A key of an analysis section, normalised: switches set to false are dropped, switches set to
/// true have an empty value.
struct plan_setting {
    std::string key;
    std::string value;
    bool is_switch = false;
    int line = 0;
};

struct plan_input {
    std::string path;                 // as the analyses are given it: relative to the plan's folder unless written absolute
    std::string task_folder;          // its outputs' folder inside the output folder, e.g. "day1/units"
    std::vector<std::string> groups;  // the input sections that list it: "" for [inputs], NAME for [inputs.NAME]
};

struct plan_analysis {
    std::string section;               // "stiminfo.latency": also the name of its output files
    std::string kind;                  // "stiminfo"
    int line = 0;                      // of the [section] header
    std::vector<std::string> groups;   // from `inputs =`; empty: every input
    std::vector<plan_setting> settings;  // sorted by key (stable, so repeated keys keep their order)
};

struct batch_plan {
    std::string path;              // as given
    std::filesystem::path folder;  // absolute: the plan's own folder, where the analyses run
    std::string output_folder;     // as written: relative to `folder` unless absolute
    std::vector<plan_input> inputs;
    std::vector<plan_analysis> analyses;
};

/// Reads a plan and checks everything that needs no analysis: its syntax, sections and keys (against
/// `catalogue`), switch values, repeated keys, input groups, and that every pattern matches a file.
/// Throws usage_error "PLAN:LINE: ..." naming the section and key, or input_error when the plan
/// cannot be read.
batch_plan read_batch_plan(const std::string& path, const option_catalogue& catalogue);

/// The options an analysis passes to its command, e.g. {"--bin-ms", "2,4", "--binary"}: the
/// normalised list a task's key covers.
std::vector<std::string> command_options(const plan_analysis& analysis);

/// One (input, analysis) pair of the plan, with its outputs relative to the output folder, in the
/// order of analysis_kind::outputs.
struct planned_task {
    std::size_t input = 0;
    std::size_t analysis = 0;
    std::vector<std::string> outputs;
};

/// Every task, input by input in plan order, each input with the analyses that take its groups.
std::vector<planned_task> plan_tasks(const batch_plan& plan);

/// A path of the plan (relative to its folder unless absolute) as this process can open it.
std::filesystem::path plan_resolve(const batch_plan& plan, const std::string& path);

}  // namespace rastrum
