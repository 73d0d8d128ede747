// Verdict — see verdict.h.
#include "ui/session/verdict.h"

#include "ui/session/beat_pulse.h"

namespace beatless::ui {

Verdict verdict_of(const pitch::Reading& r) noexcept {
    Verdict v;
    v.state = VerdictState::live;
    v.reading = r;
    const bool centre = std::isfinite(r.centre_dev_cents);
    v.source = centre ? VerdictSource::centre : VerdictSource::instant;
    v.dev_cents = centre ? r.centre_dev_cents : r.dev_cents;
    v.cents_above_root = std::isfinite(r.target_cents) ? r.target_cents + v.dev_cents : r.cents_above_root;
    v.f0_hz = centre && std::isfinite(r.centre_f0_hz) ? r.centre_f0_hz : r.f0_hz;
    v.beat_hz = cue_beat_hz(r);
    return v;
}

void VerdictTracker::quiet(VerdictState s, double for_s) noexcept {
    // With nothing heard before, only "unpitched" has something to say.
    if (!v_.reading.voiced() && s != VerdictState::unpitched) s = VerdictState::idle;
    v_.state = s;
    v_.quiet_s = for_s;
}

void VerdictTracker::take(const pitch::Reading& r) noexcept {
    since_reading_s_ = 0.0;
    const bool voiced = r.voiced() && r.target_index >= 0;
    const bool sure = voiced && r.confidence >= cfg_.sure_confidence;
    if (sure) {
        ++sure_run_;
        // A lone frame far from the verdict (a note's ragged end, an octave
        // slip) waits for frames that agree with it before it is believed.
        if (v_.state == VerdictState::live &&
            std::fabs(r.cents_above_root - v_.reading.cents_above_root) > cfg_.jump_cents) {
            if (jump_run_ > 0 && std::fabs(r.cents_above_root - jump_from_cents_) <= cfg_.jump_cents)
                ++jump_run_;
            else {
                jump_run_ = 1;
                jump_from_cents_ = r.cents_above_root;
            }
            if (jump_run_ < cfg_.frames_to_jump) return;
        }
        jump_run_ = 0;
        if (sure_run_ >= cfg_.frames_to_resume || v_.state == VerdictState::live || v_.state == VerdictState::idle) {
            v_ = verdict_of(r);
            unsure_since_t_s_ = NAN;
        }
        return;
    }
    jump_run_ = 0;
    sure_run_ = 0;
    const int kind = voiced ? 3 : r.level_dbfs >= cfg_.sound_dbfs ? 2 : 1;
    if (!std::isfinite(unsure_since_t_s_) || last_kind_ != kind) unsure_since_t_s_ = r.t_s;
    last_kind_ = kind;
    const double run_s = r.t_s - unsure_since_t_s_;
    constexpr VerdictState kStates[] = {VerdictState::silent, VerdictState::silent, VerdictState::unpitched,
                                        VerdictState::uncertain};
    if (run_s + 1e-9 >= cfg_.silent_after_s) quiet(kStates[kind], run_s);
}

void VerdictTracker::tick(double dt_s) noexcept {
    if (!(dt_s > 0.0)) return;
    since_reading_s_ += dt_s;
    if (since_reading_s_ >= cfg_.silent_after_s && v_.state != VerdictState::idle)
        quiet(VerdictState::silent, since_reading_s_);
}

void VerdictTracker::reset() noexcept {
    v_ = Verdict{};
    unsure_since_t_s_ = NAN;
    since_reading_s_ = 0.0;
    sure_run_ = 0;
    last_kind_ = 0;
    jump_run_ = 0;
}

}  // namespace beatless::ui
