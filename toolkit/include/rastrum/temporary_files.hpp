#pragma once
/// The temporaries of this process: their names, a registry of those not yet renamed into place or
/// removed (so that a command stopped by a signal can remove them before it ends; the signal
/// handling itself belongs to the command, apps/stop_signals.hpp), and the removal of temporaries
/// that a process killed outright (SIGKILL, a power cut) left behind.
///
/// Every temporary is named FINAL.tmp-PID-N: beside the file or folder it will replace (so the
/// rename is atomic), PID this process, N from a process-wide atomic counter.
#include <string>

namespace rastrum {

/// A fresh temporary name for `final_path`: FINAL.tmp-PID-N. Thread-safe.
std::string temporary_name_for(const std::string& final_path);

/// Records a temporary this process has made (a file, or a folder with its contents), until
/// forget_temporary. Thread-safe; the registry is never destroyed, so a signal during exit is safe.
void register_temporary(const std::string& path);
void forget_temporary(const std::string& path);

/// While one lives, remove_temporaries_and_hold waits: a group of renames (several outputs
/// committed together) completes before a signal can end the process, so a stopped run has
/// replaced all of its outputs or none. Re-entrant in one thread.
class temporaries_held {
public:
    temporaries_held();
    ~temporaries_held();
    temporaries_held(const temporaries_held&) = delete;
    temporaries_held& operator=(const temporaries_held&) = delete;
};

/// Removes every registered temporary and keeps the registry held for the rest of the process, so
/// that no other thread renames a temporary into place or makes a new one. Only for a command that
/// ends the process straight after (its handling of SIGINT, SIGTERM and SIGHUP). Returns how many
/// it removed.
std::size_t remove_temporaries_and_hold();

/// Removes from `folder` the temporaries of `name` (NAME.tmp-PID-N, and NAME.tmp-PID of older
/// versions) whose process PID no longer runs; a live process's temporaries, and anything else,
/// are left alone. Errors (a folder that cannot be listed, a file of another user) are ignored:
/// this is tidying, never a reason to fail.
void remove_stale_temporaries(const std::string& folder, const std::string& name);

}  // namespace rastrum
