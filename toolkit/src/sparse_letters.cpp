#include <rastrum/errors.hpp>
#include <rastrum/sparse_letters.hpp>

#include <algorithm>
#include <limits>

namespace rastrum {

namespace {

/// bin_start[b + 1] held the count of bin b; after this, bin_start[b] is where bin b starts.
void counts_to_starts(std::vector<std::uint32_t>& bin_start) {
    for (std::size_t b = 1; b < bin_start.size(); ++b) bin_start[b] += bin_start[b - 1];
}

/// After a scatter that advanced bin_start[b] as bin b's cursor (so it now holds where bin b + 1
/// starts), moves every entry back one place.
void cursors_to_starts(std::vector<std::uint32_t>& bin_start) {
    for (std::size_t b = bin_start.size() - 1; b > 0; --b) bin_start[b] = bin_start[b - 1];
    bin_start[0] = 0;
}

std::uint32_t checked_size(std::size_t n) {
    if (n >= std::numeric_limits<std::uint32_t>::max()) {
        throw insufficient_data("2^32 or more bins hold spikes: use a wider bin or fewer trials");
    }
    return static_cast<std::uint32_t>(n);
}

}  // namespace

letter sparse_letters::at(std::size_t b, std::size_t trial) const {
    const entry* first = nonzero.data() + bin_start[b];
    const entry* last = nonzero.data() + bin_start[b + 1];
    const entry* i = std::lower_bound(first, last, trial, [](const entry& e, std::size_t k) { return e.trial < k; });
    return i != last && i->trial == trial ? i->value : 0;
}

void bin_spikes_sparse(const std::vector<std::vector<seconds>>& trial_spikes, seconds bin_width, std::size_t bins,
                       bool binary, sparse_letters& out) {
    out.trials = trial_spikes.size();
    out.bins = bins;
    out.largest = 0;
    out.spikes = 0;
    out.bin_start.assign(bins + 1, 0);
    const double per_second = 1.0 / bin_width;  // as bin_spikes: t times 1/dt, which can round unlike t / dt
    // Calls `each(bin, letter)` for each bin of trial k holding spikes, in bin order.
    auto runs = [&](std::size_t k, auto&& each) {
        std::size_t run_bin = bins;
        std::size_t run = 0;
        for (seconds t: trial_spikes[k]) {
            const double position = t * per_second;
            if (!(position >= 0)) continue;
            const auto b = static_cast<std::size_t>(position);
            if (b >= bins) break;  // spikes are ascending
            if (b != run_bin) {
                if (run > 0) each(run_bin, run);
                run_bin = b;
                run = 0;
            }
            ++run;
        }
        if (run > 0) each(run_bin, run);
    };
    std::size_t nonzero = 0;
    for (std::size_t k = 0; k < out.trials; ++k) {
        runs(k, [&](std::size_t b, std::size_t) {
            ++out.bin_start[b + 1];
            ++nonzero;
        });
    }
    counts_to_starts(out.bin_start);
    out.nonzero.resize(checked_size(nonzero));
    for (std::size_t k = 0; k < out.trials; ++k) {
        runs(k, [&](std::size_t b, std::size_t spikes) {
            if (spikes > std::numeric_limits<letter>::max()) {
                throw insufficient_data("a bin holds more spikes than a letter can count");
            }
            const letter value = binary ? 1 : static_cast<letter>(spikes);
            out.nonzero[out.bin_start[b]++] = {static_cast<std::uint32_t>(k), value};
            out.largest = std::max(out.largest, value);
            out.spikes += value;
        });
    }
    cursors_to_starts(out.bin_start);
}

sparse_letters sparse_of(const letter_matrix& letters) {
    sparse_letters out;
    out.trials = letters.trials;
    out.bins = letters.bins;
    out.largest = letters.largest;
    out.spikes = letters.spikes;
    out.bin_start.assign(letters.bins + 1, 0);
    for (std::size_t b = 0; b < letters.bins; ++b) {
        const letter* row = letters.bin_row(b);
        for (std::size_t k = 0; k < letters.trials; ++k) {
            if (row[k] != 0) out.nonzero.push_back({static_cast<std::uint32_t>(k), row[k]});
        }
        out.bin_start[b + 1] = checked_size(out.nonzero.size());
    }
    return out;
}

void trial_rotator::start(const sparse_letters& letters) {
    letters_ = &letters;
    trial_start_.assign(letters.trials + 1, 0);
    for (const auto& e: letters.nonzero) ++trial_start_[e.trial + 1];
    counts_to_starts(trial_start_);
    by_trial_.resize(letters.nonzero.size());
    for (std::size_t b = 0; b < letters.bins; ++b) {
        for (std::uint32_t i = letters.bin_start[b]; i < letters.bin_start[b + 1]; ++i) {
            const auto& e = letters.nonzero[i];
            by_trial_[trial_start_[e.trial]++] = {static_cast<std::uint32_t>(b), e.value};
        }
    }
    cursors_to_starts(trial_start_);
}

void trial_rotator::rotate(const std::vector<std::size_t>& offsets, sparse_letters& out) {
    const sparse_letters& in = *letters_;
    const std::size_t bins = in.bins;
    if (offsets.size() != in.trials) throw internal_error("trial_rotator: one offset per trial is needed");
    out.trials = in.trials;
    out.bins = bins;
    out.largest = in.largest;
    out.spikes = in.spikes;
    out.bin_start.assign(bins + 1, 0);
    out.nonzero.resize(in.nonzero.size());
    // Old bin c of trial k goes to new bin (c - shift_k) mod bins. Trials are visited in order, so
    // each new bin's letters come out in trial order.
    auto each = [&](auto&& visit) {
        for (std::size_t k = 0; k < in.trials; ++k) {
            const std::size_t shift = bins ? offsets[k] % bins : 0;
            for (std::uint32_t i = trial_start_[k]; i < trial_start_[k + 1]; ++i) {
                const std::size_t c = by_trial_[i].bin;
                visit(k, c >= shift ? c - shift : c + bins - shift, by_trial_[i].value);
            }
        }
    };
    each([&](std::size_t, std::size_t b, letter) { ++out.bin_start[b + 1]; });
    counts_to_starts(out.bin_start);
    each([&](std::size_t k, std::size_t b, letter value) {
        out.nonzero[out.bin_start[b]++] = {static_cast<std::uint32_t>(k), value};
    });
    cursors_to_starts(out.bin_start);
}

}  // namespace rastrum
