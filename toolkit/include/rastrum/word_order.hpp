#pragma once
/// Words kept sorted by code as they grow, so that counting never sorts from scratch. Growing a word
/// appends a least-significant digit, so an order sorted by the old codes only needs each run of equal
/// old codes re-sorted by the new last letter: a counting sort within runs, linear in the words.
#include <rastrum/words.hpp>

#include <cstdint>
#include <vector>

namespace rastrum {

class word_order {
public:
    /// Sorts the words as they are now (normally L = 1).
    explicit word_order(const word_codes& words);

    /// Re-sorts after `words.grow()`; drops the start position that no longer holds a whole word.
    void update(const word_codes& words);

    /// The trials at start position t, sorted by their word's code there.
    const std::uint32_t* at_position(std::size_t t) const { return by_position_.data() + t * trials_; }
    /// Every (position, trial) pair as position * trials + trial, sorted by code.
    const std::vector<std::uint32_t>& pooled() const { return pooled_; }

private:
    std::size_t trials_;
    std::vector<std::uint32_t> by_position_;  // positions x trials
    std::vector<std::uint32_t> pooled_;
    std::vector<std::uint32_t> buffer_;
    std::vector<std::size_t> bucket_;
};

}  // namespace rastrum
