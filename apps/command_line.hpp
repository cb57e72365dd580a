#pragma once
// What every subcommand shares: parsing of option values, the usage-error convention, and
// writing outputs so that a failure leaves nothing half-written.
#include <boost/program_options.hpp>

#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace rastrum::app {

namespace po = boost::program_options;

/// "A-B" or "A" -> (A, B). Throws usage_error naming `option` on anything else.
std::pair<int, int> parse_int_range(const std::string& text, const std::string& option);
/// "2,4,8" -> {2, 4, 8}; each a finite number. Throws usage_error naming `option`.
std::vector<double> parse_number_list(const std::string& text, const std::string& option);
/// "a,b,c" -> {"a", "b", "c"} (empty items rejected).
std::vector<std::string> parse_text_list(const std::string& text, const std::string& option);

/// Parses argv for one subcommand: options, a positional list, --help. Returns false when help was
/// printed (the caller then returns 0). Boost's parse errors become usage_error.
bool parse_command(int argc, char** argv, const std::string& command, const std::string& synopsis,
                   const po::options_description& options, const po::positional_options_description& positional,
                   po::variables_map& vm);

/// The whole command line as typed, for provenance.
std::string joined_command_line(int argc, char** argv);

/// Checks, before any work is done, that each output path can be written: its folder exists, it is
/// not an input, and no two outputs share a path. Throws usage_error.
void check_output_paths(const std::vector<std::optional<std::string>>& outputs, const std::vector<std::string>& inputs);

/// Status and progress lines for people go to stderr, never stdout.
void note(bool quiet, const std::string& text);

}  // namespace rastrum::app
