// SignalFacts — peak, loudest block, and clipped samples of a streamed signal, with a short
// history of where the clipping was (so each held note can say whether it was clipped).
// Thread: any. Allocates: no.
#pragma once

#include <algorithm>
#include <array>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <span>

namespace beatless::pitch {

// Facts about the samples gathered on the measuring pass.
struct SignalFacts {
    double peak = 0.0;                 // largest |sample|
    double loudest_dbfs = -INFINITY;   // RMS of the loudest 4096-sample block
    std::int64_t clipped_samples = 0;  // |sample| >= 0.999 (full scale)
    double first_clip_s = -1.0;        // time of the first, -1 when none
};

// Updates the facts with one block starting at sample `first`.
inline void observe(SignalFacts& f, std::span<const float> block, std::int64_t first, double rate_hz) noexcept {
    double ss = 0.0;
    for (std::size_t i = 0; i < block.size(); ++i) {
        const double a = std::fabs(static_cast<double>(block[i]));
        ss += a * a;
        f.peak = std::max(f.peak, a);
        if (a >= 0.999) {
            if (f.clipped_samples == 0)
                f.first_clip_s = static_cast<double>(first + static_cast<std::int64_t>(i)) / rate_hz;
            ++f.clipped_samples;
        }
    }
    if (!block.empty()) {
        const double rms = std::sqrt(ss / static_cast<double>(block.size()));
        f.loudest_dbfs = std::max(f.loudest_dbfs, rms > 0.0 ? 20.0 * std::log10(rms) : -INFINITY);
    }
}

// Clipped samples per block over the last ~95 s (more than a note may last),
// so each note can say whether it was clipped without keeping the file.
class ClipHistory {
public:
    void add(std::int64_t first_sample, std::size_t len, std::int64_t clipped) noexcept {
        blocks_[head_ % kLen] = {first_sample, first_sample + static_cast<std::int64_t>(len), clipped};
        ++head_;
    }
    std::int64_t between(double t0_s, double t1_s, double rate_hz) const noexcept {
        const auto a = static_cast<std::int64_t>(std::floor(t0_s * rate_hz)),
                   b = static_cast<std::int64_t>(std::ceil(t1_s * rate_hz));
        std::int64_t n = 0;
        for (std::size_t i = 0; i < std::min(head_, kLen); ++i)
            if (blocks_[i].end > a && blocks_[i].begin < b) n += blocks_[i].clipped;
        return n;
    }

private:
    struct Block {
        std::int64_t begin = 0, end = 0, clipped = 0;
    };
    static constexpr std::size_t kLen = 1024;
    std::array<Block, kLen> blocks_{};
    std::size_t head_ = 0;
};

}  // namespace beatless::pitch
