// Steady-note smoothing (steady_smooth.h).
#include "pitch/dsp/steady_smooth.h"

#include <algorithm>
#include <cmath>

namespace beatless::pitch {

double savitzky_golay_weight(int m, int i) noexcept {
    const double mm = m, ii = i;
    return (3.0 * (3.0 * mm * mm + 3.0 * mm - 1.0) - 15.0 * ii * ii) /
           ((2.0 * mm - 1.0) * (2.0 * mm + 1.0) * (2.0 * mm + 3.0));
}

void smooth_steady(std::span<PitchFrame> frames, double hop_s, const SteadySmoothConfig& config,
                   std::span<double> work) noexcept {
    const std::size_t n = std::min(frames.size(), work.size());
    if (n == 0 || !(hop_s > 0.0)) return;
    const auto max_m = static_cast<std::size_t>(std::max(0.0, std::floor(config.max_half_s / hop_s + 1e-9)));
    if (max_m < 2) return;  // a quadratic through 3 points is the points themselves
    // In cents (1200 log2 f), so the range reads in cents.
    for (std::size_t t = 0; t < n; ++t) work[t] = frames[t].voiced() ? 1200.0 * std::log2(frames[t].f0_hz) : NAN;
    // The first and last edge_s of each voiced stretch are left out, as centres and as neighbours: their spans
    // reach over the stretch's edge, so they mix the note with what came before or after.
    const auto edge = static_cast<std::size_t>(std::max(0.0, std::ceil(config.edge_s / hop_s - 1e-9)));
    for (std::size_t a = 0; a < n && edge > 0;) {
        if (std::isnan(work[a])) {
            ++a;
            continue;
        }
        std::size_t b = a;
        while (b < n && !std::isnan(work[b])) ++b;
        for (std::size_t k = 0; k < edge && a + k < b; ++k) work[a + k] = work[b - 1 - k] = NAN;
        a = b;
    }
    for (std::size_t t = 0; t < n; ++t) {
        if (std::isnan(work[t])) continue;
        // Grow the window one frame each side while it stays voiced and within range_cents; the widest window of
        // at least 5 frames gives the fit's centre value.
        double lo = work[t], hi = work[t];
        std::size_t m = 0;
        for (; m < max_m && m < t && t + m + 1 < n; ++m) {
            const double a = work[t - m - 1], b = work[t + m + 1];
            if (std::isnan(a) || std::isnan(b)) break;
            lo = std::min({lo, a, b});
            hi = std::max({hi, a, b});
            if (hi - lo > config.range_cents) break;
        }
        if (m < 2) continue;
        double value = 0.0;
        for (std::size_t k = t - m; k <= t + m; ++k)
            value += savitzky_golay_weight(static_cast<int>(m), static_cast<int>(k) - static_cast<int>(t)) * work[k];
        frames[t].f0_hz = std::exp2(value / 1200.0);
    }
}

}  // namespace beatless::pitch
