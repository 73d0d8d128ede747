#include "pitch/dsp/periodic_run.h"

#include "pitch/dsp/yin_coarse.h"

#include <algorithm>
#include <array>
#include <cmath>

namespace beatless::pitch {

namespace {
// A block is periodic while its aperiodicity stays under this many times the
// span's lower octile, and under the floor: noise raises every block alike
// (a block of one period in noise at 5 dB SNR measures about 0.24, and
// fluctuates by a third of that), a different note in a block raises that
// block alone, to 0.3 .. 1 for a semitone or more on a voice's harmonics.
constexpr double kRelative = 3.0;
constexpr std::size_t kMaxBlocks = 128;
constexpr double kEdgeFloor = 0.1;
}  // namespace

PeriodicRun::PeriodicRun(std::size_t max_len, std::size_t max_lag) : max_len_(max_len), max_lag_(max_lag) {
    d_.assign(max_lag_ + 2, 0.0);
    dn_.assign(max_lag_ + 2, 1.0);
    q_.assign(max_len_ + 1, 0.0);
    e_.assign(max_len_ + 1, 0.0);
    lag_at_.assign(max_len_ + 1, 0.0);
}

double PeriodicRun::newest_period(const float* y, std::size_t len, std::size_t lag_min, std::size_t lag_max,
                                  double threshold) noexcept {
    len = std::min(len, max_len_);
    lag_max = std::min(lag_max, max_lag_);
    for (const std::size_t part : {len / 4, len / 3, len / 2}) {
        const std::size_t hi = std::min(lag_max, part - std::max<std::size_t>(part / 4, 16));
        if (part < 32 || hi < lag_min + 2) continue;
        const std::size_t w = part - hi, s = len - part;
        d_[0] = 0.0;
        for (std::size_t tau = 1; tau <= hi; ++tau) {
            float acc = 0.0f;
            for (std::size_t j = 0; j < w; ++j) {
                const float u = y[s + j] - y[s + j + tau];
                acc += u * u;
            }
            d_[tau] = acc;
        }
        const std::span<const double> d(d_.data(), hi + 1);
        cumulative_mean_normalised(d, std::span<double>(dn_.data(), hi + 1));
        const LagChoice pick =
            absolute_threshold(std::span<const double>(dn_.data(), hi + 1), lag_min, hi - 1, threshold);
        if (pick.below_threshold && pick.aperiodicity < threshold) return parabolic_minimum(d, pick.lag);
    }
    return 0.0;
}

double PeriodicRun::block_aperiodicity(std::size_t n0, std::size_t n1) const noexcept {
    const double e = e_[n1] - e_[n0];
    return e > 0.0 ? (q_[n1] - q_[n0]) / e : 1.0;
}

PeriodicRun::Result PeriodicRun::tightened(Result r, double target, std::size_t step,
                                           std::size_t min_len) const noexcept {
    if (!r.found || pairs_ == 0 || step == 0) return Result{};
    std::size_t p0 = r.begin;
    while (p0 + step < pairs_ && block_aperiodicity(p0, pairs_) >= target) p0 += step;
    r.aperiodicity = block_aperiodicity(p0, pairs_);
    r.begin = p0;
    r.whole = false;
    if (!(r.aperiodicity < target) || r.end < p0 + min_len) return Result{};
    return r;
}

PeriodicRun::Result PeriodicRun::find(const float* y, std::size_t len, double lag, double slope, std::size_t min_len,
                                      double floor, bool forgive_lone) noexcept {
    Result r;
    len = std::min(len, max_len_);
    const double mid = 0.5 * static_cast<double>(len);
    std::size_t n = 0;
    q_[0] = e_[0] = 0.0;
    for (; n < len; ++n) {
        const double L = lag + slope * (static_cast<double>(n) + 0.5 * lag - mid);  // the period at the pair's centre
        if (!(L >= 1.0)) break;
        const double pos = static_cast<double>(n) + L;
        const auto i = static_cast<std::size_t>(pos);
        if (i + 1 >= len) break;
        const double a = pos - static_cast<double>(i);
        const double v = static_cast<double>(y[i]) + a * (static_cast<double>(y[i + 1]) - static_cast<double>(y[i]));
        const double u = static_cast<double>(y[n]);
        q_[n + 1] = q_[n] + (u - v) * (u - v);
        e_[n + 1] = e_[n] + u * u + v * v;
        lag_at_[n] = L;
    }
    pairs_ = n;
    if (pairs_ < 16) return r;

    // Blocks of half a period: the lower octile sets the threshold (a new note
    // may fill as little as a sixth of the span).
    std::size_t B = std::max<std::size_t>(12, static_cast<std::size_t>(std::lround(0.5 * lag)));
    B = std::max(B, (pairs_ + kMaxBlocks - 1) / kMaxBlocks);
    const std::size_t nb = std::max<std::size_t>(1, pairs_ / B);
    auto block_end = [&](std::size_t b) { return b + 1 == nb ? pairs_ : (b + 1) * B; };
    std::array<double, kMaxBlocks> ap{};
    for (std::size_t b = 0; b < nb; ++b) ap[b] = block_aperiodicity(b * B, block_end(b));
    std::nth_element(ap.begin(), ap.begin() + static_cast<std::ptrdiff_t>(nb / 8),
                     ap.begin() + static_cast<std::ptrdiff_t>(nb));
    const double theta = std::max(floor, kRelative * ap[nb / 8]);
    // A run's edges are widened or trimmed against a stricter threshold: a
    // block that holds the change in part measures between the two.
    const double edge = std::max(kEdgeFloor, kRelative * ap[nb / 8]);

    // Maximal runs of periodic blocks, each widened to the sample by quarter blocks.
    const std::size_t step = std::max<std::size_t>(2, B / 4);
    std::size_t run0 = 0;
    bool in_run = false, any_dirty = false;
    // A lone block over the threshold is noise: a change leaves every block
    // past it over the threshold, so a cut needs two in a row (unless told
    // a change is under way).
    auto over = [&](std::size_t b) { return b < nb && block_aperiodicity(b * B, block_end(b)) > theta; };
    for (std::size_t b = 0; b <= nb; ++b) {
        const bool clean = b < nb && (!over(b) || (forgive_lone && (b == 0 || !over(b - 1)) && !over(b + 1)));
        if (b < nb && !clean) any_dirty = true;
        if (clean && !in_run) {
            run0 = b;
            in_run = true;
        }
        if (!clean && in_run) {
            in_run = false;
            std::size_t b0 = run0, b1 = b;  // blocks [b0, b1); the edges held to the stricter threshold
            while (b1 - b0 > 1 && block_aperiodicity(b0 * B, block_end(b0)) > edge) ++b0;
            while (b1 - b0 > 1 && block_aperiodicity((b1 - 1) * B, block_end(b1 - 1)) > edge) --b1;
            std::size_t p0 = b0 * B, p1 = block_end(b1 - 1);
            while (p0 >= step && block_aperiodicity(p0 - step, p0) <= edge) p0 -= step;
            while (p1 + step <= pairs_ && block_aperiodicity(p1, p1 + step) <= edge) p1 += step;
            const std::size_t end = std::min(len, p1 - 1 + static_cast<std::size_t>(lag_at_[p1 - 1]) + 2);
            if (end - p0 >= min_len) {
                r.found = true;
                r.begin = p0;
                r.end = end;
                r.aperiodicity = block_aperiodicity(p0, p1);
            }
        }
    }
    if (!any_dirty) {
        r.found = r.whole = true;
        r.begin = 0;
        r.end = len;
        r.aperiodicity = block_aperiodicity(0, pairs_);
    }
    return r;
}

}  // namespace beatless::pitch
