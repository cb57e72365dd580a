#include "csv_reader.hpp"
#include "hdf5_read_helpers.hpp"
#include "loader_steps.hpp"

#include <rastrum/errors.hpp>

#include <charconv>
#include <cstdio>
#include <sstream>

namespace rastrum {

namespace {

constexpr const char* byte_order_mark = "\xef\xbb\xbf";

std::string trimmed(const std::string& s) {
    const auto first = s.find_first_not_of(" \t");
    if (first == std::string::npos) return "";
    return s.substr(first, s.find_last_not_of(" \t") - first + 1);
}

bool blank(const std::string& line) { return line.find_first_not_of(" \t\r") == std::string::npos; }

bool comment(const std::string& line) { return line.rfind('#', 0) == 0; }

// What was expected and found where a record cannot be split; empty `expected` when it could.
struct split_problem {
    std::string expected;
    std::string found;
};

// Splits one record. `more` supplies the next physical line when a quoted field runs past a line
// end; it returns false at the end of the file.
template <class More>
split_problem split_record(std::string line, std::vector<std::string>& fields, More more) {
    fields.clear();
    std::string field;
    bool quoted = false;     // inside quotes
    bool was_quoted = false; // this field was quoted (keep its spaces)
    std::size_t i = 0;
    while (true) {
        if (i == line.size()) {
            if (!quoted) break;
            std::string next;
            if (!more(next)) return {"a closing quote (\") for the field opened on this line", "the end of the file"};
            field += '\n';
            line = std::move(next);
            i = 0;
            continue;
        }
        const char c = line[i++];
        if (quoted) {
            if (c == '"' && i < line.size() && line[i] == '"') {
                field += '"';
                ++i;
            } else if (c == '"') {
                quoted = false;
            } else {
                field += c;
            }
        } else if (c == '"' && trimmed(field).empty() && !was_quoted) {
            quoted = was_quoted = true;
            field.clear();
        } else if (c == ',') {
            fields.push_back(was_quoted ? field : trimmed(field));
            field.clear();
            was_quoted = false;
        } else if (c == '\r' && i == line.size()) {
            // CRLF line end
        } else if (was_quoted && c != ' ' && c != '\t') {
            return {"a comma or the line end after a closing quote", "'" + std::string(1, c) + "'"};
        } else {
            field += c;
        }
    }
    fields.push_back(was_quoted ? field : trimmed(field));
    return {};
}

std::string not_text(const std::string& field) {
    if (field.find('\0') != std::string::npos) return "a NUL byte";
    const std::size_t bad = hdf5::invalid_utf8_offset(field);
    if (bad == std::string::npos) return "";
    char hex[8];
    std::snprintf(hex, sizeof hex, "0x%02x", static_cast<unsigned char>(field[bad]));
    return std::string("byte ") + hex + " at offset " + std::to_string(bad) + ", which is not UTF-8";
}

}  // namespace

csv_reader::csv_reader(std::string path): path_(std::move(path)) {
    require_readable_file(path_, "CSV file", "a");
    in_.open(path_, std::ios::binary);
    if (!read_record(header_, true)) throw input_error(path_, "", "a CSV file starting with a header line", "no header");
    for (std::size_t c = 0; c < header_.size(); ++c) {
        if (header_[c].empty()) {
            throw input_error(path_, "line " + std::to_string(row_line_), "a name for every header column",
                              "column " + std::to_string(c + 1) + " without one");
        }
        for (std::size_t d = 0; d < c; ++d) {
            if (header_[d] == header_[c]) {
                throw input_error(path_, "line " + std::to_string(row_line_), "header columns that differ",
                                  "\"" + header_[c] + "\" twice");
            }
        }
    }
}

bool csv_reader::read_record(std::vector<std::string>& fields, bool header) {
    std::string line;
    while (true) {
        if (!std::getline(in_, line)) return false;
        row_line_ = next_line_++;
        if (header && row_line_ == 1 && line.rfind(byte_order_mark, 0) == 0) line.erase(0, 3);
        if (!blank(line) && !(header && comment(line))) break;
    }
    const split_problem problem = split_record(line, fields, [&](std::string& next) {
        if (!std::getline(in_, next)) return false;
        ++next_line_;
        return true;
    });
    const std::string here = "line " + std::to_string(row_line_);
    if (!problem.expected.empty()) throw input_error(path_, here, problem.expected, problem.found);
    for (std::size_t c = 0; c < fields.size(); ++c) {
        const std::string bad = not_text(fields[c]);
        if (!bad.empty()) throw input_error(path_, here + ", field " + std::to_string(c + 1), "UTF-8 text", bad);
    }
    return true;
}

std::size_t csv_reader::column(const std::string& name) const {
    for (std::size_t c = 0; c < header_.size(); ++c) {
        if (header_[c] == name) return c;
    }
    return std::string::npos;
}

bool csv_reader::next(std::vector<std::string>& fields) {
    if (!read_record(fields, false)) return false;
    if (fields.size() != header_.size()) {
        std::string names;
        for (const auto& h: header_) names += (names.empty() ? "" : ",") + h;
        throw input_error(path_, "line " + std::to_string(row_line_),
                          std::to_string(header_.size()) + " fields, as in the header (" + names + ")",
                          std::to_string(fields.size()));
    }
    return true;
}

std::string csv_reader::where(std::size_t column) const {
    return "line " + std::to_string(row_line_) + ", " + header_[column];
}

bool looks_like_spikes_header(const std::string& head) {
    std::istringstream in(head);
    std::string line;
    while (std::getline(in, line)) {
        if (line.rfind(byte_order_mark, 0) == 0) line.erase(0, 3);
        if (blank(line) || comment(line)) continue;
        std::vector<std::string> fields;
        if (!split_record(line, fields, [](std::string&) { return false; }).expected.empty()) return false;
        bool unit = false, time = false;
        for (const auto& f: fields) {
            unit = unit || f == "unit";
            time = time || f == "time_s";
        }
        return unit && time;
    }
    return false;
}

bool parse_decimal(const std::string& text, double& value) {
    const char* first = text.data();
    const char* last = text.data() + text.size();
    if (first != last && *first == '+') ++first;
    if (first == last) return false;
    const auto [end, failed] = std::from_chars(first, last, value, std::chars_format::general);
    return failed == std::errc() && end == last;
}

}  // namespace rastrum
