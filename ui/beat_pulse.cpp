// BeatPulse — see beat_pulse.h.
#include "ui/beat_pulse.h"

#include <cmath>
#include <numbers>

namespace beatless::ui {

double cue_beat_hz(const pitch::Reading& r) noexcept {
    // The pair the performer can hear: the coinciding pair, or for targets
    // with partials above the 16th the pair of the nearest simple ratio.
    const bool heard = r.heard_partial_root > 0 && r.heard_partial_voice > 0;
    const int pr = heard ? r.heard_partial_root : r.beat_partial_root;
    const int pv = heard ? r.heard_partial_voice : r.beat_partial_voice;
    if (!r.voiced() || pr <= 0 || pv <= 0) return NAN;
    if (std::isfinite(r.centre_f0_hz) && r.centre_f0_hz > 0.0 && r.root_hz > 0.0)
        return std::fabs(static_cast<double>(pv) * r.centre_f0_hz - static_cast<double>(pr) * r.root_hz);
    const double now = heard ? r.heard_beat_hz : r.beat_hz;
    return std::isfinite(now) ? now : NAN;
}

bool heard_pair_differs(const pitch::Reading& r) noexcept {
    return r.heard_partial_root > 0 && (r.heard_partial_root != r.beat_partial_root || r.heard_partial_voice != r.beat_partial_voice);
}

void BeatPulse::update(double beat_hz, double dt_s) noexcept {
    if (!std::isfinite(beat_hz) || beat_hz < 0.0) {
        cue_ = BeatCue::none;
        return;
    }
    beat_hz_ = beat_hz;
    cue_ = beat_hz > cfg_.fast_above_hz ? BeatCue::fast : beat_hz < cfg_.still_below_hz ? BeatCue::still : BeatCue::pulse;
    if (cue_ == BeatCue::fast || !(dt_s > 0.0)) return;
    phase_ += beat_hz * dt_s;
    phase_ -= std::floor(phase_);
}

double BeatPulse::brightness() const noexcept {
    switch (cue_) {
        case BeatCue::none: return 0.0;
        case BeatCue::fast: return 1.0;
        case BeatCue::still:
        case BeatCue::pulse: return 0.5 - 0.5 * std::cos(2.0 * std::numbers::pi * phase_);
    }
    return 0.0;
}

}  // namespace beatless::ui
