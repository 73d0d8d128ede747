// BeatPulse — the beat cue's visual pulse: a cycle at the beat rate, still
// when the interval is pure, steady when the beats are too fast to follow.
//
// The pulse's phase advances by beat_hz x dt each frame, so it slows to
// stillness as the interval becomes pure; its brightness is the raised
// cosine 0.5 - 0.5 cos(2 pi phase). Above 3 Hz the pulse stops and a steady
// sign takes its place: faster beats cannot be counted by eye, and W3C's
// WCAG 2.1, success criterion 2.3.1 ("Three Flashes or Below Threshold"),
// asks for no more than three flashes in any one second. Below 0.25 Hz (one
// beat in four seconds) the cue says the interval is nearly pure (ours).
// The rate shown is the one at the vibrato centre when there is one: the
// instantaneous rate swings with every vibrato cycle, the ear follows the mean.
#pragma once

#include "pitch/reading.h"

namespace beatless::ui {

enum class BeatCue {
    none,    // no reading with a beat rate
    still,   // slower than still_below_hz: nearly pure
    pulse,   // a pulse the eye can follow
    fast,    // faster than fast_above_hz: a steady sign instead of flicker
};

struct BeatPulseConfig {
    double still_below_hz = 0.25;  // nearly pure below this (default 0.25 Hz, ours)
    double fast_above_hz = 3.0;    // steady above this (default 3 Hz, WCAG 2.1 SC 2.3.1)
};

// The beat rate of the coinciding pair at the vibrato centre (when the
// reading has one), else the reading's instantaneous rate; NaN when none.
double cue_beat_hz(const pitch::Reading& r) noexcept;
// True when the target's own coinciding partials lie above hearing and the
// cue shows the pair of the nearest simple ratio instead.
bool heard_pair_differs(const pitch::Reading& r) noexcept;

class BeatPulse {
public:
    explicit BeatPulse(const BeatPulseConfig& config = {}) : cfg_(config) {}

    // Advances by dt_s at beat_hz (NaN: no beat). Allocates: no.
    void update(double beat_hz, double dt_s) noexcept;

    BeatCue cue() const noexcept { return cue_; }
    double beat_hz() const noexcept { return beat_hz_; }
    double phase() const noexcept { return phase_; }          // cycles, 0 .. 1
    double brightness() const noexcept;                       // 0 .. 1: pulse raised cosine, 1 when fast, 0 otherwise still
    const BeatPulseConfig& config() const noexcept { return cfg_; }

private:
    BeatPulseConfig cfg_;
    BeatCue cue_ = BeatCue::none;
    double beat_hz_ = 0.0;
    double phase_ = 0.0;
};

}  // namespace beatless::ui
