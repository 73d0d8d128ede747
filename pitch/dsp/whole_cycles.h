// WholeCycles — whole cycles of a slow oscillation in a sampled track (a vibrato in cents, a beat envelope).
// Method: upward zero crossings of the residual with hysteresis, accepted when the periods agree; the mean over whole
// cycles is the standard whole-period mean. Steps: DEVELOPERS.md, "Methods in detail".
// Thread: any. Allocates: no. Locks: no.
#pragma once

#include <cstddef>

namespace beatless::pitch {

struct CycleConfig {
    double min_rate_hz = 3.0;       // slowest cycle accepted
    double max_rate_hz = 12.0;      // fastest cycle accepted
    double hysteresis_abs = 1.0;    // least hysteresis h, in the track's units (default 1)
    double hysteresis_rel = 0.25;   // h at least this fraction of the residual's RMS (default 0.25)
    double max_period_ratio = 1.5;  // longest period / shortest period allowed (default 1.5)
    bool detrend = false;           // cross a fitted line instead of the mean (default off)
};

struct CycleStats {
    bool found = false;      // at least one whole cycle passed the checks
    int cycles = 0;          // whole cycles between t_first_s and t_last_s
    double t_first_s = 0.0;  // first accepted upward crossing
    double t_last_s = 0.0;   // last accepted upward crossing
    double rate_hz = 0.0;    // cycles / (t_last_s - t_first_s)
    double mean = 0.0;       // time average of x over [t_first_s, t_last_s] (linear interpolation)
    double depth = 0.0;      // half the mean peak-to-peak swing of the residual per cycle
};

// Examines samples i in [0, n) of (t[i], x[i]); t must increase. Returns
// found == false (mean, rate 0) when fewer than two crossings pass.
CycleStats find_cycles(const double* t, const double* x, std::size_t n, const CycleConfig& config) noexcept;

// Time average of the linear interpolant of (t, x) over [t0, t1] inside the
// samples' span (trapezoid rule with fractional ends).
double interpolated_mean(const double* t, const double* x, std::size_t n, double t0, double t1) noexcept;

// How far the dropouts inside [t0, t1] may have moved interpolated_mean(): the mean with each gap (samples more than
// max_step apart) bridged by the cubic that matches the track's slope on both sides, minus the mean with the chord
// (interpolated_mean's bridge). A gap over a vibrato's crest loses the crest: the chord runs under it and the mean
// falls; the cubic follows the curve into it. 0 when there is no gap. Each side's slope: the derivative at the gap of the
// parabola through its 3 samples there (the line through 2; the chord's slope when a side has one sample). Method: the cubic
// Hermite bridge's integral, g (x0 + x1) / 2 + g^2 (s0 - s1) / 12 over a gap of length g (the end-corrected
// trapezoidal rule, from memory: K. E. Atkinson, An Introduction to Numerical Analysis, 2nd ed., Wiley 1989, ch. 5).
double dropout_bias(const double* t, const double* x, std::size_t n, double t0, double t1, double max_step) noexcept;

// Plain mean and population standard deviation of x[0..n).
void mean_and_spread(const double* x, std::size_t n, double& mean, double& spread) noexcept;

}  // namespace beatless::pitch
