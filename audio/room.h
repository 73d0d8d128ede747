// SimulatedRoom — what a microphone hears of the loudspeakers, simplest form (demo mic, drone-removal tests, bench).
// Method: a delay of whole samples, a gain, and the textbook RC one-pole low-pass y[n] = y[n-1] + a (x[n] - y[n-1]),
// a = 1 - e^{-2 pi fc / fs}, for the colour of the room and the microphone.
// Thread: one at a time. Allocates: in the constructor only.
#pragma once

#include <cmath>
#include <cstddef>
#include <numbers>
#include <span>
#include <vector>

namespace beatless::audio {

struct RoomConfig {
    double sample_rate_hz = 48000.0;
    double delay_s = 0.007;      // loudspeaker to microphone (default 7 ms, about 2.4 m)
    double gain = 0.8;           // linear level at the microphone (default 0.8)
    double lowpass_hz = 3000.0;  // one-pole corner (default 3 kHz; 0 = no filter)
};

class SimulatedRoom {
public:
    explicit SimulatedRoom(const RoomConfig& c) : cfg_(c) {
        delay_.assign(static_cast<std::size_t>(std::lround(c.delay_s * c.sample_rate_hz)) + 1, 0.0f);
        a_ = c.lowpass_hz > 0.0 ? 1.0 - std::exp(-2.0 * std::numbers::pi * c.lowpass_hz / c.sample_rate_hz) : 1.0;
    }
    // Adds the room's version of `loudspeaker` into `mic`. Allocates: no.
    void process_add(std::span<const float> loudspeaker, std::span<float> mic) noexcept {
        const std::size_t n = std::min(loudspeaker.size(), mic.size());
        const std::size_t len = delay_.size();
        for (std::size_t i = 0; i < n; ++i) {
            delay_[pos_] = loudspeaker[i];
            pos_ = pos_ + 1 == len ? 0 : pos_ + 1;
            const double x = delay_[pos_];  // the oldest sample: len - 1 samples ago
            y_ += a_ * (x - y_);
            mic[i] += static_cast<float>(cfg_.gain * y_);
        }
    }
    const RoomConfig& config() const noexcept { return cfg_; }

private:
    RoomConfig cfg_;
    std::vector<float> delay_;
    std::size_t pos_ = 0;
    double a_ = 1.0, y_ = 0.0;
};

}  // namespace beatless::audio
