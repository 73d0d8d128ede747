// TwoVoiceTracker — both fundamentals of two simultaneous harmonic voices from one microphone (double stops, two
// singers, a voice over a bass line), their interval's nearest just target and the beat of the coinciding partials.
// Method: A. Klapuri, "Multiple fundamental frequency estimation by summing harmonic amplitudes", Proc. ISMIR 2006,
// pp. 216-221 (iterative estimation and cancellation), on phase-vocoder peaks; per voice weighted least squares.
// That 170 ms stage decides WHICH pair sounds; a short second stage says WHERE each voice is now: the other voice
// cancelled at its period and YIN on the rest (de Cheveigné, JASA 93(6), 1993; pitch/dsp/cancel_yin.h).
// Thread: one at a time. Allocates: in the constructor only. Steps in two_voice.cpp.
#pragma once

#include "pitch/theory/targets.h"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <memory>
#include <span>

namespace beatless::pitch {

struct TwoVoiceConfig {
    double sample_rate_hz = 44100.0;              // 8 000 .. 192 000
    double window_s = 0.17;                       // analysis window (default 170 ms; rounded to a fast FFT size)
    double hop_s = 0.01;                          // time between frames (default 10 ms)
    double f_min_hz = 60.0;                       // lowest fundamental (default 60 Hz)
    double f_max_hz = 1200.0;                     // highest fundamental (default 1200 Hz)
    int max_harmonic = 12;                        // partials per voice used (default 12)
    double max_freq_hz = 6000.0;                  // highest partial used (default 6 kHz)
    double peak_range_db = 70.0;                  // peaks down to this far below the strongest (default 70 dB)
    double silence_dbfs = -60.0;                  // quieter frames (RMS) have no voices (default -60 dBFS)
    double min_second_salience = 0.05;            // second voice's salience relative to the first (default 0.05)
    double beat_history_s = 3.0;                  // envelope history for slow beats (default 3 s)
    double octave_share = 0.15;                   // even-partial excess (salience at 2 f0 after cancelling the
                                                  //   first voice, relative to its own) that says octave (0.35)
    double merge_memory_s = 0.3;                  // a pair seen this recently names the merge (default 0.3 s)
    bool octave_equivalent = true;                // targets match in every octave (default on)
    double fast_window_s = 0.02;                  // second stage's YIN window (default 20 ms; 0: no second stage)
    double fast_max_window_s = 0.06;              // ... grown up to this while the pair holds (default 60 ms)
    double fast_aperiodicity = 0.2;               // second stage's voice is believed up to this (default 0.2)
    double fast_agree_cents = 30.0;               // stages this close: the slow stage's f0s stand (default 30 c)
    std::size_t max_block_len_samples = 1 << 16;  // push() blocks up to this never allocate
};

enum class BeatSource {
    none,                  // not measured (warming up, one voice, partials absent or out of range, a note
                           //   changing, or an envelope rate far from the predicted one: a bow change or noise)
    frequency_difference,  // the two coinciding partials are separate spectral peaks
    envelope,              // whole cycles of the shared partial's amplitude envelope
    slower_than_history,   // no whole beat within beat_history_s: measured_beat_hz = 0
};

// Why one series was heard where two voices may sound (frames with voices == 1).
enum class Blend {
    none,         // two voices told apart, or silence
    one_series,   // one harmonic series explains the sound: one note, or a unison or octave too close to tell
    near_unison,  // the pair was within 100 c of a unison just before it merged
    octave,       // a second series an octave up hides in the even partials (all its partials shared)
};

struct TwoVoiceFrame {
    double t_s = 0.0;                 // centre of the long window whose pair the frame carries (YIN's rule, DESIGN)
    double end_s = 0.0;               // the newest sample the frame has seen
    double span_s = 0.0;              // how far before end_s the f0s reach (window, lags and cancellation)
    bool fast = false;                // the f0s are the second stage's (else the 170 ms stage's)
    int voices = 0;                   // 0 (silence), 1 or 2
    double f_low_hz = 0.0;            // 0 when absent
    double f_high_hz = 0.0;           // 0 when absent
    double confidence = 0.0;          // share of the peak power the two harmonic series explain, 0..1
    bool clipped = false;             // a sample of the newest hop reached full scale (|x| >= 0.999):
                                      //   intermodulation products may then bias the f0s
    double level_low_db = -INFINITY;  // fundamental's level in dB (0 dB = full-scale sine)
    double level_high_db = -INFINITY;
    double interval_cents = NAN;     // 1200 log2(f_high / f_low)
    int target_index = -1;           // into the TargetSet, -1 when none (or the set is empty)
    int target_octaves = 0;          // octave shift of the matched target
    double target_cents = NAN;       // target after the shift
    double dev_cents = NAN;          // interval minus target: + is wide
    std::int64_t ratio_num = 0;      // the just ratio p/q the beats refer to (the target,
    std::int64_t ratio_den = 0;      //   or the nearest simple ratio of a cents target)
    int partial_low = -1;            // p: harmonic of the low voice that coincides ...
    int partial_high = -1;           // q: ... with this harmonic of the high voice
    double predicted_beat_hz = NAN;  // |q f_high - p f_low|
    double measured_beat_hz = NAN;   // from the partials themselves; NaN where it cannot be measured
    BeatSource beat_source = BeatSource::none;
    Blend blend = Blend::none;  // voices == 1: why the voices cannot be told apart
};

class TwoVoiceTracker {
public:
    // targets may be empty: then the nearest simple ratio (terms <= 10) is used.
    TwoVoiceTracker(const TwoVoiceConfig& config, const TargetSet& targets);  // throws Error on invalid settings
    ~TwoVoiceTracker();
    TwoVoiceTracker(TwoVoiceTracker&&) noexcept;
    TwoVoiceTracker& operator=(TwoVoiceTracker&&) noexcept;

    // Appends samples; non-finite ones count as 0 (bad_samples()). Samples
    // that would overflow the buffer before pull() drains it are dropped
    // and counted (dropped_samples()). Thread: one at a time. Allocates: no.
    void push(std::span<const float> samples) noexcept;

    // Produces the next frame when enough audio is buffered. Allocates: no.
    bool pull(TwoVoiceFrame& out) noexcept;

    void reset() noexcept;
    const TwoVoiceConfig& config() const noexcept;
    std::size_t window_len_samples() const noexcept;  // FFT size used
    std::size_t hop_len_samples() const noexcept;
    std::size_t bad_samples() const noexcept;
    std::size_t dropped_samples() const noexcept;

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace beatless::pitch
