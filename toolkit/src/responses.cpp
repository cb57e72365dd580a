#include <rastrum/binning.hpp>
#include <rastrum/errors.hpp>
#include <rastrum/responses.hpp>
#include <rastrum/words.hpp>

#include <algorithm>
#include <cmath>

namespace rastrum {

const char* response_code_name(response_code c) {
    switch (c) {
    case response_code::spike_count: return "count";
    case response_code::word: return "word";
    case response_code::latency: return "latency";
    }
    throw internal_error("unknown response code");
}

response_code parse_response_code(const std::string& name) {
    for (response_code c: {response_code::spike_count, response_code::word, response_code::latency}) {
        if (name == response_code_name(c)) return c;
    }
    throw usage_error("--code: choose count, word or latency, got '" + name + "'");
}

trial_responses code_responses(const std::vector<std::vector<seconds>>& trial_spikes, const response_spec& spec) {
    trial_responses out;
    const std::size_t n = trial_spikes.size();
    // Spikes in [start, stop), shifted to the window's own clock.
    std::vector<std::vector<seconds>> in_window(n);
    for (std::size_t k = 0; k < n; ++k) {
        const auto& t = trial_spikes[k];
        auto first = std::lower_bound(t.begin(), t.end(), spec.window_start);
        auto last = std::lower_bound(t.begin(), t.end(), spec.window_stop);
        for (auto it = first; it != last; ++it) in_window[k].push_back(*it - spec.window_start);
        out.spikes.push_back(in_window[k].size());
    }
    const std::size_t bins = spec.code == response_code::spike_count
                                 ? 0
                                 : whole_bins(spec.window_stop - spec.window_start, spec.bin_width);
    switch (spec.code) {
    case response_code::spike_count: {
        count largest = 0;
        for (count c: out.spikes) {
            out.codes.push_back(c);
            largest = std::max(largest, c);
        }
        out.alphabet = static_cast<double>(largest) + 1;
        break;
    }
    case response_code::word: {
        if (bins == 0) throw usage_error("--bin-ms is wider than the window");
        const letter_matrix letters = bin_spikes(in_window, spec.bin_width, bins, spec.binary);
        const word_code base = std::max<word_code>(2, word_code{letters.largest} + 1);
        if (static_cast<int>(bins) > longest_codable_word(base)) {
            throw insufficient_data("words of " + std::to_string(bins) + " letters over an alphabet of " +
                                    std::to_string(base) + " do not fit in 64 bits; use wider bins, a shorter window or --binary");
        }
        for (std::size_t k = 0; k < n; ++k) {
            word_code code = 0;
            for (std::size_t b = 0; b < bins; ++b) code = code * base + letters.at(b, k);
            out.codes.push_back(code);
        }
        out.alphabet = std::pow(static_cast<double>(base), static_cast<double>(bins));
        break;
    }
    case response_code::latency: {
        if (bins == 0) throw usage_error("--bin-ms is wider than the window");
        for (std::size_t k = 0; k < n; ++k) {
            const auto& t = in_window[k];
            std::size_t first = bins;  // the symbol for "no spike in the whole bins of the window"
            if (!t.empty()) first = std::min(bins, static_cast<std::size_t>(t.front() / spec.bin_width));
            out.codes.push_back(first);
        }
        out.alphabet = static_cast<double>(bins) + 1;
        break;
    }
    }
    return out;
}

}  // namespace rastrum
