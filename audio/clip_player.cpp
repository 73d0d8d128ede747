#include "audio/clip_player.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace beatless::audio {

std::vector<float> resample_linear(std::span<const float> in, double from_hz, double to_hz) {
    if (in.empty() || !(from_hz > 0.0) || !(to_hz > 0.0) || from_hz == to_hz) return {in.begin(), in.end()};
    const double step = from_hz / to_hz;
    const auto n = static_cast<std::size_t>(std::floor(static_cast<double>(in.size() - 1) / step)) + 1;
    std::vector<float> out(n);
    for (std::size_t i = 0; i < n; ++i) {
        const double x = static_cast<double>(i) * step;
        const auto k = static_cast<std::size_t>(x);
        const double f = x - static_cast<double>(k);
        out[i] = k + 1 < in.size() ? static_cast<float>((1.0 - f) * in[k] + f * in[k + 1]) : in[k];
    }
    return out;
}

ClipPlayer::ClipPlayer(double sample_rate_hz) : rate_hz_(sample_rate_hz > 0.0 ? sample_rate_hz : 48000.0) {}

ClipPlayer::~ClipPlayer() {
    delete pending_.exchange(nullptr);
    delete retired_.exchange(nullptr);
    delete current_;
}

void ClipPlayer::collect() { delete retired_.exchange(nullptr, std::memory_order_acq_rel); }

void ClipPlayer::play(std::unique_ptr<Clip> clip) {
    collect();
    delete pending_.exchange(clip.release(), std::memory_order_acq_rel);  // one not yet taken is replaced
}

void ClipPlayer::stop() {
    collect();
    delete pending_.exchange(nullptr, std::memory_order_acq_rel);
    stop_count_.fetch_add(1, std::memory_order_release);
}

double ClipPlayer::fade(std::size_t k) const noexcept {
    if (k >= fade_len_) return 1.0;
    return 0.5 - 0.5 * std::cos(std::numbers::pi * static_cast<double>(k) / static_cast<double>(fade_len_));
}

void ClipPlayer::mix(std::span<float> out) noexcept {
    const std::uint32_t stops = stop_count_.load(std::memory_order_acquire);
    const bool stop_now = stops != stops_seen_;
    stops_seen_ = stops;
    if (current_ && (stop_now || pending_.load(std::memory_order_acquire) != nullptr)) leaving_ = true;
    std::size_t i = 0;
    while (i < out.size()) {
        if (current_ && leaving_ && ramp_ == 0) {
            Clip* empty = nullptr;  // the control thread frees it; until it has taken the last one, wait silent
            if (!retired_.compare_exchange_strong(empty, current_, std::memory_order_acq_rel)) break;
            current_ = nullptr;
        }
        if (!current_) {
            current_ = pending_.exchange(nullptr, std::memory_order_acq_rel);
            if (!current_) break;
            pos_ = 0;
            ramp_ = 0;
            leaving_ = false;
            fade_len_ = static_cast<std::size_t>(std::max(1L, std::lround(current_->fade_s * rate_hz_)));
        }
        const Clip& c = *current_;
        const auto g = static_cast<float>(c.gain);
        for (; i < out.size(); ++i) {
            if (pos_ >= c.samples.size()) {
                leaving_ = true;  // the end fade has reached zero
                ramp_ = 0;
                break;
            }
            if (leaving_) {
                if (ramp_ == 0) break;
                --ramp_;
            } else if (ramp_ < fade_len_) {
                ++ramp_;
            }
            const auto e = static_cast<float>(std::min(fade(ramp_), fade(c.samples.size() - pos_ - 1)));
            const float v = c.samples[pos_++] * g;
            out[i] = c.hush_drone ? out[i] * (1.0f - e) + v * e : out[i] + v * e;
        }
    }
    sounding_.store(current_ != nullptr, std::memory_order_release);
    pos_seen_.store(static_cast<std::int64_t>(current_ ? pos_ : 0), std::memory_order_relaxed);
}

}  // namespace beatless::audio
