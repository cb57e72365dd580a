#include <rastrum/batch_plan.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/file_patterns.hpp>

#include <boost/program_options/parsers.hpp>

#include <algorithm>
#include <fstream>
#include <set>
#include <sstream>

namespace rastrum {

namespace fs = std::filesystem;
namespace po = boost::program_options;

const std::vector<analysis_kind>& analysis_kinds() {
    static const std::vector<analysis_kind> kinds{
        {"direct", {{"--json", ".json"}, {"--csv", ".csv"}, {"--curves-csv", ".curves.csv"}, {"--h5", ".results.h5"}}},
        {"stiminfo", {{"--json", ".json"}, {"--csv", ".csv"}, {"--curves-csv", ".curves.csv"}, {"--h5", ".results.h5"}}},
    };
    return kinds;
}

const analysis_kind* find_analysis_kind(const std::string& name) {
    for (const auto& kind: analysis_kinds()) {
        if (kind.name == name) return &kind;
    }
    return nullptr;
}

namespace {

constexpr const char* inputs_section = "inputs";
constexpr const char* group_key = "inputs";
constexpr const char* files_key = "files";
constexpr const char* output_key = "output";

std::string trimmed(const std::string& text) {
    const auto first = text.find_first_not_of(" \t\r\n");
    if (first == std::string::npos) return {};
    return text.substr(first, text.find_last_not_of(" \t\r\n") - first + 1);
}

// Where each section header and key sits. Mirrors Boost's config-file reader (a '#' starts a
// comment anywhere, lines are trimmed, "[name]" opens a section, "key = value" sets a key), which
// reports neither; read_batch_plan checks that both readers saw the same keys.
struct scanned_plan {
    struct header {
        std::string section;
        int line;
    };
    struct entry {
        std::string section;
        std::string key;
        int line;
    };
    std::vector<header> headers;
    std::vector<entry> entries;
    int invalid_line = 0;
    std::string invalid_text;
};

scanned_plan scan_plan(const std::string& text) {
    scanned_plan scan;
    std::istringstream in(text);
    std::string raw, section;
    for (int number = 1; std::getline(in, raw); ++number) {
        const std::string line = trimmed(raw.substr(0, raw.find('#')));
        if (line.empty()) continue;
        if (line.front() == '[' && line.back() == ']') {
            section = line.substr(1, line.size() - 2);
            scan.headers.push_back({section, number});
        } else if (const auto equals = line.find('='); equals != std::string::npos) {
            scan.entries.push_back({section, trimmed(line.substr(0, equals)), number});
        } else if (scan.invalid_line == 0) {
            scan.invalid_line = number;
            scan.invalid_text = line;
        }
    }
    return scan;
}

std::string read_whole(const std::string& path) {
    std::error_code ec;
    if (fs::is_directory(path, ec)) throw input_error(path, "", "a plan file", "a folder");
    std::ifstream in(path, std::ios::binary);
    if (!in) throw input_error(path, "", "a readable plan file", "no such file or no permission");
    std::ostringstream text;
    text << in.rdbuf();
    return text.str();
}

bool is_name(const std::string& text) {
    return !text.empty() && text.find_first_not_of("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_-") ==
                                std::string::npos;
}

std::vector<std::string> comma_list(const std::string& text) {
    std::vector<std::string> items;
    std::istringstream in(text);
    for (std::string item; std::getline(in, item, ',');) items.push_back(trimmed(item));
    return items;
}

std::string shown_section(const std::string& section) { return "[" + section + "]"; }

std::string analysis_sections() {
    std::string text;
    for (const auto& kind: analysis_kinds()) text += ", [" + kind.name + "], [" + kind.name + ".NAME]";
    return text.substr(2);
}

std::string known_sections() { return "[inputs], [inputs.NAME], " + analysis_sections(); }

// Reads one plan: collects settings section by section, then resolves the inputs.
class plan_reader {
public:
    plan_reader(std::string path, const option_catalogue& catalogue): path_(std::move(path)), catalogue_(catalogue) {}

    batch_plan read() {
        const std::string text = read_whole(path_);
        plan_.path = path_;
        plan_.folder = fs::absolute(path_).lexically_normal().parent_path();
        const scanned_plan scan = scan_plan(text);
        if (scan.invalid_line) {
            fail(scan.invalid_line, "expected 'key = value' or '[section]', found '" + scan.invalid_text + "'");
        }
        std::istringstream in(text);
        po::parsed_options parsed(nullptr);
        try {
            parsed = po::parse_config_file(in, po::options_description(), true);
        } catch (const po::error& e) {
            throw usage_error(path_ + ": " + e.what());
        }
        if (parsed.options.size() != scan.entries.size()) throw internal_error("plan reader and Boost disagree on " + path_);
        open_sections(scan);
        for (std::size_t i = 0; i < parsed.options.size(); ++i) {
            const auto& entry = scan.entries[i];
            const std::string full = entry.section.empty() ? entry.key : entry.section + "." + entry.key;
            if (parsed.options[i].string_key != full) throw internal_error("plan reader and Boost disagree on " + full);
            const auto& values = parsed.options[i].value;
            take(entry, values.empty() ? std::string() : values.front());
        }
        finish();
        return plan_;
    }

private:
    [[noreturn]] void fail(int line, const std::string& message) const {
        throw usage_error(path_ + (line > 0 ? ":" + std::to_string(line) : std::string()) + ": " + message);
    }

    void open_sections(const scanned_plan& scan) {
        std::map<std::string, int> seen;
        for (const auto& h: scan.headers) {
            if (const auto it = seen.find(h.section); it != seen.end()) {
                fail(h.line, shown_section(h.section) + " appears twice (first at line " + std::to_string(it->second) +
                                 "); give each section once");
            }
            seen[h.section] = h.line;
            const auto dot = h.section.find('.');
            const std::string kind = h.section.substr(0, dot);
            const bool named = dot != std::string::npos;
            if (named && !is_name(h.section.substr(dot + 1))) {
                fail(h.line, "section " + shown_section(h.section) +
                                 ": a section's NAME may hold letters, digits, '-' and '_' only");
            }
            if (kind == inputs_section) {
                groups_[named ? h.section.substr(dot + 1) : std::string()] = {h.line, {}};
            } else if (find_analysis_kind(kind)) {
                plan_analysis a;
                a.section = h.section;
                a.kind = kind;
                a.line = h.line;
                analysis_index_[h.section] = plan_.analyses.size();
                plan_.analyses.push_back(a);
            } else {
                fail(h.line, "unknown section " + shown_section(h.section) + ": a plan has " + known_sections());
            }
        }
    }

    void take(const scanned_plan::entry& entry, const std::string& value) {
        const std::string& section = entry.section;
        if (section.empty()) {
            if (entry.key != output_key) {
                fail(entry.line, "unknown key '" + entry.key + "' at the top of the plan: only 'output = FOLDER' goes there");
            }
            if (output_line_) fail(entry.line, "'output' is given twice (first at line " + std::to_string(output_line_) + ")");
            if (value.empty()) fail(entry.line, "'output' needs a folder");
            output_line_ = entry.line;
            plan_.output_folder = value;
            return;
        }
        const auto dot = section.find('.');
        if (section.substr(0, dot) == inputs_section) {
            if (entry.key != files_key) {
                fail(entry.line, shown_section(section) + ": unknown key '" + entry.key + "': an input section takes 'files = PATTERN' lines");
            }
            if (value.empty()) fail(entry.line, shown_section(section) + ": 'files' needs a path or pattern");
            const std::string group = dot == std::string::npos ? std::string() : section.substr(dot + 1);
            ++groups_[group].patterns;
            patterns_.push_back({value, group, entry.line});
            return;
        }
        take_option(plan_.analyses[analysis_index_.at(section)], entry, value);
    }

    void take_option(plan_analysis& a, const scanned_plan::entry& entry, const std::string& value) {
        const std::string where = shown_section(a.section) + " " + entry.key + ": ";
        if (entry.key == group_key) {
            if (!a.groups.empty()) fail(entry.line, where + "given twice; name every group on one line, comma-separated");
            a.groups = comma_list(value);
            for (const auto& g: a.groups) {
                if (!is_name(g)) fail(entry.line, where + "expected names of [inputs.NAME] sections, comma-separated, found '" + value + "'");
            }
            group_lines_[a.section] = entry.line;
            return;
        }
        const analysis_kind& kind = *find_analysis_kind(a.kind);
        if (const output_kind* out = output_option(kind, entry.key)) {
            fail(entry.line, where + "set by the batch: each task writes OUTPUT/<input>/" + a.section + out->extension +
                                 "; remove it from the plan");
        }
        if (entry.key == "threads") fail(entry.line, where + "set by 'rastrum batch --threads'; remove it from the plan");
        if (entry.key == "quiet") fail(entry.line, where + "set by the batch, whose tasks always run quietly; remove it from the plan");
        const option_facts* facts = find_option(a.kind, entry.key);
        if (!facts) {
            fail(entry.line, where + "unknown key: 'rastrum " + a.kind + "' has no option --" + entry.key +
                                 " (plan keys are the command's option names without '--'; 'rastrum " + a.kind +
                                 " --help' lists them)");
        }
        for (const auto& s: a.settings) {
            if (s.key == entry.key && !facts->repeatable) {
                fail(entry.line, where + "given twice (first at line " + std::to_string(s.line) + "); --" + entry.key +
                                     " takes one value");
            }
        }
        plan_setting s{entry.key, value, !facts->takes_value, entry.line};
        if (s.is_switch) {
            static const std::set<std::string> yes{"true", "yes", "on", "1"}, no{"false", "no", "off", "0"};
            if (no.count(value)) return;
            if (!yes.count(value)) fail(entry.line, where + "a switch: expected true or false, found '" + value + "'");
            s.value.clear();
        } else if (value.empty()) {
            fail(entry.line, where + "needs a value");
        }
        a.settings.push_back(s);
    }

    static const output_kind* output_option(const analysis_kind& kind, const std::string& key) {
        for (const auto& o: kind.outputs) {
            if (o.option == "--" + key) return &o;
        }
        return nullptr;
    }

    const option_facts* find_option(const std::string& kind, const std::string& key) const {
        const auto it = catalogue_.find(kind);
        if (it == catalogue_.end()) throw internal_error("no option list for " + kind);
        for (const auto& facts: it->second) {
            if (facts.name == key) return &facts;
        }
        return nullptr;
    }

    void finish() {
        if (plan_.output_folder.empty()) fail(0, "no 'output = FOLDER' at the top of the plan (where the results go, relative to the plan's folder)");
        if (groups_.empty()) fail(0, "no [inputs] section: list the recordings with 'files = PATTERN' lines");
        if (plan_.analyses.empty()) fail(0, "no analysis section: add one of " + analysis_sections());
        for (auto& a: plan_.analyses) {
            for (const auto& g: a.groups) {
                if (!groups_.count(g)) {
                    fail(group_lines_.at(a.section), shown_section(a.section) + " inputs: no section [inputs." + g + "]");
                }
            }
            std::stable_sort(a.settings.begin(), a.settings.end(),
                             [](const plan_setting& x, const plan_setting& y) { return x.key < y.key; });
        }
        resolve_inputs();
    }

    void resolve_inputs() {
        std::map<std::string, std::size_t> index;
        for (const auto& [name, group]: groups_) {
            if (group.patterns == 0) {
                fail(group.line, shown_section(name.empty() ? inputs_section : std::string(inputs_section) + "." + name) +
                                     " lists no files: add 'files = PATTERN' lines");
            }
        }
        // Inputs in the order the plan first names them.
        for (const auto& pattern: patterns_) {
            const auto files = match_files(plan_.folder, pattern.text);
            if (files.empty()) {
                fail(pattern.line, "files = " + pattern.text + ": " +
                                       (has_wildcards(pattern.text) ? "matches no file" : "no such file") +
                                       (fs::path(pattern.text).is_absolute() ? std::string() : " in " + plan_.folder.string()));
            }
            for (const auto& f: files) {
                auto [it, added] = index.emplace(f, plan_.inputs.size());
                if (added) plan_.inputs.push_back({f, task_folder_for(f), {}});
                auto& groups = plan_.inputs[it->second].groups;
                if (std::find(groups.begin(), groups.end(), pattern.group) == groups.end()) groups.push_back(pattern.group);
            }
        }
        std::map<std::string, std::string> owner;
        for (const auto& in: plan_.inputs) {
            if (in.task_folder == "manifest.json" || in.task_folder == "manifest.lock") {
                fail(0, "input " + in.path + " would put its results in " + in.task_folder + ", the batch's own file; rename the input");
            }
            const auto [it, added] = owner.emplace(in.task_folder, in.path);
            if (!added) {
                fail(0, "inputs " + it->second + " and " + in.path + " would share the results folder " + in.task_folder +
                            "; rename one of them");
            }
        }
    }

    // The input's place relative to the plan's folder, without its extension: unique for distinct
    // inputs in distinct folders, and unchanged when other inputs are added to the plan.
    std::string task_folder_for(const std::string& input) const {
        fs::path relative = fs::path(input);
        if (relative.is_absolute()) relative = relative.lexically_relative(plan_.folder);
        fs::path folder;
        for (const auto& part: relative.lexically_normal()) folder /= part == ".." ? fs::path("_up_") : part;
        folder.replace_extension();
        return folder.string();
    }

    struct pattern_line {
        std::string text;
        std::string group;
        int line;
    };
    struct input_group {
        int line = 0;
        std::size_t patterns = 0;
    };

    std::string path_;
    const option_catalogue& catalogue_;
    batch_plan plan_;
    int output_line_ = 0;
    std::map<std::string, input_group> groups_;
    std::vector<pattern_line> patterns_;
    std::map<std::string, std::size_t> analysis_index_;
    std::map<std::string, int> group_lines_;
};

}  // namespace

batch_plan read_batch_plan(const std::string& path, const option_catalogue& catalogue) {
    return plan_reader(path, catalogue).read();
}

std::vector<std::string> command_options(const plan_analysis& analysis) {
    std::vector<std::string> options;
    for (const auto& s: analysis.settings) {
        options.push_back("--" + s.key);
        if (!s.is_switch) options.push_back(s.value);
    }
    return options;
}

std::vector<planned_task> plan_tasks(const batch_plan& plan) {
    std::vector<planned_task> tasks;
    for (std::size_t i = 0; i < plan.inputs.size(); ++i) {
        const auto& groups = plan.inputs[i].groups;
        for (std::size_t a = 0; a < plan.analyses.size(); ++a) {
            const auto& wanted = plan.analyses[a].groups;
            const bool takes = wanted.empty() || std::any_of(groups.begin(), groups.end(), [&](const std::string& g) {
                                   return std::find(wanted.begin(), wanted.end(), g) != wanted.end();
                               });
            if (!takes) continue;
            planned_task t{i, a, {}};
            for (const auto& out: find_analysis_kind(plan.analyses[a].kind)->outputs) {
                t.outputs.push_back((fs::path(plan.inputs[i].task_folder) / (plan.analyses[a].section + out.extension)).string());
            }
            tasks.push_back(t);
        }
    }
    return tasks;
}

fs::path plan_resolve(const batch_plan& plan, const std::string& path) {
    const fs::path p(path);
    return p.is_absolute() ? p : plan.folder / p;
}

}  // namespace rastrum
