// Helper for tests/reference/check_yin_difference.py: prints test signals,
// pitch::yin_difference of them (the FFT path) and the Cramer-Rao bound of
// tests/signals.h, as text the script parses and recomputes with numpy.
//   case <window> <max_lag>      then "x v0 v1 ..." and "d v0 v1 ..."
//   crb <rate> <f0> <noise_var> <n> <count> then "partial l a phase" lines and "value <cents>"
#include "pitch/dsp/yin.h"
#include "tests/signals.h"

#include <cstdio>
#include <vector>

using namespace beatless;

int main() {
    struct Case {
        std::size_t window, max_lag;
        double f0;
    };
    const Case cases[] = {{300, 200, 97.0}, {331, 150, 440.0}, {112, 102, 1000.0}, {1000, 400, 61.0}, {64, 64, 300.0}};
    std::uint64_t seed = 11;
    for (const auto& c : cases) {
        const auto parts = test::falling_partials(c.f0, 11025.0, 12, 6.0, seed++);
        auto x = test::harmonic_tone(11025.0, c.window + c.max_lag, c.f0, parts);
        test::add_white_noise(x, test::harmonic_power(parts), 15.0, seed++);
        std::vector<double> d(c.max_lag + 1);
        pitch::yin_difference(x, c.window, c.max_lag, d);
        std::printf("case %zu %zu\nx", c.window, c.max_lag);
        for (float v : x) std::printf(" %.9g", static_cast<double>(v));
        std::printf("\nd");
        for (double v : d) std::printf(" %.17g", v);
        std::printf("\n");
    }
    const double crb_f0[] = {65.0, 220.0, 1000.0};
    for (double f0 : crb_f0) {
        const auto parts = test::falling_partials(f0, 44100.0, 10, 6.0, seed++);
        const double var = 0.01;
        const std::size_t n = 2205;
        std::printf("crb 44100 %.17g %.17g %zu %zu\n", f0, var, n, parts.size());
        for (const auto& p : parts) std::printf("partial %d %.17g %.17g\n", p.number, p.amplitude, p.phase_rad);
        std::printf("value %.17g\n", test::harmonic_crb_cents(parts, f0, 44100.0, var, n));
    }
    return 0;
}
