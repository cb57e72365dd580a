#pragma once
// How a command other than `batch` (which stops its task and records it, child_process.hpp) ends
// on SIGINT, SIGTERM or SIGHUP: its temporaries are removed and it ends by that signal, which a
// shell reports as exit status 128 + N. Nothing partial is left and no output is replaced halfway.

#include <string>

namespace rastrum::app {

/// Call first in main, before any thread starts: the three signals are blocked in every thread
/// and a thread of their own waits for them (sigwait), so the cleanup runs as ordinary code rather
/// than in a signal handler, where almost nothing is safe. SIGPIPE is ignored, so that writing to a
/// closed pipe is an error with a message (exit 6) rather than a death that leaves temporaries.
/// A signal the process was started with ignored (nohup's SIGHUP) stays ignored.
/// `command` names the command in the line it prints when stopped.
void end_cleanly_on_stop_signals(const std::string& command);

}  // namespace rastrum::app
