#include "pitch/dsp/yin_coarse.h"

#include "pitch/base/error.h"
#include "pitch/dsp/vec_ops.h"
#include "pitch/dsp/yin.h"

#include <algorithm>
#include <cmath>
#include <string>

namespace beatless::pitch {

BlockCorrelator::BlockCorrelator(std::size_t block_len, std::size_t blocks_per_window, std::size_t max_lag)
    : block_len_(std::max<std::size_t>(1, block_len)),
      blocks_(std::max<std::size_t>(1, blocks_per_window)),
      max_lag_(max_lag) {
    // A block's lags reach max_lag samples past its end: R more blocks.
    lookahead_ = (max_lag_ + block_len_ - 1) / block_len_;
    lags_ = (max_lag_ + vec::kLanes) / vec::kLanes * vec::kLanes;
    recent_.assign(std::max((lookahead_ + 1) * block_len_, block_len_ + lags_), 0.0f);
    products_.assign(blocks_ * lags_, 0.0f);
}

void BlockCorrelator::reset() noexcept { added_ = 0; }

void BlockCorrelator::add_block(const float* block) noexcept {
    const std::size_t P = block_len_, ring = lookahead_ + 1;
    if (added_ >= ring)  // drop the oldest block
        std::copy(recent_.begin() + static_cast<std::ptrdiff_t>(P),
                  recent_.begin() + static_cast<std::ptrdiff_t>(ring * P), recent_.begin());
    std::copy(block, block + P, recent_.begin() + static_cast<std::ptrdiff_t>(std::min(added_, lookahead_) * P));
    ++added_;
    if (added_ < ring) return;
    // Block i = added - ring now has its whole lagged segment (blocks i .. i + R), the first R + 1 of recent_; the
    // lags past max_lag read the zeros after it and are never used.
    const std::size_t i = added_ - ring;
    vec::lag_products(recent_.data(), P, lags_, products_.data() + (i % blocks_) * lags_);
}

void BlockCorrelator::window_correlation(std::span<float> r) noexcept {
    const std::size_t n = std::min(r.size(), max_lag_ + 1);
    std::copy(products_.begin(), products_.begin() + static_cast<std::ptrdiff_t>(n), r.begin());
    for (std::size_t q = 1; q < blocks_; ++q) vec::add(r.data(), products_.data() + q * lags_, n);
}

void difference_from_correlation(const float* y, std::size_t window, std::size_t max_lag, const float* r,
                                 double* d) noexcept {
    double e0 = 0.0;
    for (std::size_t j = 0; j < window; ++j) e0 += static_cast<double>(y[j]) * y[j];
    // Three passes, the same operations as one loop: each lag's change of energy (independent, vectorised), their
    // running sum in lag order, then d.
    d[0] = 0.0;
    for (std::size_t t = 1; t <= max_lag; ++t) {
        const double out = y[t - 1], in = y[t - 1 + window];
        d[t] = in * in - out * out;
    }
    double e = e0;
    for (std::size_t t = 1; t <= max_lag; ++t) {
        e += d[t];
        d[t] = e;
    }
    for (std::size_t t = 1; t <= max_lag; ++t) d[t] = std::max(0.0, e0 + d[t] - 2.0 * static_cast<double>(r[t]));
}

void cumulative_mean_normalised(std::span<const double> d, std::span<double> dn) noexcept {
    if (dn.empty()) return;
    dn[0] = 1.0;
    double sum = 0.0;
    for (std::size_t t = 1; t < d.size() && t < dn.size(); ++t) {
        sum += d[t];
        dn[t] = sum > 0.0 ? d[t] * static_cast<double>(t) / sum : 1.0;
    }
}

namespace {
// A divisor's dip counts when it is at most this much shallower than the chosen one: d'_k <= 1.5 d' + 0.05. At 5 dB
// SNR the period's own dip (about 1 / (1 + SNR) = 0.24) is within it of a multiple's; on a clean tone (d' near 0.01)
// a half-period dip (d' 0.3 and more) is far outside it.
constexpr double kNoiseRatio = 1.5;
constexpr double kNoiseTolerance = 0.05;

// A dip at a divisor lag / k (k = 6 .. 2) nearly as deep as the chosen one: in noise every multiple of the period dips
// about as deep as the period itself, and the normalisation makes the longer lags a little deeper.
LagChoice shortest_divisor(std::span<const double> dn, LagChoice c, std::size_t lag_min, std::size_t lag_max) noexcept {
    const double near = c.aperiodicity * kNoiseRatio + kNoiseTolerance;
    for (std::size_t k = 6; k >= 2; --k) {
        const double centre = static_cast<double>(c.lag) / static_cast<double>(k);
        const double radius = std::max(1.0, 0.03 * centre);
        const auto lo = static_cast<std::size_t>(std::max(static_cast<double>(lag_min), std::floor(centre - radius)));
        const auto hi = static_cast<std::size_t>(std::min(static_cast<double>(lag_max), std::ceil(centre + radius)));
        if (lo > hi || lo < 1 || hi + 1 >= dn.size()) continue;
        std::size_t best = lo;
        for (std::size_t t = lo; t <= hi; ++t)
            if (dn[t] < dn[best]) best = t;
        if (dn[best] <= near && dn[best] <= dn[best - 1] && dn[best] <= dn[best + 1])
            return {best, dn[best], dn[best] < c.aperiodicity || c.below_threshold};
    }
    return c;
}
}  // namespace

LagChoice absolute_threshold(std::span<const double> dn, std::size_t lag_min, std::size_t lag_max,
                             double threshold) noexcept {
    LagChoice c;
    if (dn.empty()) return c;
    lag_max = std::min(lag_max, dn.size() - 1);
    lag_min = std::max<std::size_t>(1, std::min(lag_min, lag_max));
    for (std::size_t t = lag_min; t <= lag_max; ++t) {
        if (dn[t] < threshold) {
            while (t + 1 <= lag_max && dn[t + 1] < dn[t]) ++t;
            return shortest_divisor(dn, {t, dn[t], true}, lag_min, lag_max);
        }
        // A dip whose bottom falls between two lags: judge it by the bottom of
        // the parabola through it (a short period sampled coarsely).
        if (t + 1 < dn.size() && dn[t] <= dn[t - 1] && dn[t] <= dn[t + 1]) {
            const double a = dn[t - 1], b = dn[t], c = dn[t + 1], den = a - 2.0 * b + c;
            const double bottom = den > 0.0 ? b - (a - c) * (a - c) / (8.0 * den) : b;
            if (bottom < threshold) return {t, std::max(0.0, bottom), true};
        }
    }
    c.lag = lag_min;
    c.aperiodicity = dn[lag_min];
    for (std::size_t t = lag_min + 1; t <= lag_max; ++t)
        if (dn[t] < c.aperiodicity) c = {t, dn[t], false};
    return shortest_divisor(dn, c, lag_min, lag_max);
}

namespace {
constexpr double kOldNoteRatio = 3.0;  // beside_old_note(): the new note's dip at most 3 d' + 0.15
constexpr double kOldNoteTolerance = 0.15;
constexpr double kLagReach = 0.03;  // multiples and divisors are searched within 3 % of the exact lag

// The deepest local minimum of dn within kLagReach of lag (0 when none).
std::size_t dip_around(std::span<const double> dn, double lag, std::size_t lag_min) noexcept {
    const double radius = std::max(1.0, kLagReach * lag);
    const auto lo = static_cast<std::size_t>(std::max({1.0, static_cast<double>(lag_min), std::floor(lag - radius)}));
    const auto hi = static_cast<std::size_t>(std::min(static_cast<double>(dn.size()) - 2.0, std::ceil(lag + radius)));
    if (lo > hi) return 0;
    std::size_t best = lo;
    for (std::size_t t = lo; t <= hi; ++t)
        if (dn[t] < dn[best]) best = t;
    return dn[best] <= dn[best - 1] && dn[best] <= dn[best + 1] ? best : 0;
}

bool near_multiple(double lag, double base, int most) noexcept {
    for (int m = 1; m <= most; ++m)
        if (std::fabs(lag / (m * base) - 1.0) < kLagReach) return true;
    return false;
}

// The bottom of the parabola through dn at j and its neighbours: a short period's dip falls between two lags, and
// its sampled value overstates it more than a multiple's.
double dip_bottom(std::span<const double> dn, std::size_t j) noexcept {
    return j == 0 || j + 1 >= dn.size() ? dn[j] : parabola_bottom(dn[j - 1], dn[j], dn[j + 1]);
}
}  // namespace

bool far_deeper(double own, double other) noexcept {
    return own >= kDeeperFloor &&
           (other <= kDeeperShare * own || (own >= kDeeperWide && own > kNoiseRatio * other + kNoiseTolerance));
}

LagChoice deeper_multiple(std::span<const double> dn, LagChoice c, std::size_t lag_max) noexcept {
    if (c.lag == 0 || c.lag + 1 >= dn.size()) return c;
    const double own = dip_bottom(dn, c.lag);
    if (!(own >= kDeeperFloor)) return c;
    for (std::size_t k = 2; k <= 3; ++k) {
        const double lag = static_cast<double>(k * c.lag);
        if (lag > static_cast<double>(lag_max)) break;
        const std::size_t j = dip_around(dn, lag, 1);
        if (j != 0 && far_deeper(own, dip_bottom(dn, j))) return {j, dn[j], c.below_threshold};
    }
    return c;
}

LagChoice beside_old_note(std::span<const double> dn, LagChoice c, double old_lag, std::size_t lag_min) noexcept {
    if (!(old_lag > 0.0) || c.lag == 0) return c;
    const auto lag = static_cast<double>(c.lag);
    bool common = false;
    for (int m = 2; m <= 4; ++m) common = common || std::fabs(lag / (m * old_lag) - 1.0) < kLagReach;
    if (!common) return c;
    LagChoice best = c;
    const double most = kOldNoteRatio * c.aperiodicity + kOldNoteTolerance;
    for (std::size_t k = 2; k <= 4; ++k) {
        const double cand = lag / static_cast<double>(k);
        if (near_multiple(cand, old_lag, 4) || near_multiple(old_lag, cand, 4)) continue;
        const std::size_t j = dip_around(dn, cand, lag_min);
        if (j != 0 && dn[j] <= most && (best.lag == c.lag || dn[j] < best.aperiodicity))
            best = {j, dn[j], c.below_threshold};
    }
    return best;
}

double parabola_bottom(double a, double b, double c) noexcept {
    const double den = a - 2.0 * b + c;
    return den > 0.0 ? std::max(0.0, b - (a - c) * (a - c) / (8.0 * den)) : b;
}

double parabolic_minimum(std::span<const double> d, std::size_t lag) noexcept {
    if (lag == 0 || lag + 1 >= d.size()) return static_cast<double>(lag);
    const double a = d[lag - 1], b = d[lag], c = d[lag + 1];
    const double den = a - 2.0 * b + c;
    if (!(den > 0.0)) return static_cast<double>(lag);
    const double off = std::clamp(0.5 * (a - c) / den, -1.0, 1.0);
    return static_cast<double>(lag) + off;
}

// Public one-off helper (pitch/dsp/yin.h): the same block path the tracker runs.
void yin_difference(std::span<const float> x, std::size_t window, std::size_t max_lag, std::span<double> out) {
    if (window == 0) throw Error("yin_difference: window 0 (needs at least one sample)");
    if (x.size() < window + max_lag)
        throw Error("yin_difference: " + std::to_string(x.size()) + " samples given, window + max_lag needs " +
                    std::to_string(window + max_lag));
    if (out.size() < max_lag + 1)
        throw Error("yin_difference: output holds " + std::to_string(out.size()) + " values, needs " +
                    std::to_string(max_lag + 1));
    // Blocks of 16..128 samples that tile the window, or the window as one block.
    std::size_t block = window;
    for (std::size_t p = std::min<std::size_t>(128, window); p >= 16; --p)
        if (window % p == 0) {
            block = p;
            break;
        }
    BlockCorrelator corr(block, window / block, max_lag);
    const std::size_t blocks = window / block + corr.lookahead_blocks();
    std::vector<float> padded(blocks * block, 0.0f);
    std::copy(x.begin(), x.begin() + static_cast<std::ptrdiff_t>(window + max_lag), padded.begin());
    for (std::size_t b = 0; b < blocks; ++b) corr.add_block(padded.data() + b * block);
    std::vector<float> r(max_lag + 1);
    corr.window_correlation(r);
    difference_from_correlation(x.data(), window, max_lag, r.data(), out.data());
}

}  // namespace beatless::pitch
