#pragma once
/// A trial's response in a window after trial start, coded as one integer: its spike count, its word
/// of letters across the window, or the bin of its first spike.
#include <rastrum/types.hpp>

#include <string>
#include <vector>

namespace rastrum {

enum class response_code { spike_count, word, latency };

/// "count", "word", "latency"; and back (usage_error on other text).
const char* response_code_name(response_code c);
response_code parse_response_code(const std::string& name);

struct response_spec {
    response_code code = response_code::spike_count;
    seconds window_start = 0;   // [s] after trial start
    seconds window_stop = 0;    // [s] after trial start, exclusive
    seconds bin_width = 0.01;   // [s] word and latency codes
    bool binary = false;        // word code: clip letters to 0/1
};

struct trial_responses {
    std::vector<word_code> codes;  // one per trial
    std::vector<count> spikes;     // spikes in the window, per trial
    double alphabet = 0;           // size of the response space the code ranges over
};

/// Codes the responses of each trial (spike times relative to trial start, ascending). count:
/// alphabet = largest count + 1. word: letters of `bin_width` across the window, base A = largest
/// letter + 1 (at least 2), alphabet A^L. latency: bin of the first spike, L (the number of bins) for
/// none, alphabet L + 1. Throws insufficient_data when a word does not fit in 64 bits.
trial_responses code_responses(const std::vector<std::vector<seconds>>& trial_spikes, const response_spec& spec);

}  // namespace rastrum
