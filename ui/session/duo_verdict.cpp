#include "ui/session/duo_verdict.h"

namespace beatless::ui {

void DuoVerdictTracker::take(const pitch::TwoVoiceFrame& f) noexcept {
    since_frame_s_ = 0.0;
    const bool pair = f.voices == 2 && std::isfinite(f.dev_cents);
    const bool sure = pair && f.confidence >= cfg_.sure_confidence;
    if (sure) {
        quiet_since_t_s_ = NAN;
        ++sure_run_;
        const bool resumed =
            v_.state == DuoState::live || sure_run_ >= cfg_.frames_to_resume || v_.state == DuoState::idle;
        // A new target (or octave) is believed after frames_to_retarget frames naming it.
        const bool same_target =
            v_.pair.voices == 2 && f.target_index == v_.pair.target_index && f.target_octaves == v_.pair.target_octaves;
        retarget_run_ = same_target ? 0 : retarget_run_ + 1;
        if (!resumed) return;
        if (!same_target && v_.pair.voices == 2 && retarget_run_ < cfg_.frames_to_retarget) return;
        retarget_run_ = 0;
        v_.pair = f;
        v_.state = DuoState::live;
        v_.blend = pitch::Blend::none;
        v_.one_f0_hz = 0.0;
        v_.quiet_s = 0.0;
        return;
    }
    sure_run_ = 0;
    if (std::isnan(quiet_since_t_s_)) quiet_since_t_s_ = f.t_s;
    const double for_s = f.t_s - quiet_since_t_s_;
    if (v_.state == DuoState::idle && f.voices == 1) {
        v_.state = DuoState::one_series;  // never live yet: say what is heard
    } else if (for_s + 1e-9 < cfg_.quiet_after_s && v_.state == DuoState::live) {
        return;  // a short gap keeps the verdict (within the 100 ms rule)
    }
    v_.state = f.voices == 0 ? DuoState::silent : f.voices == 1 ? DuoState::one_series : DuoState::uncertain;
    if (v_.state == DuoState::silent && v_.pair.voices != 2 && v_.one_f0_hz <= 0.0) v_.state = DuoState::idle;
    v_.blend = f.voices == 1 ? f.blend : pitch::Blend::none;
    v_.one_f0_hz = f.voices == 1 ? f.f_low_hz : 0.0;
    v_.quiet_s = for_s;
}

void DuoVerdictTracker::tick(double dt_s) noexcept {
    since_frame_s_ += dt_s;
    if (since_frame_s_ >= cfg_.quiet_after_s && v_.state != DuoState::idle && v_.state != DuoState::silent) {
        v_.state = DuoState::silent;
        v_.quiet_s = since_frame_s_;
    }
}

void DuoVerdictTracker::reset() noexcept {
    v_ = DuoVerdict{};
    quiet_since_t_s_ = NAN;
    since_frame_s_ = 0.0;
    sure_run_ = retarget_run_ = 0;
}

}  // namespace beatless::ui
