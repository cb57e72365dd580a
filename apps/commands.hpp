#pragma once
// One function per subcommand; each returns the process exit code or throws (main maps errors).

namespace rastrum::app {
int run_survey(int argc, char** argv);
int run_direct(int argc, char** argv);
int run_synth(int argc, char** argv);
int run_stiminfo(int argc, char** argv);
int run_convert(int argc, char** argv);
int run_batch(int argc, char** argv);
int run_figures(int argc, char** argv);
}  // namespace rastrum::app
