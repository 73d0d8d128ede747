// BeatPulse — the beat view's model: the summed envelope of the two coinciding partials, kept as a short history.
// Method: two equal partials b Hz apart sum to a tone with envelope |2 cos(pi b t)| (the sum-to-product identity;
// Helmholtz, On the Sensations of Tone, ch. VIII). What it draws and why: DEVELOPERS.md, "Methods in detail".
// Thread: the screens' thread. Allocates: no (the history is sized once).
#pragma once

#include "pitch/measure/reading.h"
#include "pitch/theory/beats.h"

#include <array>
#include <cstddef>

namespace beatless::ui {

// The beat rate of the audible pair at the vibrato centre (when the reading
// has one), else the reading's instantaneous rate; NaN when no pair is audible.
double cue_beat_hz(const pitch::Reading& r) noexcept;
// True when the target's own coinciding partials are not the audible pair
// and the cue shows another pair (which may beat even when in tune).
bool heard_pair_differs(const pitch::Reading& r) noexcept;

class BeatPulse {
public:
    static constexpr std::size_t kHistory = 1024;  // frames kept (17 s at 60 frames/s)

    // Advances by dt_s at beat_hz (NaN: no beat now). Allocates: no.
    void update(double beat_hz, double dt_s) noexcept;

    pitch::BeatBand band() const noexcept { return band_; }
    double beat_hz() const noexcept { return beat_hz_; }
    double phase() const noexcept { return phase_; }  // beats elapsed, fractional part 0 .. 1
    // The normalised envelope |cos(pi phase)| (0 .. 1) ago_s before now, or
    // a negative value where no beat was known then (or beyond the history).
    double envelope_ago(double ago_s) const noexcept;
    // The phase (in beats) ago_s before now; NaN where no beat was known.
    double phase_ago(double ago_s) const noexcept;

    // Walks the history from now backwards: phase_ago for each of an
    // increasing sequence of ago_s values in one pass (a view's columns).
    class Walker {
    public:
        explicit Walker(const BeatPulse& p) : p_(p) {}
        double phase_ago(double ago_s) noexcept;  // ago_s must not decrease between calls
    private:
        const BeatPulse& p_;
        std::size_t k_ = 0;  // samples passed, newest first
    };

private:
    struct Sample {
        double t_s = 0.0;
        double phase = 0.0;
        bool on = false;
    };
    const Sample& newest(std::size_t k) const noexcept { return hist_[(head_ + kHistory - 1 - k) % kHistory]; }
    double phase_between(std::size_t k, double t) const noexcept;  // sample k (newest first) at or before t
    pitch::BeatBand band_ = pitch::BeatBand::none;
    double beat_hz_ = 0.0;
    double phase_ = 0.0;  // accumulated, unbounded (kept small by subtracting whole beats in step)
    double time_s_ = 0.0;
    std::array<Sample, kHistory> hist_{};
    std::size_t head_ = 0, size_ = 0;
};

}  // namespace beatless::ui
