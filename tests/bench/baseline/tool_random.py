"""The tool's seeded randomness (toolkit/src/random.cpp) in Python, shared by the NumPy baselines so
that they draw exactly the tool's splits, shuffles and resamples. Python integers masked to 64 bits."""

MASK = (1 << 64) - 1


def mix64(x):
    """SplitMix64 finaliser (Steele, Lea & Flood 2014, OOPSLA)."""
    x = (x + 0x9E3779B97F4A7C15) & MASK
    x = ((x ^ (x >> 30)) * 0xBF58476D1CE4E5B9) & MASK
    x = ((x ^ (x >> 27)) * 0x94D049BB133111EB) & MASK
    return x ^ (x >> 31)


def text_hash(text):
    """FNV-1a, 64 bits, over the UTF-8 bytes (the published FNV offset basis and prime)."""
    h = 0xCBF29CE484222325
    for c in text.encode("utf-8"):
        h = ((h ^ c) * 0x100000001B3) & MASK
    return h


def derive_seed(seed, tags):
    h = mix64(seed & MASK)
    for t in tags:
        h = mix64(h ^ mix64((t + 0x632BE59BD9B4E019) & MASK))
    return h


def rotl(x, k):
    return ((x << k) | (x >> (64 - k))) & MASK


class RandomStream:
    """xoshiro256** with its state filled by SplitMix64 from the seed."""

    def __init__(self, seed):
        x = seed & MASK
        self.s = []
        for _ in range(4):
            x = (x + 0x9E3779B97F4A7C15) & MASK
            self.s.append(mix64((x - 0x9E3779B97F4A7C15 + 0x1234567) & MASK))

    def next(self):
        s = self.s
        result = (rotl((s[1] * 5) & MASK, 7) * 9) & MASK
        t = (s[1] << 17) & MASK
        s[2] ^= s[0]
        s[3] ^= s[1]
        s[1] ^= s[2]
        s[0] ^= s[3]
        s[2] ^= t
        s[3] = rotl(s[3], 45)
        return result

    def below(self, n):
        """Uniform on [0, n) by Lemire's multiply-and-reject."""
        m = self.next() * n
        low = m & MASK
        if low < n:
            threshold = ((1 << 64) - n) % n
            while low < threshold:
                m = self.next() * n
                low = m & MASK
        return m >> 64


def shuffle(values, rng):
    """Fisher-Yates in place, from the end, as the tool does."""
    for i in range(len(values), 1, -1):
        j = rng.below(i)
        values[i - 1], values[j] = values[j], values[i - 1]
