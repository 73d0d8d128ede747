// Simulated listener — answers two-alternative questions like a listener of
// known threshold, for ear drills run without a person (scripts, tests).
//
// The chance of a right answer at a difference of d cents follows a Weibull
// psychometric function for a two-alternative forced choice,
//     p(d) = 1 - 0.5 exp(-(d / alpha)^beta),
// chance (1/2) at d = 0 and rising to 1 (the form used throughout F. A.
// Wichmann and N. J. Hill, "The psychometric function: I. Fitting, sampling,
// and goodness of fit", Perception & Psychophysics 63(8), 1293-1313, 2001;
// cited from memory). alpha is chosen so that p(threshold_cents) =
// threshold_p: alpha = T / (-ln(2 (1 - p)))^(1/beta). With p = 0.7071, the
// point a 2-down/1-up staircase tracks (Levitt 1971), such a staircase
// should report about threshold_cents. Steps: p(d), then one seeded draw.
//
// Thread: one thread at a time. Allocates: no.
#pragma once

#include "ui/session/rng.h"

#include <cstdint>

namespace beatless::ui {

struct ListenerConfig {
    double threshold_cents = 10.0;  // difference answered right threshold_p of the time; default 10
    double threshold_p = 0.7071;    // default 0.7071 (2-down/1-up, Levitt 1971)
    double slope = 3.0;             // Weibull beta, the steepness; default 3 (ours)
    std::uint64_t seed = 1;
};

class SimulatedListener {
public:
    explicit SimulatedListener(const ListenerConfig& config);  // throws Error on a bad config
    double p_correct(double diff_cents) const noexcept;
    bool answers_right(double diff_cents) noexcept;             // one draw
    double alpha_cents() const noexcept { return alpha_; }

private:
    ListenerConfig cfg_;
    double alpha_;
    Rng rng_;
};

}  // namespace beatless::ui
