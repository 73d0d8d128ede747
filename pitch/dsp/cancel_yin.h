// CancelYin — the f0 of one voice of a pair over the newest few tens of milliseconds, the other voice cancelled.
// Method: time-domain cancellation, A. de Cheveigné, "Separation of concurrent harmonic sounds: fundamental frequency
// estimation and a time-domain cancellation model of auditory processing", J. Acoust. Soc. Am. 93(6), 3271-3290
// (1993): y(t) = x(t) - x(t - T) removes every partial of a voice of period T (fractional T by cubic interpolation);
// YIN (de Cheveigné and Kawahara, JASA 111(4), 2002) on y low-passed, first on a 4:1 decimated copy, then at full rate.
// Thread: one at a time. Allocates: in the constructor only.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::pitch {

struct CancelYinConfig {
    double sample_rate_hz = 48000.0;  // 8 000 .. 192 000
    double window_s = 0.02;           // YIN integration window (default 20 ms)
    double max_window_s = 0.0;        // longest window one estimate() may ask for (0: window_s; sizes the buffers)
    double f_min_hz = 60.0;           // lowest f0 ever searched (default 60 Hz; sizes the buffers)
    double f_max_hz = 1200.0;         // highest f0 ever searched (default 1200 Hz)
    double threshold = 0.25;          // YIN absolute threshold on the normalised difference (default 0.25)
    double lowpass_hz = 5000.0;       // the residue is low-passed here (default 5 kHz; at least 2 f_max_hz)
};

struct CancelYinResult {
    double f0_hz = 0.0;         // 0 when no period was found in the range
    double aperiodicity = 1.0;  // YIN's d'(T) at the chosen lag: 0 periodic .. 1 noise
};

class CancelYin {
public:
    explicit CancelYin(const CancelYinConfig& config);  // throws Error on invalid settings

    // Samples of history estimate() reads before `end` for this cancelled period, lowest f0 and window
    // (window_samples as estimate() takes it).
    std::size_t needed_samples(double cancel_period_samples, double lo_hz,
                               std::size_t window_samples = 0) const noexcept;

    // The f0 in [lo_hz, hi_hz] of what is left of x[0 .. end) after cancelling period cancel_period_samples
    // (0: no cancellation), over the newest window_s (plus the lags). x must hold needed_samples() before end;
    // the range is clamped to the configured one. lowpass_hz > 0 low-passes the residue there instead of at the
    // configured lowpass_hz (at least hi_hz, so every fundamental in the range passes; at most 0.45 of the rate).
    // window_samples > 0 integrates over that many samples instead of window_s (rounded as window_len_samples()
    // says). Allocates: no.
    CancelYinResult estimate(const float* x, std::size_t end, double cancel_period_samples, double lo_hz, double hi_hz,
                             double lowpass_hz = 0.0, std::size_t window_samples = 0) noexcept;

    // The window estimate() integrates over for a requested length (0: window_s): a multiple of 32 samples,
    // from window_s up to max_window_s.
    std::size_t window_len_samples(std::size_t window_samples = 0) const noexcept;

private:
    CancelYinConfig cfg_;
    std::size_t w_ = 0;        // integration window, samples (a multiple of 32)
    std::size_t w_max_ = 0;    // the longest one asked for (a multiple of 32)
    std::size_t max_lag_ = 0;  // at the full rate
    std::vector<float> y_, yd_, ones_;
    std::vector<double> d_, dn_, dfull_;
    double lowpass_hz_ = 0.0;                                      // where the biquad below cuts
    double b0_ = 1.0, b1_ = 0.0, b2_ = 0.0, a1_ = 0.0, a2_ = 0.0;  // the low-pass biquad
    void set_lowpass(double hz) noexcept;
};

}  // namespace beatless::pitch
