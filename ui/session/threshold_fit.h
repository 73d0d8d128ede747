// Threshold fit — the discrimination threshold and its confidence interval from every answer of an ear session.
// Method: maximum likelihood on the psychometric function of Wichmann & Hill, Perception & Psychophysics 63(8)
// (2001), with a likelihood-ratio interval (Wilks 1938) whose cut is calibrated by simulation; DEVELOPERS.md.
// Thread: any. Allocates: the result only.
#pragma once

#include <cmath>
#include <vector>

namespace beatless::ui {

struct FitConfig {
    double guess = 0.5;           // gamma, chance of a right guess; default 1/2 (two alternatives)
    double lapse = 0.02;          // lambda, assumed lapse rate; default 0.02 (Wichmann & Hill 2001: 0 to 0.06)
    double slope = 3.0;           // Weibull beta, assumed; default 3 (ours)
    double threshold_p = 0.7071;  // the threshold's chance of a right answer; default 0.7071 (2-down/1-up)
    double min_cents = 0.5;       // the smallest level the drill may play, cents; default 0.5
    double max_cents = 100.0;     // the largest, cents; default 100
    double chi2_crit = 5.024;  // the likelihood cut, 2 x log-likelihood; default 5.024 (calibrated to 95 %, see above)
};

enum class ThresholdVerdict {
    none,      // no reliable threshold: the answers do not bound it within the drill's levels
    finer,     // finer than min_cents: right nearly always at the smallest level
    measured,  // threshold_cents with [lo_cents, hi_cents]
};

struct ThresholdEstimate {
    ThresholdVerdict verdict = ThresholdVerdict::none;
    double threshold_cents = NAN;  // the maximum-likelihood threshold (measured only)
    double lo_cents = NAN;         // the interval (measured only; lo may be 0: not bounded below)
    double hi_cents = NAN;
    double smallest_cents = NAN;  // finer: the smallest level played
    int trials = 0;
};

struct LevelAnswer {
    double level_cents = 0.0;  // the difference played
    bool correct = false;
};

// p(d) of the fitted model with threshold t_cents.
double fit_p_correct(const FitConfig& c, double t_cents, double d_cents);

ThresholdEstimate fit_threshold(const std::vector<LevelAnswer>& answers, const FitConfig& config);

}  // namespace beatless::ui
