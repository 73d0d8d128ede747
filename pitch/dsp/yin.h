// YinTracker — streaming fundamental-frequency tracking: YIN on a decimated copy, refined at the full rate.
// Method: A. de Cheveigné and H. Kawahara, "YIN, a fundamental frequency estimator for speech and music", J. Acoust.
// Soc. Am. 111(4), 1917-1930 (2002); the vibrato bias removed as a kernel-smoothing bias (M. P. Wand and M. C. Jones,
// Kernel Smoothing, Chapman & Hall 1995, sec. 2.5); voicing against a noise floor by minimum statistics (R. Martin
// 2001, yin_voicing.h); continuity across frames after pYIN's transition prior (M. Mauch and S. Dixon, ICASSP 2014),
// greedy and causal; in rooms, a far deeper dip at a multiple of the chosen lag is the period, and a common period of
// a ringing old note and a new one gives way to the new note's (yin_coarse.h). Stages: DEVELOPERS.md, "Methods in
// detail".
// Thread: one at a time (the analysis thread). Allocates: in the constructor only. Locks: no.
#pragma once

#include <array>
#include <cstddef>
#include <limits>
#include <memory>
#include <span>

namespace beatless::pitch {

// The lowest f0 a sound file is tracked down to by default: just under the double bass's low E (E1, 41.2 Hz). At
// 44.1 and 48 kHz with a 5 ms hop two of its periods still fit the default 50 ms span (see min_span_s()).
inline constexpr double kFileLowestHz = 41.0;

struct YinConfig {
    double sample_rate_hz = 44100.0;  // 8 000 .. 192 000
    double f_min_hz = 55.0;           // lowest f0 searched (A1); two periods and a bit must fit in span_s
    double f_max_hz = 1600.0;         // highest f0 searched, at most sample_rate_hz / 4
    double hop_s = 0.005;             // time between frames (rounded to a multiple of decimation(); see hop_s())
    double span_s = 0.050;            // most audio one estimate may depend on (0.01 .. 1 s)
    double threshold = 0.15;          // YIN absolute threshold on the normalised difference, for the dip (0 .. 1)
    double silence_dbfs = -60.0;      // frames quieter than this (RMS) are unvoiced
    bool vibrato_correction = true;  // remove the span's averaging of a moving f0 (quadratic model; one hop more delay)
    std::size_t max_block_len_samples = 1 << 16;  // frames of one push() this long fit the queue
    bool keep_candidates = false;  // also queue each frame's candidate periods (pull_candidates(); the file path)
};

struct PitchFrame {
    double t_s = 0.0;         // centre of the samples the estimate depends on, from stream start
    double f0_hz = 0.0;       // 0 when unvoiced
    double confidence = 0.0;  // 0..1, calibrated: the share of frames like this one within 50 c (voiced at >= 0.5)
    double level_dbfs =
        -std::numeric_limits<double>::infinity();  // RMS level of the span (dB re full scale), -inf for digital silence
    bool voiced() const { return f0_hz > 0.0; }
};

// One candidate period of a frame, for a path search across frames (yin_path.h): a dip of YIN's cumulative mean
// normalised difference, with its d' and the calibrated probability that it is the pitch (yin_voicing.h).
struct PitchCandidate {
    double f0_hz = 0.0;
    double aperiodicity = 1.0;  // d' at the dip's bottom
    double probability = 0.0;   // voicing_probability() of the dip
    bool multiple = false;      // its period is 2..6 periods of another candidate whose dip is nearly as deep
};

inline constexpr std::size_t kMaxPitchCandidates = 5;

// A frame's candidates. Candidate 0 is the tracker's own choice (after its octave and continuity rules, and refined
// when the frame is voiced: then its f0 is the frame's); the others are the next deepest dips at other periods
// (their f0 from the coarse stage, the parabola through the dip). n = 0 for silent frames.
struct FrameCandidates {
    std::array<PitchCandidate, kMaxPitchCandidates> c{};
    std::size_t n = 0;
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

    // Produces the next frame when enough audio is buffered. push() runs the analysis; frames wait in a queue
    // sized for max_block_len_samples of audio, and older frames are dropped (and counted in dropped_frames())
    // if pull() falls further behind. Allocates: no.
    bool pull(PitchFrame& out) noexcept;
    // With keep_candidates: the candidates of the frame pull() returned last (n = 0 otherwise). Allocates: no.
    const FrameCandidates& candidates() const noexcept;

    void reset() noexcept;  // forget all audio, t restarts at 0
    const YinConfig& config() const noexcept;
    std::size_t hop_len_samples() const noexcept;  // hop actually used
    double hop_s() const noexcept;                 // hop_len_samples / rate
    double delay_s() const noexcept;               // last sample pushed minus t of the frame it completes
    std::size_t bad_samples() const noexcept;      // non-finite samples seen
    std::size_t dropped_frames() const noexcept;   // frames lost because pull() fell behind
    std::size_t decimation() const noexcept;       // factor of the coarse stage's rate reduction

    // The shortest span_s these settings allow (span_s itself is not read):
    // a little over two periods of f_min_hz. Throws Error on invalid settings.
    static double min_span_s(const YinConfig& config);

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

// The YIN difference function d(tau) = sum_{j=0}^{window-1} (x[j] - x[j+tau])^2
// for tau = 0 .. max_lag, computed as the tracker does (yin_coarse.h); x must hold at least
// window + max_lag samples; out receives max_lag + 1 values. Exposed for
// tests against a direct computation. Allocates: yes (a one-off helper).
void yin_difference(std::span<const float> x, std::size_t window, std::size_t max_lag, std::span<double> out);

// Second moment (samples^2) of the kernel over which a lag L measured with a
// biweight window of W samples averages a moving f0: (W / 2)^2 / 7 + L^2 / 12
// (with the flat-topped (1 - u^8)^2 of a steady tone, flat: (W / 2)^2 51 / 209 + L^2 / 12)
// (the window convolved with a boxcar of L). The vibrato correction removes
// m2 / 2 times the curvature of log f0. Exposed for the numpy cross-check.
double yin_kernel_second_moment(double window_samples, double lag_samples, bool flat = false) noexcept;

}  // namespace beatless::pitch
