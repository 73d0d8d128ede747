// Verdict — the one number a live screen says the performer is off by, now (DESIGN.md, "One reading, one verdict").
// Method: the vibrato centre's deviation once a whole cycle is known, the instantaneous one before; silence and low
// confidence make it "last: ..." within silent_after_s. Rules: DEVELOPERS.md, "The reading model".
// Thread: the screens' (UI) thread. Allocates: no.
#pragma once

#include "pitch/measure/reading.h"

#include <cmath>

namespace beatless::ui {

enum class VerdictState {
    idle,       // nothing heard yet (or since the root or targets changed)
    live,       // the verdict is current
    silent,     // the voice stopped (or no audio arrives): the value shown is the last one
    uncertain,  // the tracker hears a pitch but with low confidence: the value shown is the last sure one
    unpitched,  // sound, but no pitch the tracker can follow (below the lowest note, noise): the last value
};

enum class VerdictSource {
    instant,  // the instantaneous pitch (before a vibrato cycle is known)
    centre,   // the vibrato centre over whole cycles
};

struct VerdictConfig {
    double silent_after_s = 0.06;  // unvoiced (or no frames) this long: silent (default 60 ms, within the 100 ms rule)
    double sure_confidence = 0.7;  // frames below this count as uncertain (default 0.7)
    double sound_dbfs = -50.0;     // unvoiced frames at least this loud are "unpitched", not silent (default -50 dBFS)
    int frames_to_resume = 2;      // voiced, sure frames in a row before a verdict is current again (default 2)
    double jump_cents = 80.0;      // a reading this far from the verdict ... (default 80 cents)
    int frames_to_jump = 5;        // ... must be confirmed by this many agreeing frames in a row (default 5 = 25 ms;
                                   // a drone partial left after a note ends can last 15 ms)
};

struct Verdict {
    VerdictState state = VerdictState::idle;
    VerdictSource source = VerdictSource::instant;
    double dev_cents = NAN;         // the verdict: + sharp, against reading.target_cents
    double cents_above_root = NAN;  // the same pitch above the root
    double f0_hz = NAN;             // the same pitch in Hz
    double beat_hz = NAN;           // the audible pair's rate at that pitch
    double quiet_s = 0.0;           // silent or uncertain: for how long
    pitch::Reading reading{};       // the voiced reading it comes from (target, pairs, confidence)

    bool current() const { return state == VerdictState::live; }
    bool known() const { return state != VerdictState::idle && reading.voiced(); }  // a value to show, current or last
};

class VerdictTracker {
public:
    explicit VerdictTracker(const VerdictConfig& config = {}) : cfg_(config) {}

    // One reading, in stream order (voiced or not). Allocates: no.
    void take(const pitch::Reading& r) noexcept;
    // Time passes on the screen's clock; with no readings arriving the verdict
    // goes silent after silent_after_s. Allocates: no.
    void tick(double dt_s) noexcept;
    void reset() noexcept;  // forget everything (root, targets changed)

    const Verdict& verdict() const noexcept { return v_; }
    const VerdictConfig& config() const noexcept { return cfg_; }

private:
    void quiet(VerdictState s, double for_s) noexcept;
    VerdictConfig cfg_;
    Verdict v_;
    double unsure_since_t_s_ = NAN;  // stream time the current unvoiced or unsure run began
    double since_reading_s_ = 0.0;   // screen time since the last reading arrived
    int sure_run_ = 0;
    int last_kind_ = 0;             // 1 unvoiced and quiet, 2 unvoiced with sound, 3 voiced but unsure
    double jump_from_cents_ = NAN;  // the first frame of a pending jump, cents above the root
    int jump_run_ = 0;
};

// The verdict of one reading alone: centre when known, else instantaneous.
Verdict verdict_of(const pitch::Reading& r) noexcept;

}  // namespace beatless::ui
