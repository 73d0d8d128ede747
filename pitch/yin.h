// YinTracker — streaming fundamental-frequency tracking (YIN, refined).
//
// Implements YIN: A. de Cheveigné and H. Kawahara, "YIN, a fundamental
// frequency estimator for speech and music", J. Acoust. Soc. Am. 111(4),
// 1917-1930 (2002): (1) difference function, computed through the FFT
// (KissFFT, real, out of place); (2) cumulative mean normalised difference;
// (3) absolute threshold; (4) parabolic interpolation; (5) best local
// estimate. A refinement stage then measures steady tones far more finely
// than the parabola allows (see yin.cpp for the method).
//
// All allocation happens in the constructor; push() and pull() never
// allocate for blocks up to YinConfig::max_block_len_samples.
#pragma once

#include <cstddef>
#include <memory>
#include <span>

namespace beatless::pitch {

struct YinConfig {
    double sample_rate_hz = 44100.0;   // 8 000 .. 192 000
    double f_min_hz = 55.0;            // lowest f0 searched (A1)
    double f_max_hz = 1600.0;          // highest f0 searched
    double hop_s = 0.005;              // time between frames (rounded to whole samples)
    double span_s = 0.050;             // most audio one estimate may depend on
    double threshold = 0.15;           // YIN absolute threshold on the normalised difference
    double silence_dbfs = -60.0;       // frames quieter than this (RMS) are unvoiced
    std::size_t max_block_len_samples = 1 << 16;  // push() blocks up to this never allocate
};

struct PitchFrame {
    double t_s = 0.0;          // centre of the samples the estimate depends on, from stream start
    double f0_hz = 0.0;        // 0 when unvoiced
    double confidence = 0.0;   // 0..1 (1 - normalised difference at the chosen lag)
    bool voiced() const { return f0_hz > 0.0; }
};

class YinTracker {
public:
    explicit YinTracker(const YinConfig& config);  // throws Error on invalid settings
    ~YinTracker();
    YinTracker(YinTracker&&) noexcept;
    YinTracker& operator=(YinTracker&&) noexcept;

    // Appends samples (any block size). Non-finite samples are treated as 0
    // and counted in bad_samples(). Thread: one thread at a time. Allocates: no.
    void push(std::span<const float> samples) noexcept;

    // Produces the next frame when enough audio is buffered. Allocates: no.
    bool pull(PitchFrame& out) noexcept;

    void reset() noexcept;                   // forget all audio, t restarts at 0
    const YinConfig& config() const noexcept;
    std::size_t hop_len_samples() const noexcept;   // hop actually used
    double hop_s() const noexcept;                  // hop_len_samples / rate
    double delay_s() const noexcept;                // last sample pushed minus t of the frame it completes
    std::size_t bad_samples() const noexcept;       // non-finite samples seen

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

// The YIN difference function d(tau) = sum_{j=0}^{window-1} (x[j] - x[j+tau])^2
// for tau = 0 .. max_lag, computed through the FFT; x must hold at least
// window + max_lag samples; out receives max_lag + 1 values. Exposed for
// tests against a direct computation. Allocates: yes (a one-off helper).
void yin_difference(std::span<const float> x, std::size_t window, std::size_t max_lag, std::span<double> out);

}  // namespace beatless::pitch
