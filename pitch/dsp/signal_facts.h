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

// How the blocks' levels spread: a histogram of block RMS in 1 dB steps from -120 to 0 dBFS, so a take's quiet
// floor (10th percentile) and its loud part (90th) can be compared to estimate its signal-to-noise ratio.
class LevelSpread {
public:
    void add(std::span<const float> block) noexcept {
        if (block.empty()) return;
        double ss = 0.0;
        for (const float v : block) ss += static_cast<double>(v) * static_cast<double>(v);
        const double db = 10.0 * std::log10(std::max(ss / static_cast<double>(block.size()), 1e-13));
        ++bins_[static_cast<std::size_t>(std::clamp(db + 120.0, 0.0, static_cast<double>(kBins - 1)))];
        ++count_;
    }
    // The level (dBFS, the bin's lower edge) below which `fraction` of the blocks lie; -inf with no blocks.
    double percentile_dbfs(double fraction) const noexcept {
        if (count_ == 0) return -INFINITY;
        const double want = fraction * static_cast<double>(count_);
        double seen = 0.0;
        for (std::size_t i = 0; i < kBins; ++i) {
            seen += static_cast<double>(bins_[i]);
            if (seen >= want) return static_cast<double>(i) - 120.0;
        }
        return 0.0;
    }
    // Estimated SNR in dB: the power of the loud blocks (90th percentile) above the quiet floor (10th), over that
    // floor. A take that is all noise reads near 0 dB.
    double snr_db() const noexcept {
        const double loud = std::pow(10.0, percentile_dbfs(0.9) / 10.0),
                     quiet = std::pow(10.0, percentile_dbfs(0.1) / 10.0);
        if (!(quiet > 0.0)) return INFINITY;
        return 10.0 * std::log10(std::max(loud - quiet, 1e-3 * quiet) / quiet);
    }
    std::int64_t blocks() const noexcept { return count_; }

private:
    static constexpr std::size_t kBins = 121;
    std::array<std::int64_t, kBins> bins_{};
    std::int64_t count_ = 0;
};

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
