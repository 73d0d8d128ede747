// Beats — beat rates of coinciding partials between two harmonic tones.
//
// Two harmonic tones a and b with f_b / f_a near the just ratio p/q (lowest
// terms) share a partial: the p-th partial of a and the q-th partial of b
// both lie near p * f_a. When the interval is mistuned they beat at the
// difference of the two partials' frequencies, |q * f_b - p * f_a| Hz
// (Helmholtz, On the Sensations of Tone, 1863/1885, ch. VIII). Other
// partial pairs (m, n) with m * f_a close to n * f_b beat too; near_pairs
// lists them. A mistuning of d cents makes the coinciding pair beat at
// p * f_a * |2^(d/1200) - 1| Hz.
#pragma once

#include "pitch/interval.h"
#include "pitch/ratio.h"

#include <vector>

namespace beatless::pitch {

struct PartialPair {
    int partial_a = 0;        // harmonic number on tone a (1 = fundamental)
    int partial_b = 0;        // harmonic number on tone b
    double freq_a_hz = 0.0;   // partial_a * f_a
    double freq_b_hz = 0.0;   // partial_b * f_b
    double beat_hz = 0.0;     // |freq_a_hz - freq_b_hz|
};

// The pair that coincides when f_b / f_a is exactly `target`.
PartialPair coinciding_pair(double f_a_hz, double f_b_hz, const Ratio& target);

// Every pair (m, n), 1 <= m, n <= max_harmonic, whose partials lie within
// within_hz of each other, sorted by m + n (lowest partials first).
std::vector<PartialPair> near_pairs(double f_a_hz, double f_b_hz, int max_harmonic, double within_hz);

// Beat rate of the coinciding pair when b sits dev_cents off the ratio above a.
double beat_rate_at(double f_a_hz, const Ratio& target, double dev_cents);

// The simple ratio (terms <= max_term) nearest to `cents`, ties to the lower
// product p*q: which partials beat against an irrational interval such as 600c.
Ratio nearest_simple_ratio(double cents, int max_term = 11);

// The just ratio whose coinciding partials beat near a target moved by
// `octaves`: the target's own ratio, or for a cents target (600c) the
// nearest simple ratio within the octave (terms <= max_term), moved by the
// target's own octaves. Shifts stop short of 2^40 rather than overflow.
Ratio beating_ratio(const Interval& target, int octaves, int max_term = 10) noexcept;

// How a listener perceives a beat of a given rate. Common practice (no one
// published table): a beat slower than about one in five seconds is not
// heard within a held note; up to about 5 Hz the beats can be counted; from
// there to about 15 Hz they are heard as a fast flutter; above about 15-20 Hz
// they merge into roughness (cf. the roughness region of Plomp & Levelt,
// "Tonal consonance and critical bandwidth", JASA 38, 1965).
enum class BeatBand {
    none,       // no beat known (unvoiced, no pair)
    still,      // below still_below_hz: nearly pure
    countable,  // slow enough to count
    flutter,    // too fast to count, still heard as beating
    rough,      // heard as roughness rather than beats
};

struct BeatBands {
    double still_below_hz = 0.2;       // default 0.2 Hz: under one beat in five seconds
    double countable_below_hz = 5.0;   // default 5 Hz (common practice)
    double rough_above_hz = 15.0;      // default 15 Hz (common practice; Plomp & Levelt 1965)
};

// The band of a beat rate; BeatBand::none for NaN or a negative rate.
BeatBand beat_band(double beat_hz, const BeatBands& bands = {}) noexcept;

}  // namespace beatless::pitch
