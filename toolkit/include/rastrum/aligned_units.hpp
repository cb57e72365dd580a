#pragma once
/// Units' spike times aligned to trials, for analyses that work unit by unit on several threads: a
/// unit is read (from the file, when the recording is read on demand) and aligned when the first
/// task that needs it starts, and let go when the last such task is done. With tasks taken in order
/// and each unit's tasks next to each other (parallel_for), only the units of the tasks in progress
/// are held, so memory is bounded by a few units, not by the recording.
#include <rastrum/recording.hpp>

#include <cstddef>
#include <memory>
#include <mutex>
#include <vector>

namespace rastrum {

class aligned_units {
public:
    using aligned = std::vector<std::vector<seconds>>;  // as align_to_trials gives it

    /// `uses[u]`: how many tasks will hold unit u (0 for a unit no task needs).
    aligned_units(const recording& rec, std::vector<std::size_t> trials, std::vector<std::size_t> uses);

    /// One task's hold on a unit; the unit goes when its last hold does.
    class hold {
    public:
        hold(aligned_units& owner, std::size_t u);
        ~hold();
        hold(const hold&) = delete;
        hold& operator=(const hold&) = delete;
        const aligned& spikes() const { return *spikes_; }

    private:
        aligned_units& owner_;
        std::size_t unit_;
        std::shared_ptr<const aligned> spikes_;
    };

    /// The most units held at once so far.
    std::size_t most_held() const;
    /// How many times a unit was read and aligned (each needed unit once, unless a task failed).
    std::size_t reads() const;

private:
    std::shared_ptr<const aligned> take(std::size_t u);
    void give_back(std::size_t u);

    const recording& rec_;
    std::vector<std::size_t> trials_;
    std::vector<std::size_t> left_;  // holds still to come or in progress, per unit
    std::vector<std::shared_ptr<const aligned>> held_;
    std::size_t held_now_ = 0, most_held_ = 0, reads_ = 0;
    mutable std::mutex mutex_;
};

}  // namespace rastrum
