// Simulated listener — answers ear questions like a listener of stated threshold and lapse rate (demo, tests).
// Method: the psychometric function of Wichmann & Hill (2001), eq. 1, with a Weibull F for discrimination; a
// Gaussian observer (Green & Swets, Signal Detection Theory and Psychophysics, 1966) for identification.
// Thread: one thread at a time. Allocates: identification_probabilities only.
#pragma once

#include "ui/session/ear_question.h"
#include "ui/session/rng.h"

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace beatless::ui {

enum class ListenerKind {
    model,    // the psychometric function below
    perfect,  // always right
    guess,    // answers at random
};

struct ListenerConfig {
    ListenerKind kind = ListenerKind::model;  // default model
    double threshold_cents = 10.0;            // difference answered right threshold_p of the time; default 10
    double threshold_p = 0.7071;              // default 0.7071 (2-down/1-up, Levitt 1971)
    double slope = 3.0;                       // Weibull beta, the steepness; default 3 (ours)
    double lapse = 0.02;  // lapse rate lambda, 0 .. 0.1; default 0.02 (Wichmann & Hill's range 0-0.06)
    std::uint64_t seed = 1;
};

class SimulatedListener {
public:
    explicit SimulatedListener(const ListenerConfig& config);  // throws Error on a bad config
    const ListenerConfig& config() const noexcept { return cfg_; }

    // --- Discrimination ------------------------------------------------------
    double p_correct(double diff_cents) const noexcept;
    bool answers_right(double diff_cents) noexcept;  // one draw
    double alpha_cents() const noexcept { return alpha_; }

    // --- Identification ------------------------------------------------------
    double sigma_cents() const noexcept { return sigma_; }  // the Gaussian observer's error (0 perfect)
    // Which of the targets (cents above the root) it names when target `played` sounds.
    std::size_t identify(const std::vector<double>& target_cents, std::size_t played) noexcept;

    // Its answer to a question: discriminate, the position it names pure;
    // identify, the interval it names.
    int answer(const EarQuestion& q, const std::vector<double>& target_cents) noexcept;

private:
    ListenerConfig cfg_;
    double alpha_ = 0.0;
    double sigma_ = 0.0;
    Rng rng_;
};

// The chance that the identifying listener names target j when target i
// sounds, [i][j], from the normal distribution (exact, not simulated).
std::vector<std::vector<double>> identification_probabilities(const std::vector<double>& target_cents,
                                                              double sigma_cents, double lapse,
                                                              ListenerKind kind = ListenerKind::model);

// A --listener value: "perfect", "guess", or a threshold in cents (above 0,
// at most 1200; lapse rate 2 %). Throws Error naming the value otherwise.
ListenerConfig parse_listener(const std::string& text, std::uint64_t seed);

// Phi^-1(p) of the standard normal distribution (Acklam's rational approximation
// refined by one Newton step on erfc; |error| < 1e-12).
double normal_quantile(double p);

}  // namespace beatless::ui
