#include "pitch/theory/targets.h"

#include "pitch/base/error.h"

#include <cassert>
#include <cmath>

namespace beatless::pitch {

TargetMatch nearest_target(const TargetSet& set, double measured_cents, bool octave_equivalent) {
    assert(!set.targets.empty() && "nearest_target needs a non-empty target set");
    TargetMatch best;
    double best_abs = INFINITY;
    for (std::size_t i = 0; i < set.targets.size(); ++i) {
        const double c = set.targets[i].interval.cents();
        int k = 0;
        if (octave_equivalent) k = static_cast<int>(std::lround((measured_cents - c) / 1200.0));
        const double tc = c + 1200.0 * k;
        const double dev = measured_cents - tc;
        if (std::fabs(dev) < best_abs) {
            best_abs = std::fabs(dev);
            best = TargetMatch{i, k, tc, dev};
        }
    }
    return best;
}

Interval shift_octaves(const Interval& iv, int octaves) {
    if (octaves == 0) return iv;
    if (!iv.is_ratio()) return Interval::from_cents(iv.cents() + 1200.0 * octaves);
    Ratio r = iv.ratio();
    const Ratio two{2, 1};
    for (int k = 0; k < octaves; ++k) r = r * two;
    for (int k = 0; k > octaves; --k) r = r / two;
    return Interval::of(r);
}

std::string target_name_in_octave(const Target& t, int octaves, const IntervalNames& names) {
    if (octaves == 0) return t.name;
    try {
        if (const std::string* n = names.find(shift_octaves(t.interval, octaves))) return *n;
    } catch (const Error&) {  // the shifted ratio overflows: keep the target's own name
    }
    return t.name.empty() ? std::string() : with_octaves(t.name, octaves);
}

}  // namespace beatless::pitch
