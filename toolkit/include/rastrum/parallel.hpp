#pragma once
/// Deterministic parallelism: tasks are numbered, each writes only its own result slot, so the
/// outcome is the same for any number of threads.
#include <cstddef>
#include <functional>

namespace rastrum {

/// Runs task(i) for i in [0, n) on up to `threads` threads (0 means the hardware's count).
/// The first exception thrown by any task is rethrown here after all threads have stopped;
/// tasks not yet started are then skipped.
void parallel_for(std::size_t n, unsigned threads, const std::function<void(std::size_t)>& task);

/// Told after each finished task how many of how many are done; called from the worker threads,
/// one call at a time. Empty: nobody is told.
using progress_callback = std::function<void(std::size_t done, std::size_t total)>;

/// The same, telling `progress` after each task.
void parallel_for(std::size_t n, unsigned threads, const std::function<void(std::size_t)>& task,
                  const progress_callback& progress);

/// The same, telling each task which of the workers runs it (0 .. workers - 1, one task at a time per
/// worker), so that tasks can reuse buffers kept per worker.
void parallel_for_workers(std::size_t n, unsigned threads, const std::function<void(std::size_t, unsigned)>& task,
                          const progress_callback& progress);

/// The number of threads `parallel_for` uses for a request of `threads`.
unsigned effective_threads(unsigned threads);

}  // namespace rastrum
