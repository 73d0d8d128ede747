// Targets — named sets of target intervals and the nearest-target search.
//
// A target set is a named list of intervals above the root (one TOML file in
// targets/, read by ui/session/target_files.h). nearest_target finds the target
// closest in cents to a measured interval; with octave equivalence each
// target also stands for itself in every octave (7/5 also matches 7/10 and
// 14/5), and the match reports which octave it used.
#pragma once

#include "pitch/theory/interval.h"

#include <string>
#include <vector>

namespace beatless::pitch {

struct Target {
    Interval interval;  // above the root; below when < 1/1
    std::string name;   // of the trade, or empty
};

struct TargetSet {
    std::string id;     // file stem: "tritones"
    std::string title;  // "Tritone family"
    std::string about;  // one sentence for the screen
    std::vector<Target> targets;
};

struct TargetMatch {
    std::size_t index = 0;      // into TargetSet::targets
    int octaves = 0;            // octave shift applied to the target
    double target_cents = 0.0;  // the target's cents after the shift
    double dev_cents = 0.0;     // measured minus target: + is sharp
};

// Nearest target to measured_cents (above the root). The set must not be empty.
TargetMatch nearest_target(const TargetSet& set, double measured_cents, bool octave_equivalent);

// The target moved by whole octaves (exact for ratios; throws Error on overflow).
Interval shift_octaves(const Interval& iv, int octaves);

// The name of the target moved by whole octaves: the trade's name of the
// moved interval where it has one (2/1 for 1/1 + octave), else the target's
// own name with the octaves said ("undecimal neutral second + octave"); the
// target's name unchanged for octaves == 0.
std::string target_name_in_octave(const Target& t, int octaves, const IntervalNames& names);

}  // namespace beatless::pitch
