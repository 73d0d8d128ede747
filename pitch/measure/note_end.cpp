// LevelEnvelope (note_end.h).
#include "pitch/measure/note_end.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>

namespace beatless::pitch {

LevelEnvelope::LevelEnvelope(double sample_rate_hz, double frame_s) : frame_s_(frame_s) {
    if (!(sample_rate_hz > 0.0) || !(frame_s > 0.0)) throw Error("LevelEnvelope: rate and frame must be positive");
    frame_len_ = std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(frame_s * sample_rate_hz)));
    frame_s_ = static_cast<double>(frame_len_) / sample_rate_hz;
    ring_.assign(static_cast<std::size_t>(std::ceil(kHistoryS / frame_s_)) + 1, -200.0f);
}

void LevelEnvelope::push(std::span<const float> x) noexcept {
    for (const float v : x) {
        sum_ += static_cast<double>(v) * v;
        if (++filled_ == frame_len_) {
            ring_[frames_ % ring_.size()] =
                static_cast<float>(10.0 * std::log10(std::max(sum_ / static_cast<double>(frame_len_), 1e-20)));
            ++frames_;
            sum_ = 0.0;
            filled_ = 0;
        }
    }
}

double LevelEnvelope::median_db(double from_s, double to_s) const {
    std::vector<float> v;
    for (auto i = static_cast<std::size_t>(std::max(0.0, std::ceil(from_s / frame_s_)));
         static_cast<double>(i + 1) * frame_s_ <= to_s + 1e-9; ++i)
        if (kept(i)) v.push_back(ring_[i % ring_.size()]);
    if (v.empty()) return NAN;
    std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2), v.end());
    return v[v.size() / 2];
}

double LevelEnvelope::end_before(double start_s, double end_s, double period_s) const {
    constexpr double kReachS = 0.15, kFallDb = 6.0;
    const double body_from = std::max(start_s + 0.1, end_s - 2.0), body_to = end_s - kReachS;
    if (body_to - body_from < 0.05) return end_s;
    const double held = median_db(body_from, body_to), after = median_db(end_s, end_s + kAfterS);
    if (!std::isfinite(held) || !std::isfinite(after) || held - after < kFallDb) return end_s;
    const double mid = 0.5 * (held + after);
    // The last frame at or above the midpoint, looking back from just after the tracked end.
    const auto first = static_cast<std::size_t>(std::max(0.0, std::floor((end_s - kReachS) / frame_s_)));
    auto i = static_cast<std::size_t>(std::floor((end_s + 0.02) / frame_s_));
    for (; i >= first && i > 0; --i)
        if (kept(i) && ring_[i % ring_.size()] >= mid) break;
    if (i < first || !kept(i)) return end_s;
    const double drop_s = static_cast<double>(i + 1) * frame_s_;
    return std::clamp(drop_s - period_s, std::max(start_s, end_s - kReachS), end_s);
}

}  // namespace beatless::pitch
