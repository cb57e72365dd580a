#include <rastrum/errors.hpp>
#include <rastrum/format.hpp>
#include <rastrum/memory_bound.hpp>

#include <sys/resource.h>
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <limits>
#include <string>

namespace rastrum {

namespace {

constexpr std::uint64_t unlimited = std::numeric_limits<std::uint64_t>::max();

/// A number of bytes in a cgroup file ("max", a missing file or anything else: no limit).
std::uint64_t bytes_in_file(const std::string& path) {
    std::ifstream in(path);
    std::string text;
    if (!(in >> text) || text.empty() || text.find_first_not_of("0123456789") != std::string::npos) return unlimited;
    try {
        return std::stoull(text);
    } catch (const std::exception&) {
        return unlimited;
    }
}

/// The memory limit of this process's cgroup (v2: memory.max of the group /proc/self/cgroup names;
/// v1: memory.limit_in_bytes), as a container or a batch scheduler sets it.
std::uint64_t cgroup_limit() {
    std::ifstream in("/proc/self/cgroup");
    std::string line, group = "/";
    while (std::getline(in, line)) {
        if (line.rfind("0::", 0) == 0) group = line.substr(3);
    }
    const std::uint64_t v2 = bytes_in_file("/sys/fs/cgroup" + group + "/memory.max");
    const std::uint64_t v2_root = bytes_in_file("/sys/fs/cgroup/memory.max");
    const std::uint64_t v1 = bytes_in_file("/sys/fs/cgroup/memory/memory.limit_in_bytes");
    return std::min({v2, v2_root, v1});
}

}  // namespace

available_memory memory_available() {
    available_memory a{unlimited, "physical memory"};
    const long pages = ::sysconf(_SC_PHYS_PAGES), page = ::sysconf(_SC_PAGE_SIZE);
    if (pages > 0 && page > 0) a.bytes = static_cast<std::uint64_t>(pages) * static_cast<std::uint64_t>(page);
    const std::uint64_t group = cgroup_limit();
    if (group < a.bytes) a = {group, "the cgroup's memory limit"};
    rlimit space{};
    if (::getrlimit(RLIMIT_AS, &space) == 0 && space.rlim_cur != RLIM_INFINITY && space.rlim_cur < a.bytes) {
        a = {static_cast<std::uint64_t>(space.rlim_cur), "the address-space limit (ulimit -v)"};
    }
    if (a.bytes == unlimited) a = {std::uint64_t{4} << 30, "an assumed 4 GiB (this system does not say)"};
    return a;
}

std::uint64_t default_memory_bound() { return memory_available().bytes / 2; }

std::uint64_t memory_bound_of(std::uint64_t max_memory) { return max_memory ? max_memory : default_memory_bound(); }

std::string format_bytes(double bytes) {
    static const char* const units[] = {"B", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"};
    std::size_t unit = 0;
    while (bytes >= 1024 && unit + 1 < std::size(units)) {
        bytes /= 1024;
        ++unit;
    }
    if (unit == 0) return format_number(std::round(bytes)) + " B";
    char text[32];
    std::snprintf(text, sizeof text, "%.3g", bytes);
    return std::string(text) + " " + units[unit];
}

std::uint64_t parse_memory_size(const std::string& text, const std::string& option) {
    const std::string expected = option + ": expected a size with its unit, such as 8G, 512M or 1.5GiB (K, M, G, T: "
                                          "powers of 1024), got '" + text + "'";
    std::size_t used = 0;
    double value = 0;
    try {
        value = std::stod(text, &used);
    } catch (const std::exception&) {
        throw usage_error(expected);
    }
    std::string unit = text.substr(used);
    for (char& c: unit) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    const std::string letters = "KMGT";
    const auto power = unit.empty() ? std::string::npos : letters.find(unit[0]);
    const std::string rest = unit.empty() ? "" : unit.substr(1);
    if (power == std::string::npos || !(rest.empty() || rest == "B" || rest == "IB") || !std::isfinite(value) ||
        !(value > 0)) {
        throw usage_error(expected);
    }
    const double bytes = value * std::pow(1024.0, static_cast<double>(power + 1));
    if (bytes < 1 || bytes > 0x1p62) throw usage_error(option + ": " + text + " is not a size this machine can have");
    return static_cast<std::uint64_t>(bytes);
}

std::string default_memory_bound_text() {
    const available_memory a = memory_available();
    return format_bytes(static_cast<double>(a.bytes / 2)) + " (half of " + format_bytes(static_cast<double>(a.bytes)) +
           ", " + a.limited_by + ")";
}

void require_memory(double needed, std::uint64_t max_memory, const std::string& request, const std::string& advice) {
    const std::uint64_t bound = memory_bound_of(max_memory);
    if (needed <= static_cast<double>(bound)) return;
    const std::string limit = max_memory == 0 ? "--max-memory's default of " + default_memory_bound_text()
                                              : "--max-memory " + format_bytes(static_cast<double>(bound));
    throw insufficient_data(request + ", which needs about " + format_bytes(needed) + ", above " + limit + "; " + advice +
                            ", or raise --max-memory");
}

}  // namespace rastrum
