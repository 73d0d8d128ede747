#include "pitch/measure/duo_advice.h"

#include <cmath>

namespace beatless::pitch {

DuoAdvice advise_duo(const TwoVoiceFrame& f, const TargetSet& set, double root_hz, double in_tune_cents) noexcept {
    DuoAdvice a;
    if (f.voices != 2 || !(f.f_low_hz > 0.0) || !(f.f_high_hz > 0.0)) return a;
    if (root_hz > 0.0 && !set.targets.empty()) {
        a.judged = true;
        a.against_root = true;
        auto judge = [&](double hz) {
            DuoVoiceJudgement j;
            const TargetMatch m = nearest_target(set, 1200.0 * std::log2(hz / root_hz), true);
            j.target_index = static_cast<int>(m.index);
            j.target_octaves = m.octaves;
            j.dev_cents = m.dev_cents;
            return j;
        };
        a.low = judge(f.f_low_hz);
        a.high = judge(f.f_high_hz);
        // Ties go to the upper voice, as without a drone.
        const bool high_moves = std::fabs(a.high.dev_cents) >= std::fabs(a.low.dev_cents);
        const double dev = high_moves ? a.high.dev_cents : a.low.dev_cents;
        if (std::fabs(dev) > in_tune_cents) {
            a.mover = high_moves ? DuoMover::high : DuoMover::low;
            a.move_cents = -dev;
        }
        return a;
    }
    a.judged = std::isfinite(f.dev_cents);
    if (a.judged && std::fabs(f.dev_cents) > in_tune_cents) {
        a.mover = DuoMover::high;
        a.move_cents = -f.dev_cents;
    }
    return a;
}

}  // namespace beatless::pitch
