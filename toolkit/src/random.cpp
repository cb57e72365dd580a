#include <rastrum/random.hpp>

#include <cmath>

namespace rastrum {

std::uint64_t mix64(std::uint64_t x) {
    x += 0x9e3779b97f4a7c15ULL;
    x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
    x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
    return x ^ (x >> 31);
}

std::uint64_t text_hash(std::string_view text) {
    std::uint64_t h = 0xcbf29ce484222325ULL;
    for (unsigned char c: text) {
        h ^= c;
        h *= 0x100000001b3ULL;
    }
    return h;
}

std::uint64_t derive_seed(std::uint64_t seed, std::initializer_list<std::uint64_t> tags) {
    std::uint64_t h = mix64(seed);
    for (std::uint64_t t: tags) h = mix64(h ^ mix64(t + 0x632be59bd9b4e019ULL));
    return h;
}

random_stream::random_stream(std::uint64_t seed) {
    std::uint64_t x = seed;
    for (auto& s: s_) {
        x += 0x9e3779b97f4a7c15ULL;
        s = mix64(x - 0x9e3779b97f4a7c15ULL + 0x1234567ULL);
    }
}

namespace {
inline std::uint64_t rotl(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }
__extension__ typedef unsigned __int128 wide;  // GCC and Clang both have it; Lemire's method needs 128 bits
}  // namespace

std::uint64_t random_stream::next() {
    const std::uint64_t result = rotl(s_[1] * 5, 7) * 9;
    const std::uint64_t t = s_[1] << 17;
    s_[2] ^= s_[0];
    s_[3] ^= s_[1];
    s_[1] ^= s_[2];
    s_[0] ^= s_[3];
    s_[2] ^= t;
    s_[3] = rotl(s_[3], 45);
    return result;
}

double random_stream::uniform() { return static_cast<double>(next() >> 11) * 0x1.0p-53; }

std::uint64_t random_stream::below(std::uint64_t n) {
    wide m = static_cast<wide>(next()) * n;
    auto low = static_cast<std::uint64_t>(m);
    if (low < n) {
        const std::uint64_t threshold = (0 - n) % n;
        while (low < threshold) {
            m = static_cast<wide>(next()) * n;
            low = static_cast<std::uint64_t>(m);
        }
    }
    return static_cast<std::uint64_t>(m >> 64);
}

double random_stream::exponential() { return -std::log1p(-uniform()); }

double gaussian(random_stream& rng) {
    const double u = 1.0 - rng.uniform();
    const double v = rng.uniform();
    return std::sqrt(-2.0 * std::log(u)) * std::cos(6.283185307179586 * v);
}

double log_gamma_variate(double shape, random_stream& rng) {
    if (shape < 1) {
        const double larger = log_gamma_variate(shape + 1, rng);  // drawn first, then the boost's uniform
        return larger + std::log(1.0 - rng.uniform()) / shape;
    }
    const double d = shape - 1.0 / 3.0, c = 1.0 / std::sqrt(9 * d);
    while (true) {
        double x, v;
        do {
            x = gaussian(rng);
            v = 1 + c * x;
        } while (v <= 0);
        v = v * v * v;
        if (std::log(1.0 - rng.uniform()) < 0.5 * x * x + d - d * v + d * std::log(v)) return std::log(d * v);
    }
}

}  // namespace rastrum
