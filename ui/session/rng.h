// Rng — a small seeded random source with the same sequence on every platform.
//
// SplitMix64: G. L. Steele, D. Lea and C. H. Flood, "Fast splittable
// pseudorandom number generators", OOPSLA 2014. Each call adds the golden
// gamma 0x9E3779B97F4A7C15 to the state and mixes it with two
// xor-shift-multiply rounds. The standard library's distributions differ
// between implementations, so uniform() and below() are our own: 53 top bits
// for a double in [0, 1), rejection sampling for an unbiased integer.
//
// Thread: one thread at a time. Allocates: no.
#pragma once

#include <cstdint>

namespace beatless::ui {

class Rng {
public:
    explicit Rng(std::uint64_t seed) noexcept : state_(seed) {}

    std::uint64_t next() noexcept {
        std::uint64_t z = (state_ += 0x9E3779B97F4A7C15ull);
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
        return z ^ (z >> 31);
    }

    // Uniform in [0, 1).
    double uniform() noexcept { return static_cast<double>(next() >> 11) * 0x1.0p-53; }

    // Uniform integer in [0, n); n must be > 0.
    std::uint64_t below(std::uint64_t n) noexcept {
        const std::uint64_t reject_under = (0 - n) % n;  // 2^64 mod n
        for (;;) {
            const std::uint64_t x = next();
            if (x >= reject_under) return x % n;
        }
    }

private:
    std::uint64_t state_;
};

}  // namespace beatless::ui
