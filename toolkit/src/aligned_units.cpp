#include <rastrum/aligned_units.hpp>
#include <rastrum/errors.hpp>

#include <algorithm>

namespace rastrum {

aligned_units::aligned_units(const recording& rec, std::vector<std::size_t> trials, std::vector<std::size_t> uses):
    rec_(rec), trials_(std::move(trials)), left_(std::move(uses)), held_(left_.size()) {
    if (left_.size() != rec.units.size()) throw internal_error("aligned_units: one use count per unit expected");
}

aligned_units::hold::hold(aligned_units& owner, std::size_t u): owner_(owner), unit_(u), spikes_(owner.take(u)) {}

aligned_units::hold::~hold() { owner_.give_back(unit_); }

std::shared_ptr<const aligned_units::aligned> aligned_units::take(std::size_t u) {
    // Reads happen under the lock: the file is read serially anyway, and two tasks asking for the
    // same unit must not both read it.
    std::lock_guard<std::mutex> lock(mutex_);
    if (u >= left_.size() || left_[u] == 0) throw internal_error("aligned_units: unit held more often than announced");
    if (!held_[u]) {
        const shared_spikes times = rec_.spikes(u);
        held_[u] = std::make_shared<const aligned>(align_to_trials(*times, rec_, trials_));
        ++reads_;
        most_held_ = std::max(most_held_, ++held_now_);
    }
    return held_[u];
}

void aligned_units::give_back(std::size_t u) {
    std::lock_guard<std::mutex> lock(mutex_);
    if (--left_[u] == 0 && held_[u]) {
        held_[u].reset();
        --held_now_;
    }
}

std::size_t aligned_units::most_held() const {
    std::lock_guard<std::mutex> lock(mutex_);
    return most_held_;
}

std::size_t aligned_units::reads() const {
    std::lock_guard<std::mutex> lock(mutex_);
    return reads_;
}

}  // namespace rastrum
