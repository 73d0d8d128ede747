// Helper for tests/reference/check_periodic_run.py: prints a linearly chirped harmonic tone, the lag line the
// tracker would give PeriodicRun for it (the period at the centre, and its slope from the periods one hop either
// side, as the neighbouring frames' coarse periods give it), and PeriodicRun's block aperiodicities with that
// slope and with none, for the script to recompute with numpy and to check the linear lag model against the
// exact lag of the chirp (scipy).
//   tone <rate> <f0> <g> <len>      f(t) = f0 (1 + g (t - t_mid)), t_mid = len / 2 / rate, phase 0 at t_mid
//   x <sample> ...                  the len samples (float)
//   line <lag> <slope>              lag(n) = lag + slope (n + lag / 2 - len / 2)
//   block <slope> <n0> <n1> <ap>    aperiodicity of the pairs n0 .. n1 - 1
#include "pitch/dsp/periodic_run.h"

#include <cmath>
#include <cstdio>
#include <vector>

int main() {
    const double rate = 11025.0, f0 = 200.0, g = 2.7;  // g: the fastest sweep the tracker follows (kMaxSweep)
    const std::size_t len = 552;
    const double t_mid = 0.5 * static_cast<double>(len) / rate;
    auto freq = [&](double t) { return f0 * (1.0 + g * (t - t_mid)); };
    auto phase = [&](double t) {
        const double u = t - t_mid;
        return 2.0 * M_PI * f0 * (u + 0.5 * g * u * u);
    };
    std::vector<float> x(len);
    for (std::size_t n = 0; n < len; ++n) {
        const double p = phase(static_cast<double>(n) / rate);
        double v = 0.0;
        for (int h = 1; h <= 5; ++h) v += std::sin(h * p + 0.3 * h) / h;
        x[n] = static_cast<float>(0.3 * v);
    }
    std::printf("tone %.17g %.17g %.17g %zu\n", rate, f0, g, len);
    std::printf("x");
    for (float v : x) std::printf(" %.9g", static_cast<double>(v));
    std::printf("\n");
    const double hop_s = 220.0 / 44100.0;
    const double lag = rate / freq(t_mid);
    const double slope = (rate / freq(t_mid + hop_s) - rate / freq(t_mid - hop_s)) / (2.0 * hop_s * rate);
    std::printf("line %.17g %.17g\n", lag, slope);
    beatless::pitch::PeriodicRun runs(len, 200);
    for (const double s : {slope, 0.0}) {
        runs.find(x.data(), len, lag, s, 100, 0.45);
        const std::size_t pairs = len - static_cast<std::size_t>(std::ceil(lag + std::fabs(s) * (0.5 * len + lag))) - 2;
        const auto block = static_cast<std::size_t>(std::lround(0.5 * lag));
        for (std::size_t n0 = 0; n0 + block <= pairs; n0 += block)
            std::printf("block %.17g %zu %zu %.17g\n", s, n0, n0 + block, runs.block_aperiodicity(n0, n0 + block));
    }
    return 0;
}
