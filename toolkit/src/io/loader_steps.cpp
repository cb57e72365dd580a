#include "loader_steps.hpp"

#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <cmath>
#include <numeric>

namespace rastrum {

void require_readable_file(const std::string& path, const std::string& kind, const std::string& article) {
    namespace fs = std::filesystem;
    std::error_code ec;
    const auto status = fs::status(path, ec);
    if (!fs::exists(status)) throw input_error(path, "", "an existing " + kind, "no such file");
    if (fs::is_directory(status)) throw input_error(path, "", article + " " + kind, "a directory");
    if (!fs::is_regular_file(status)) throw input_error(path, "", article + " " + kind, "not a regular file");
    if (!std::ifstream(path, std::ios::binary)) {
        throw input_error(path, "", "a readable " + kind,
                          std::string("a file that cannot be opened: ") + std::strerror(errno));
    }
}

namespace {
bool is_digit(char c) { return c >= '0' && c <= '9'; }
}  // namespace

// Natural order: runs of decimal digits compare by their value, everything else byte by byte, so
// "u2" < "u10" and "tetrode2/ch3" sorts as a person would list it. Names equal under that rule
// ("u01", "u1") fall back to byte order, which keeps the order total and deterministic.
bool natural_less(const std::string& a, const std::string& b) {
    std::size_t i = 0;
    std::size_t j = 0;
    while (i < a.size() && j < b.size()) {
        if (is_digit(a[i]) && is_digit(b[j])) {
            std::size_t i_end = i;
            std::size_t j_end = j;
            while (i_end < a.size() && is_digit(a[i_end])) ++i_end;
            while (j_end < b.size() && is_digit(b[j_end])) ++j_end;
            // Compare without leading zeros: the longer run is the larger number, equal lengths
            // compare digit by digit. No conversion, so runs of any length work.
            std::size_t i_lead = i;
            std::size_t j_lead = j;
            while (i_lead + 1 < i_end && a[i_lead] == '0') ++i_lead;
            while (j_lead + 1 < j_end && b[j_lead] == '0') ++j_lead;
            const std::size_t i_len = i_end - i_lead;
            const std::size_t j_len = j_end - j_lead;
            if (i_len != j_len) return i_len < j_len;
            const int digits = a.compare(i_lead, i_len, b, j_lead, j_len);
            if (digits != 0) return digits < 0;
            i = i_end;
            j = j_end;
        } else {
            const auto ca = static_cast<unsigned char>(a[i]);
            const auto cb = static_cast<unsigned char>(b[j]);
            if (ca != cb) return ca < cb;
            ++i;
            ++j;
        }
    }
    const bool a_done = i == a.size();
    const bool b_done = j == b.size();
    if (a_done != b_done) return a_done;
    return a < b;
}

std::vector<std::size_t> natural_order(const std::vector<std::string>& ids) {
    std::vector<std::size_t> order(ids.size());
    std::iota(order.begin(), order.end(), std::size_t{0});
    std::stable_sort(order.begin(), order.end(),
                     [&](std::size_t x, std::size_t y) { return natural_less(ids[x], ids[y]); });
    return order;
}

void settle_spike_times(std::vector<double>& times, const std::string& id,
                        const std::function<place(std::size_t)>& place_of, std::vector<std::string>& warnings) {
    // Checked before sorting: the index must be the one in the file, and sorting NaN is undefined.
    for (std::size_t i = 0; i < times.size(); ++i) {
        if (!std::isfinite(times[i])) {
            const place where = place_of(i);
            throw input_error(where.file, where.object, "a finite time in seconds", exact_number(times[i]));
        }
    }
    if (times.empty()) {
        warnings.push_back("unit " + id + ": no spikes; kept, it carries no information");
    } else if (!std::is_sorted(times.begin(), times.end())) {
        std::sort(times.begin(), times.end());
        warnings.push_back("unit " + id + ": spike times were not sorted; sorted them");
    }
}

}  // namespace rastrum
