// CancelYin — steps (summary in cancel_yin.h).
//
// (1) The residue y(t) = x(t) - x(t - T) over the newest window + lags, stored reversed (r[0] is the newest
// sample), so YIN's fixed window is the newest audio and its lags reach back in time; x(t - T) by 4-point
// Lagrange interpolation; then low-passed (a biquad) so broadband noise weighs less. (2) YIN steps 2-4 (difference, cumulative mean normalised difference, absolute
// threshold) on r decimated 4:1 by block means, lags 1 .. the range's longest period. (3) The difference at
// the full rate around twice the decimated lag, and the parabola through its minimum (YIN step 5). (4) The
// aperiodicity is d(T) / (sum r_j^2 + sum r_{j+T}^2), YIN's ratio of aperiodic to total power (sec. II.F).
#include "pitch/dsp/cancel_yin.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/vec_ops.h"
#include "pitch/dsp/yin_coarse.h"

#include <algorithm>
#include <cmath>
#include <span>
#include <string>

namespace beatless::pitch {

namespace {
constexpr std::size_t kDecim = 4;       // the coarse search runs at a quarter of the rate
constexpr std::size_t kRefineHalf = 5;  // full-rate lags searched either side of kDecim times the coarse lag
constexpr std::size_t kPad = 2 * vec::kLanes + 8;
constexpr std::size_t kLeadIn = 96;  // samples the low-pass runs before the residue it keeps

void check(bool ok, const char* what, double v) {
    if (!ok) throw Error("cancel-YIN: " + std::string(what) + " " + format_trimmed(v, 6) + " is out of range");
}

// The 4-point Lagrange weights of x(t + k - 1) .. x(t + k + 2) that interpolate x(t - period), k = floor(-period):
// the same for every integer t.
struct Lagrange4 {
    std::ptrdiff_t k = 0;
    double c[4] = {0.0, 0.0, 0.0, 0.0};
};
Lagrange4 lagrange_weights(double period) noexcept {
    Lagrange4 l;
    const double fl = std::floor(-period);
    const double u = -period - fl;
    l.k = static_cast<std::ptrdiff_t>(fl);
    l.c[0] = -u * (u - 1.0) * (u - 2.0) / 6.0;
    l.c[1] = (u + 1.0) * (u - 1.0) * (u - 2.0) / 2.0;
    l.c[2] = -(u + 1.0) * u * (u - 2.0) / 2.0;
    l.c[3] = (u + 1.0) * u * (u - 1.0) / 6.0;
    return l;
}
}  // namespace

CancelYin::CancelYin(const CancelYinConfig& config) : cfg_(config) {
    check(cfg_.sample_rate_hz >= 8000.0 && cfg_.sample_rate_hz <= 192000.0, "sample rate (Hz)", cfg_.sample_rate_hz);
    check(cfg_.window_s >= 0.005 && cfg_.window_s <= 0.2, "window_s", cfg_.window_s);
    check(cfg_.f_min_hz >= 20.0 && cfg_.f_min_hz < cfg_.f_max_hz, "f_min_hz", cfg_.f_min_hz);
    check(cfg_.f_max_hz <= 0.25 * cfg_.sample_rate_hz, "f_max_hz", cfg_.f_max_hz);
    check(cfg_.threshold > 0.0 && cfg_.threshold < 1.0, "threshold", cfg_.threshold);
    check(cfg_.lowpass_hz >= 2.0 * cfg_.f_max_hz, "lowpass_hz", cfg_.lowpass_hz);
    check(cfg_.max_window_s == 0.0 || (cfg_.max_window_s >= cfg_.window_s && cfg_.max_window_s <= 0.2), "max_window_s",
          cfg_.max_window_s);
    const auto round_up = [](double s) {
        const auto w = static_cast<std::size_t>(std::ceil(s));
        return (w + 4 * vec::kLanes - 1) / (4 * vec::kLanes) * (4 * vec::kLanes);
    };
    w_ = round_up(cfg_.window_s * cfg_.sample_rate_hz);
    w_max_ = std::max(w_, round_up(cfg_.max_window_s * cfg_.sample_rate_hz));
    max_lag_ = static_cast<std::size_t>(std::ceil(cfg_.sample_rate_hz / cfg_.f_min_hz)) + kRefineHalf + 2;
    y_.assign(w_max_ + max_lag_ + kPad + kLeadIn, 0.0f);
    set_lowpass(cfg_.lowpass_hz);
    yd_.assign(y_.size() / kDecim + kPad, 0.0f);
    ones_.assign(w_max_, 1.0f);
    d_.assign(max_lag_ / kDecim + 4, 0.0);
    dn_.assign(d_.size(), 0.0);
    dfull_.assign(2 * kRefineHalf + 1, 0.0);
}

// Second-order Butterworth low-pass (Q = 1/sqrt 2) by the bilinear transform: R. Bristow-Johnson, "Cookbook
// formulae for audio EQ biquad filter coefficients" (from memory).
void CancelYin::set_lowpass(double hz) noexcept {
    hz = std::min(hz, 0.45 * cfg_.sample_rate_hz);
    if (hz == lowpass_hz_) return;
    lowpass_hz_ = hz;
    const double w0 = 2.0 * 3.14159265358979323846 * hz / cfg_.sample_rate_hz;
    const double alpha = std::sin(w0) / std::sqrt(2.0), cw = std::cos(w0), a0 = 1.0 + alpha;
    b0_ = 0.5 * (1.0 - cw) / a0;
    b1_ = (1.0 - cw) / a0;
    b2_ = b0_;
    a1_ = -2.0 * cw / a0;
    a2_ = (1.0 - alpha) / a0;
}

std::size_t CancelYin::window_len_samples(std::size_t window_samples) const noexcept {
    if (window_samples == 0) return w_;
    return std::clamp(window_samples / (4 * vec::kLanes) * (4 * vec::kLanes), w_, w_max_);
}

std::size_t CancelYin::needed_samples(double cancel_period_samples, double lo_hz,
                                      std::size_t window_samples) const noexcept {
    const double lo = std::max(lo_hz, cfg_.f_min_hz);
    const auto lag = static_cast<std::size_t>(std::ceil(cfg_.sample_rate_hz / lo)) + kRefineHalf + 2;
    return window_len_samples(window_samples) + std::min(lag, max_lag_) + kLeadIn +
           static_cast<std::size_t>(std::ceil(std::max(0.0, cancel_period_samples))) + 3;
}

CancelYinResult CancelYin::estimate(const float* x, std::size_t end, double cancel_period_samples, double lo_hz,
                                    double hi_hz, double lowpass_hz, std::size_t window_samples) noexcept {
    CancelYinResult res;
    const double fs = cfg_.sample_rate_hz;
    lo_hz = std::max(lo_hz, cfg_.f_min_hz);
    hi_hz = std::min(hi_hz, cfg_.f_max_hz);
    if (!(hi_hz > lo_hz) || end < needed_samples(cancel_period_samples, lo_hz, window_samples)) return res;
    const std::size_t w = window_len_samples(window_samples);
    set_lowpass(lowpass_hz > 0.0 ? std::max(lowpass_hz, hi_hz) : cfg_.lowpass_hz);
    // (1) The residue, newest first.
    const std::size_t lag_hi = std::min(max_lag_, static_cast<std::size_t>(std::ceil(fs / lo_hz)) + kRefineHalf + 2);
    const std::size_t len = w + lag_hi + 1;
    const bool cancel = cancel_period_samples > 1.0;
    const std::size_t all = len + kLeadIn;
    if (cancel) {
        const Lagrange4 l = lagrange_weights(cancel_period_samples);
        for (std::size_t i = 0; i < all; ++i) {
            const float* p = x + static_cast<std::ptrdiff_t>(end - 1 - i) + l.k;
            y_[i] = static_cast<float>(static_cast<double>(p[-l.k]) -
                                       (l.c[0] * p[-1] + l.c[1] * p[0] + l.c[2] * p[1] + l.c[3] * p[2]));
        }
    } else {
        for (std::size_t i = 0; i < all; ++i) y_[i] = x[end - 1 - i];
    }
    // Low-pass in time order (oldest first; the lead-in takes the filter's start-up): white noise above the
    // partials that carry the period goes, the period stays (a linear filter keeps any periodicity).
    double z1 = 0.0, z2 = 0.0;
    for (std::size_t i = all; i-- > 0;) {
        const double in = y_[i];
        const double out = b0_ * in + z1;
        z1 = b1_ * in - a1_ * out + z2;
        z2 = b2_ * in - a2_ * out;
        y_[i] = static_cast<float>(out);
    }
    std::fill(y_.begin() + static_cast<std::ptrdiff_t>(len), y_.end(), 0.0f);
    // (2) YIN on the decimated residue (block means of the low-passed residue).
    const std::size_t wd = w / kDecim;
    const std::size_t lag_d = std::min(d_.size() - 1, lag_hi / kDecim);
    const std::size_t nd = std::min(yd_.size(), len / kDecim);
    for (std::size_t k = 0; k < nd; ++k) {
        float sum = 0.0f;
        for (std::size_t j = 0; j < kDecim; ++j) sum += y_[kDecim * k + j];
        yd_[k] = sum / static_cast<float>(kDecim);
    }
    std::fill(yd_.begin() + static_cast<std::ptrdiff_t>(nd), yd_.end(), 0.0f);
    d_[0] = 0.0;
    vec::weighted_sq_diff(yd_.data(), ones_.data(), wd, 1, lag_d, d_.data() + 1);
    const std::span<const double> d(d_.data(), lag_d + 1);
    cumulative_mean_normalised(d, std::span<double>(dn_.data(), lag_d + 1));
    const double rate_d = fs / static_cast<double>(kDecim);
    const auto lmin = std::max<std::size_t>(2, static_cast<std::size_t>(std::floor(rate_d / hi_hz)));
    const auto lmax = std::min(lag_d - 1, static_cast<std::size_t>(std::ceil(rate_d / lo_hz)));
    if (lmin >= lmax) return res;
    const LagChoice c = absolute_threshold(std::span<const double>(dn_.data(), lag_d + 1), lmin, lmax, cfg_.threshold);
    if (!c.below_threshold) {
        res.aperiodicity = c.aperiodicity;
        return res;
    }
    // (3) The full-rate difference near kDecim times that lag, and its parabola.
    const std::size_t l0 = kDecim * c.lag - kRefineHalf;
    vec::weighted_sq_diff(y_.data(), ones_.data(), w, l0, dfull_.size(), dfull_.data());
    std::size_t best = 1;
    for (std::size_t k = 1; k + 1 < dfull_.size(); ++k)
        if (dfull_[k] < dfull_[best]) best = k;
    const double lag = static_cast<double>(l0) + parabolic_minimum(dfull_, best);
    const double f0 = fs / lag;
    if (!(f0 >= lo_hz && f0 <= hi_hz)) return res;
    // (4) Aperiodicity at the chosen lag.
    const double e0 = vec::sum_sq(y_.data(), w);
    const double et = vec::sum_sq(y_.data() + l0 + best, w);
    res.aperiodicity = e0 + et > 0.0 ? std::min(1.0, dfull_[best] / (e0 + et)) : 1.0;
    res.f0_hz = f0;
    return res;
}

}  // namespace beatless::pitch
