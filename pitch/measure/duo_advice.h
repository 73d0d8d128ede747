// DuoAdvice — which of two voices should move, which way and how far, for one two-voice frame.
// Method: ours (common practice in string and duet teaching): with a drone each voice is judged against the root
// and the one farther from its own target moves; without one the lower voice is the reference and the upper moves
// by the interval's deviation. Returns numbers and enums; the screens and commands make the words.
// Thread: any. Allocates: no.
#pragma once

#include "pitch/measure/two_voice.h"
#include "pitch/theory/targets.h"

namespace beatless::pitch {

enum class DuoMover {
    none,  // nothing to judge (fewer than two voices) or every judged deviation within the in-tune width
    low,   // the lower voice
    high,  // the upper voice
};

struct DuoVoiceJudgement {
    int target_index = -1;  // nearest target over the root (octave-equivalent), -1 without a root
    int target_octaves = 0;
    double dev_cents = NAN;  // the voice against that target: + is sharp
};

struct DuoAdvice {
    bool judged = false;  // two voices were heard and judged (false: nothing to say)
    DuoMover mover = DuoMover::none;
    double move_cents = 0.0;    // how far the mover should go: + up, - down (0 when none)
    bool against_root = false;  // true: judged voice by voice against the root; false: the lower voice leads
    DuoVoiceJudgement low, high;
};

// root_hz <= 0: no drone sounds, the lower voice is the reference. in_tune_cents: a deviation
// this small or smaller needs no move. The set may be empty only when root_hz <= 0.
DuoAdvice advise_duo(const TwoVoiceFrame& f, const TargetSet& set, double root_hz, double in_tune_cents) noexcept;

}  // namespace beatless::pitch
