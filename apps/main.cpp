// rastrum: the command. Parses the subcommand, runs it, and maps every failure to one exit code
// (documented in --help and README): 0 success, 1 unexpected, 2 usage, 3 invalid input,
// 4 data that cannot support the analysis, 6 an output cannot be written; batch adds 5 (some task
// failed); 128 + N when signal N stopped it.
#include "commands.hpp"
#include "stop_signals.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/version.hpp>

#include <cstring>
#include <iostream>
#include <string>

namespace {

constexpr int exit_unexpected = 1, exit_usage = 2, exit_input = 3, exit_insufficient = 4, exit_output = 6;

void print_overview() {
    std::cout << "rastrum " << rastrum::version()
              << ": how much information spike trains carry about a stimulus\n\n"
                 "Usage: rastrum COMMAND [options]\n\n"
                 "Commands:\n"
                 "  survey   what a recording holds: units, spikes in and outside trials, trials, labels\n"
                 "  direct   direct method: information rate (bits/s) and bits per spike about a repeated\n"
                 "           stimulus, extrapolated to infinite data and word length\n"
                 "  stiminfo stimulus information: bits about which of several labelled conditions was shown,\n"
                 "           by six estimators, with a label-shuffle null and a bootstrap interval\n"
                 "  batch    run the analyses of a plan file over many recordings, each task in its own process,\n"
                 "           with a manifest; re-runs skip tasks whose inputs and options are unchanged\n"
                 "  figures  SVG figures and a report page (index.html) from results of direct and stiminfo\n"
                 "  synth    write a synthetic recording with known answers\n"
                 "  convert  write a recording read from NWB, a MAT-file, CSV (or the native layout) in the\n"
                 "           native layout, checked to read back identical\n\n"
                 "'rastrum COMMAND --help' describes each command.\n\n"
                 "Exit codes: 0 success, 1 unexpected failure, 2 usage error, 3 unreadable or invalid input,\n"
                 "4 the data cannot support the analysis, 6 an output cannot be written (permission, missing\n"
                 "folder, read-only or full file system); batch: 5 some task failed; 128 + N stopped by signal N\n"
                 "(SIGINT, SIGTERM, SIGHUP: unfinished outputs are removed first).\n\n"
                 "Outputs: a file (absent, regular, or a symlink to one, whose target is replaced) is written to\n"
                 "a temporary beside it and renamed, whole or not at all; '-', /dev/stdout, a FIFO or a character\n"
                 "device such as /dev/null is written directly; a folder, a socket or an empty name is a usage error.\n";
}

}  // namespace

int main(int argc, char** argv) {
    if (argc < 2) {
        print_overview();
        return exit_usage;
    }
    const std::string command = argv[1];
    if (command == "--help" || command == "-h" || command == "help") {
        print_overview();
        return 0;
    }
    if (command == "--version") {
        std::cout << "rastrum " << rastrum::version() << "\n";
        return 0;
    }
    try {
        // batch stops its running task and records it on these signals (child_process.hpp).
        if (command != "batch") rastrum::app::end_cleanly_on_stop_signals(command);
        // argv + 1: each subcommand sees its own name as argv[0].
        if (command == "survey") return rastrum::app::run_survey(argc - 1, argv + 1);
        if (command == "direct") return rastrum::app::run_direct(argc - 1, argv + 1);
        if (command == "synth") return rastrum::app::run_synth(argc - 1, argv + 1);
        if (command == "stiminfo") return rastrum::app::run_stiminfo(argc - 1, argv + 1);
        if (command == "convert") return rastrum::app::run_convert(argc - 1, argv + 1);
        if (command == "batch") return rastrum::app::run_batch(argc - 1, argv + 1);
        if (command == "figures") return rastrum::app::run_figures(argc - 1, argv + 1);
        std::cerr << "rastrum: error: unknown command '" << command << "'\nTry 'rastrum --help'.\n";
        return exit_usage;
    } catch (const rastrum::usage_error& e) {
        std::cerr << "rastrum " << command << ": error: " << e.what() << "\nTry 'rastrum " << command << " --help'.\n";
        return exit_usage;
    } catch (const rastrum::input_error& e) {
        std::cerr << "rastrum " << command << ": error: invalid input: " << e.what() << "\n";
        return exit_input;
    } catch (const rastrum::insufficient_data& e) {
        std::cerr << "rastrum " << command << ": error: the data cannot support this analysis: " << e.what() << "\n";
        return exit_insufficient;
    } catch (const rastrum::output_error& e) {
        std::cerr << "rastrum " << command << ": error: " << e.what() << "\n";
        return exit_output;
    } catch (const std::bad_alloc&) {
        std::cerr << "rastrum " << command << ": error: out of memory\n";
        return exit_unexpected;
    } catch (const std::exception& e) {
        std::cerr << "rastrum " << command << ": error: " << e.what() << "\n";
        return exit_unexpected;
    }
}
