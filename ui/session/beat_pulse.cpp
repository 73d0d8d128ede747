// BeatPulse — see beat_pulse.h.
#include "ui/session/beat_pulse.h"

#include <cmath>
#include <numbers>

namespace beatless::ui {

double cue_beat_hz(const pitch::Reading& r) noexcept {
    // The audible pair only (pitch::audible_pair): where no pair beats within
    // hearing (a pure drone under a fifth), there is no beat to show.
    const int pr = r.heard_partial_root, pv = r.heard_partial_voice;
    if (!r.voiced() || pr <= 0 || pv <= 0) return NAN;
    if (std::isfinite(r.centre_f0_hz) && r.centre_f0_hz > 0.0 && r.root_hz > 0.0)
        return std::fabs(static_cast<double>(pv) * r.centre_f0_hz - static_cast<double>(pr) * r.root_hz);
    return std::isfinite(r.heard_beat_hz) ? r.heard_beat_hz : NAN;
}

bool heard_pair_differs(const pitch::Reading& r) noexcept {
    return r.heard_partial_root > 0 &&
           (r.heard_partial_root != r.beat_partial_root || r.heard_partial_voice != r.beat_partial_voice);
}

void BeatPulse::update(double beat_hz, double dt_s) noexcept {
    band_ = pitch::beat_band(beat_hz);
    const bool on = band_ != pitch::BeatBand::none;
    if (on) beat_hz_ = beat_hz;
    if (!(dt_s > 0.0)) return;
    time_s_ += dt_s;
    if (on) phase_ += beat_hz * dt_s;
    hist_[head_] = Sample{time_s_, phase_, on};
    head_ = (head_ + 1) % kHistory;
    if (size_ < kHistory) ++size_;
}

double BeatPulse::phase_between(std::size_t k, double t) const noexcept {
    const Sample& s = newest(k);
    if (!s.on) return NAN;
    if (k == 0) return s.phase;
    const Sample& later = newest(k - 1);
    if (!later.on || later.t_s <= s.t_s) return s.phase;
    return s.phase + (t - s.t_s) / (later.t_s - s.t_s) * (later.phase - s.phase);
}

double BeatPulse::phase_ago(double ago_s) const noexcept { return Walker(*this).phase_ago(ago_s); }

double BeatPulse::Walker::phase_ago(double ago_s) noexcept {
    if (p_.size_ == 0 || !(ago_s >= 0.0)) return NAN;
    const double t = p_.time_s_ - ago_s;
    // Newest first: the first sample at or before t, interpolated toward the next.
    while (k_ < p_.size_ && p_.newest(k_).t_s > t) ++k_;
    return k_ < p_.size_ ? p_.phase_between(k_, t) : NAN;
}

double BeatPulse::envelope_ago(double ago_s) const noexcept {
    const double ph = phase_ago(ago_s);
    if (!std::isfinite(ph)) return -1.0;
    return std::fabs(std::cos(std::numbers::pi * ph));
}

}  // namespace beatless::ui
