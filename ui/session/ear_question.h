// Ear question — which pair of neighbouring targets to play for a given difference.
//
// Ear training asks the listener to tell close targets apart (7/5, 10/7,
// 11/8, 45/32, 600c...). The staircase (ui/session/staircase.h) says how far
// apart the two choices of the next question should be; this picks, among
// all pairs of the drill's targets, the pair whose separation in cents is
// nearest to that difference on a log scale (ties, within 0.1 %, drawn at
// random), then draws at random what to play:
//   one_interval   drone plus one tone: one of the pair; "which was it?"
//   two_intervals  drone plus each tone of the pair in random order; the
//                  listener is told one target and answers "first or second?"
// Both are two-alternative forced choices (chance 50 %), the case Levitt's
// 2-down/1-up and 3-down/1-up rules are made for. The random source is
// seeded (ui/session/rng.h), so a session can be replayed exactly in tests.
//
// Thread: one thread at a time. Allocates: in the constructor only.
#pragma once

#include "ui/session/rng.h"

#include <array>
#include <cstddef>
#include <cstdint>
#include <vector>

namespace beatless::ui {

enum class EarMode {
    one_interval,   // one tone over the drone; answer: which of the two targets
    two_intervals,  // both tones in turn; answer: which position was the named target
};

struct EarQuestion {
    std::array<std::size_t, 2> choices{};  // the pair offered (indices into the targets), lower first
    std::array<std::size_t, 2> played{};   // in playing order; one_interval plays played[0] only
    std::size_t asked = 0;                 // two_intervals: the target to find; one_interval: played[0]
    double diff_cents = 0.0;               // separation of the pair
    int correct_answer = 0;                // one_interval: index into choices; two_intervals: position 0 or 1
};

class EarQuestioner {
public:
    // target_cents: the drill's targets in cents above the root. Throws Error
    // when fewer than two of them differ.
    EarQuestioner(std::vector<double> target_cents, EarMode mode, std::uint64_t seed);

    EarQuestion next(double level_cents);
    EarMode mode() const { return mode_; }
    // Distinct pair separations available, ascending (the levels that can sound).
    std::vector<double> separations() const;

private:
    struct Pair {
        std::size_t lo, hi;
        double sep_cents;
    };
    std::vector<double> cents_;
    std::vector<Pair> pairs_;
    std::vector<std::size_t> candidates_;  // scratch for next()
    EarMode mode_;
    Rng rng_;
};

}  // namespace beatless::ui
