#include "pitch/measure/channel_checks.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>

namespace beatless::pitch {

ChannelChecks::ChannelChecks(std::size_t channels, const ChannelChecksConfig& config) : cfg_(config), n_(channels) {
    if (channels < 1 || channels > 64)
        throw Error("channel checks: " + std::to_string(channels) + " channels (1 to 64)");
    if (!(cfg_.hop_s > 0.0 && cfg_.window_s >= 4.0 * cfg_.hop_s && cfg_.window_s <= 10.0))
        throw Error("channel checks: window must hold at least four frames and at most 10 s");
    if (!(cfg_.silent_s > 0.0)) throw Error("channel checks: silent_s must be positive");
    cap_ = static_cast<std::size_t>(std::lround(cfg_.window_s / cfg_.hop_s));
    eval_every_ = std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(cfg_.eval_every_s / cfg_.hop_s)));
    silent_frames_needed_ = std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(cfg_.silent_s / cfg_.hop_s)));
    cents_.assign(cap_ * n_, NAN);
    level_.assign(cap_ * n_, -INFINITY);
    quiet_since_.assign(n_, 0);
    voiced_at_.assign(n_, 0);
    silent_.assign(n_, 0);
    flagged_.assign(n_ * (n_ - 1) / 2 + 1, 0);
    copy_of_.assign(n_, -1);
}

void ChannelChecks::reset() noexcept {
    std::fill(cents_.begin(), cents_.end(), NAN);
    std::fill(level_.begin(), level_.end(), -INFINITY);
    head_ = count_ = since_eval_ = 0;
    frame_ = 0;
    std::fill(quiet_since_.begin(), quiet_since_.end(), 0);
    std::fill(voiced_at_.begin(), voiced_at_.end(), 0);
    std::fill(silent_.begin(), silent_.end(), 0);
    std::fill(flagged_.begin(), flagged_.end(), 0);
    std::fill(copy_of_.begin(), copy_of_.end(), -1);
}

std::size_t ChannelChecks::pair_index(std::size_t a, std::size_t b) const noexcept {
    // Pairs (0,1), (0,2) .. (0,n-1), (1,2) ...: row a starts after a rows of shrinking length.
    return a * (2 * n_ - a - 1) / 2 + (b - a - 1);
}

bool ChannelChecks::same_pair(std::size_t a, std::size_t b) const noexcept {
    if (a == b || a >= n_ || b >= n_) return false;
    if (a > b) std::swap(a, b);
    return flagged_[pair_index(a, b)] != 0;
}

void ChannelChecks::push(const double* f0_hz, const double* level_dbfs) noexcept {
    double* c = &cents_[head_ * n_];
    double* l = &level_[head_ * n_];
    for (std::size_t ch = 0; ch < n_; ++ch) {
        const double f = f0_hz[ch];
        const bool voiced = std::isfinite(f) && f > 0.0;
        c[ch] = voiced ? 1200.0 * std::log2(f / 440.0) : NAN;
        l[ch] = level_dbfs[ch];
        if (voiced) voiced_at_[ch] = frame_ + 1;
        const bool quiet = !(level_dbfs[ch] >= cfg_.silence_dbfs);  // -inf and NaN count as quiet
        if (!quiet) quiet_since_[ch] = frame_ + 1;
    }
    ++frame_;
    head_ = (head_ + 1) % cap_;
    count_ = std::min(count_ + 1, cap_);
    // Silent channels: quiet for silent_s while another channel was voiced in that time.
    for (std::size_t ch = 0; ch < n_; ++ch) {
        const std::uint64_t quiet_frames = frame_ - quiet_since_[ch];
        bool other = false;
        for (std::size_t o = 0; o < n_ && !other; ++o)
            other = o != ch && voiced_at_[o] > 0 && frame_ - voiced_at_[o] < silent_frames_needed_;
        if (quiet_frames >= silent_frames_needed_ && other)
            silent_[ch] = 1;
        else if (quiet_frames == 0)
            silent_[ch] = 0;  // sound again: released at once
    }
    if (++since_eval_ >= eval_every_) {
        since_eval_ = 0;
        evaluate();
    }
}

void ChannelChecks::evaluate() noexcept {
    if (n_ < 2) return;
    std::fill(copy_of_.begin(), copy_of_.end(), -1);
    for (std::size_t a = 0; a < n_; ++a) {
        for (std::size_t b = a + 1; b < n_; ++b) {
            // Sums over the frames where both are voiced.
            std::size_t both = 0;
            double sx = 0, sy = 0, sxx = 0, syy = 0, sxy = 0, sd2 = 0, la = 0, lb = 0;
            for (std::size_t k = 0; k < count_; ++k) {
                const double x = cents_[k * n_ + a], y = cents_[k * n_ + b];
                if (!std::isfinite(x) || !std::isfinite(y)) continue;
                ++both;
                sx += x;
                sy += y;
                sxx += x * x;
                syy += y * y;
                sxy += x * y;
                sd2 += (x - y) * (x - y);
                la += level_[k * n_ + a];
                lb += level_[k * n_ + b];
            }
            std::uint8_t& flag = flagged_[pair_index(a, b)];
            const double overlap = static_cast<double>(both) / static_cast<double>(cap_);
            if (both < 4) {
                flag = 0;
                continue;
            }
            const double nb = static_cast<double>(both);
            const double rms = std::sqrt(sd2 / nb);
            const double vx = std::max(0.0, sxx / nb - (sx / nb) * (sx / nb));
            const double vy = std::max(0.0, syy / nb - (sy / nb) * (sy / nb));
            const double cov = sxy / nb - (sx / nb) * (sy / nb);
            const bool moving = std::sqrt(vx) > cfg_.still_cents || std::sqrt(vy) > cfg_.still_cents;
            const double r = (vx > 0.0 && vy > 0.0) ? cov / std::sqrt(vx * vy) : 0.0;
            const bool same =
                overlap >= cfg_.min_overlap && rms <= cfg_.max_rms_cents && (!moving || r >= cfg_.min_correlation);
            if (flag) {
                if (rms > cfg_.release_rms_cents || overlap < cfg_.release_overlap) flag = 0;
            } else if (same) {
                flag = 1;
            }
            if (!flag) continue;
            // The copy is the quieter channel; both when their levels are close.
            const double da = la / nb, db = lb / nb;
            if (!(std::fabs(da - db) > cfg_.equal_db) || !std::isfinite(da - db)) {
                if (copy_of_[a] < 0) copy_of_[a] = static_cast<int>(b);
                if (copy_of_[b] < 0) copy_of_[b] = static_cast<int>(a);
            } else if (da < db) {
                if (copy_of_[a] < 0) copy_of_[a] = static_cast<int>(b);
            } else {
                if (copy_of_[b] < 0) copy_of_[b] = static_cast<int>(a);
            }
        }
    }
}

}  // namespace beatless::pitch
