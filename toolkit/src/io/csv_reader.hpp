#pragma once
// Reading CSV input row by row (RFC 4180: fields quoted with ", doubled quotes inside, line breaks
// inside quotes; LF or CRLF line ends), so a large spikes file is never held twice. Lines starting
// with '#' before the header are comments (rastrum's own CSV outputs start with one); blank lines
// are skipped. Every error names the file and the line.
#include <cstddef>
#include <fstream>
#include <string>
#include <vector>

namespace rastrum {

class csv_reader {
public:
    /// Opens `path` and reads its header line. Throws input_error when the file cannot be read or
    /// has no header.
    explicit csv_reader(std::string path);

    const std::string& path() const { return path_; }
    const std::vector<std::string>& header() const { return header_; }
    /// Index of the header column `name`, or npos.
    std::size_t column(const std::string& name) const;

    /// The next row's fields, exactly as many as the header has (else input_error at its line);
    /// false at the end of the file.
    bool next(std::vector<std::string>& fields);
    /// The line the last row returned by next() started on (from 1).
    std::size_t line() const { return row_line_; }
    /// "line 12, time_s": where field `column` of the last row is, for messages.
    std::string where(std::size_t column) const;

private:
    // One record, skipping blank lines (and, for the header, comment lines and a UTF-8 byte order mark).
    bool read_record(std::vector<std::string>& fields, bool header);

    std::string path_;
    std::ifstream in_;
    std::vector<std::string> header_;
    std::size_t next_line_ = 1;  // the line the next read starts on
    std::size_t row_line_ = 0;
};

/// Whether `head` (the first bytes of a file) starts, after comment lines, with a CSV header that
/// names the columns unit and time_s: the sign of a spikes CSV.
bool looks_like_spikes_header(const std::string& head);

/// True, with `value` set, when all of `text` is a decimal number (a leading '+' allowed; "nan" and
/// "inf" parse too, for the caller to refuse as not finite). Independent of the locale.
bool parse_decimal(const std::string& text, double& value);

}  // namespace rastrum
