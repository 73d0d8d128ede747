// Reading — one analyzed moment of the performer's pitch against the root.
//
// Plain data, copied by value between threads (no strings, no pointers), so
// a snapshot can be published lock-free. Produced by the analysis path
// (live engine) and by offline review; consumed by the screens, `listen`,
// drill scoring and the practice log. NaN marks "not known" for doubles;
// -1 marks "none" for indices and partial numbers.
#pragma once

#include <cmath>
#include <cstdint>

namespace beatless::pitch {

struct Reading {
    double t_s = 0.0;               // stream time of the frame's centre
    double f0_hz = 0.0;             // 0 when unvoiced
    double confidence = 0.0;        // 0..1 from the tracker
    double root_hz = 0.0;           // the drone's fundamental
    double ratio = NAN;             // f0 / root
    double cents_above_root = NAN;  // 1200 log2(f0 / root)
    int target_index = -1;          // into the active TargetSet, -1 when none
    int target_octaves = 0;         // octave shift of the matched target
    double target_cents = NAN;      // target after the shift, above the root
    double dev_cents = NAN;         // cents_above_root - target_cents: + is sharp
    double centre_f0_hz = NAN;      // vibrato centre (whole cycles averaged)
    double centre_dev_cents = NAN;  // centre's deviation from the target
    double steadiness_cents = NAN;  // spread (standard deviation) over the last second
    // The target's own coinciding pair (a detail: 729:512 for 729/512).
    double beat_hz = NAN;         // beat rate of the target's own coinciding pair
    int beat_partial_root = -1;   // which harmonic of the root beats ...
    int beat_partial_voice = -1;  // ... against which harmonic of the voice
    // The audible pair (pitch/theory/beats.h, audible_pair): what a listener hears
    // beat for this target and the drone's timbre; the headline everywhere.
    // -1 / NaN when no present partials coincide near the target.
    double heard_beat_hz = NAN;            // rate of that pair now
    double heard_beat_at_target_hz = NAN;  // its rate with the voice exactly on target (0 for the own pair)
    int heard_partial_root = -1;
    int heard_partial_voice = -1;
    double et_offset_cents = NAN;   // cents from the nearest 12-TET note (A4 reference)
    double level_dbfs = -INFINITY;  // input RMS level of the frame
    bool clipped = false;           // input reached full scale in this frame
    std::int64_t sample_index = 0;  // input sample at t_s (for latency measurement)

    bool voiced() const { return f0_hz > 0.0; }
};

}  // namespace beatless::pitch
