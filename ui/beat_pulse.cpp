// BeatPulse — see beat_pulse.h.
#include "ui/beat_pulse.h"

#include <cmath>
#include <numbers>

namespace beatless::ui {

double cue_beat_hz(const pitch::Reading& r) noexcept {
    if (!r.voiced() || r.beat_partial_root <= 0 || r.beat_partial_voice <= 0) return NAN;
    if (std::isfinite(r.centre_f0_hz) && r.centre_f0_hz > 0.0 && r.root_hz > 0.0)
        return std::fabs(static_cast<double>(r.beat_partial_voice) * r.centre_f0_hz - static_cast<double>(r.beat_partial_root) * r.root_hz);
    return std::isfinite(r.beat_hz) ? r.beat_hz : NAN;
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
