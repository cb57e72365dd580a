#include <rastrum/parallel.hpp>

#include <algorithm>
#include <atomic>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace rastrum {

unsigned effective_threads(unsigned threads) {
    if (threads > 0) return threads;
    return std::max(1u, std::thread::hardware_concurrency());
}

namespace {

void run_workers(std::size_t n, unsigned threads, const std::function<void(std::size_t, unsigned)>& task) {
    const unsigned workers = static_cast<unsigned>(std::min<std::size_t>(effective_threads(threads), n));
    if (workers <= 1) {
        for (std::size_t i = 0; i < n; ++i) task(i, 0);
        return;
    }
    std::atomic<std::size_t> next{0};
    std::atomic<bool> failed{false};
    // Of the tasks that failed, the lowest-numbered one's error is reported, so that a run with
    // several bad inputs names the same one whatever the thread count.
    std::exception_ptr first_error;
    std::size_t first_error_task = n;
    std::mutex error_mutex;
    auto work = [&](unsigned worker) {
        for (std::size_t i = next++; i < n && !failed; i = next++) {
            try {
                task(i, worker);
            } catch (...) {
                std::lock_guard<std::mutex> lock(error_mutex);
                if (i < first_error_task) {
                    first_error = std::current_exception();
                    first_error_task = i;
                }
                failed = true;
            }
        }
    };
    std::vector<std::thread> pool;
    for (unsigned w = 0; w < workers; ++w) pool.emplace_back(work, w);
    for (auto& t: pool) t.join();
    if (first_error) std::rethrow_exception(first_error);
}

}  // namespace

void parallel_for(std::size_t n, unsigned threads, const std::function<void(std::size_t)>& task) {
    run_workers(n, threads, [&](std::size_t i, unsigned) { task(i); });
}

void parallel_for_workers(std::size_t n, unsigned threads, const std::function<void(std::size_t, unsigned)>& task,
                          const progress_callback& progress) {
    if (!progress) {
        run_workers(n, threads, task);
        return;
    }
    std::mutex told;
    std::size_t done = 0;
    run_workers(n, threads, [&](std::size_t i, unsigned worker) {
        task(i, worker);
        std::lock_guard<std::mutex> lock(told);
        progress(++done, n);
    });
}

void parallel_for(std::size_t n, unsigned threads, const std::function<void(std::size_t)>& task,
                  const progress_callback& progress) {
    parallel_for_workers(n, threads, [&](std::size_t i, unsigned) { task(i); }, progress);
}

}  // namespace rastrum
