// Beats — beat rates of coinciding partials between two harmonic tones, and the pair a listener hears.
// Method: with f_b / f_a near p/q (lowest terms), partial p of a and partial q of b both lie near p f_a and beat at
// |q f_b - p f_a| Hz (Helmholtz, On the Sensations of Tone, 1863/1885, ch. VIII). Every beat rate the program
// quotes comes from audible_pair (its rule beside it and in DEVELOPERS.md).
// Thread: any. Allocates: only near_pairs' list.
#pragma once

#include "pitch/theory/interval.h"
#include "pitch/theory/ratio.h"

#include <cmath>
#include <cstdint>
#include <optional>
#include <vector>

namespace beatless::pitch {

struct PartialPair {
    int partial_a = 0;       // harmonic number on tone a (1 = fundamental)
    int partial_b = 0;       // harmonic number on tone b
    double freq_a_hz = 0.0;  // partial_a * f_a
    double freq_b_hz = 0.0;  // partial_b * f_b
    double beat_hz = 0.0;    // |freq_a_hz - freq_b_hz|
};

// The pair that coincides when f_b / f_a is exactly `target`.
PartialPair coinciding_pair(double f_a_hz, double f_b_hz, const Ratio& target);

// Every pair (m, n), 1 <= m, n <= max_harmonic, whose partials lie within
// within_hz of each other, sorted by m + n (lowest partials first): besides
// the coinciding pair, these beat too.
std::vector<PartialPair> near_pairs(double f_a_hz, double f_b_hz, int max_harmonic, double within_hz);

// Beat rate of the coinciding pair when b sits dev_cents off the ratio above a:
// p * f_a * |2^(dev_cents/1200) - 1| Hz.
double beat_rate_at(double f_a_hz, const Ratio& target, double dev_cents);

// The simple ratio (terms <= max_term) nearest to `cents`, ties to the lower
// product p*q: which partials beat against an irrational interval such as 600c.
Ratio nearest_simple_ratio(double cents, int max_term = 11);

// The just ratio whose coinciding partials beat near a target moved by
// `octaves`: the target's own ratio, or for a cents target (600c) the
// nearest simple ratio within the octave (terms <= max_term), moved by the
// target's own octaves. Shifts stop short of 2^40 rather than overflow.
Ratio beating_ratio(const Interval& target, int octaves, int max_term = 10) noexcept;

// Moves the pair (drone p, voice q) by whole octaves of the voice (the
// voice's partial halves when even, else the drone's doubles); false when a
// term would pass 2^40. Allocates: no.
bool shift_by_octaves(std::int64_t& p, std::int64_t& q, int octaves) noexcept;

// [SECTION] Audible pair
// Which coinciding partials a listener hears beat between a drone (tone a)
// and a voice (tone b) aimed at a target of `target_cents` above the drone:
//  1. the target's own coinciding pair (p on the drone, q on the voice, for
//     an exact ratio p/q in lowest terms), when both partials are present
//     (p <= partials_a, q <= partials_b) and lie at or below max_freq_hz;
//  2. otherwise the pair of the nearest simple ratio (terms <= simple_max_term
//     within the octave, moved by the target's whole octaves) whose partials
//     are present and below max_freq_hz, no further than max_apart_cents from
//     the target. Intervals within a comma or so of the unison or an octave
//     (81/80, 64/63, 50/49, 128/125, the Pythagorean comma) land on 1/1 or
//     2/1: the fundamentals, or the drone's octave partial against the
//     voice, beat at their difference even when the comma is exact;
//  3. otherwise no pair (a pure drone under a fifth: nothing coincides).
// Rates are |q f_b - p f_a| (Helmholtz, On the Sensations of Tone, ch. VIII).
struct AudibleRange {
    int partials_a = 12;  // highest partial present in the drone (default 12: the round timbre)
    int partials_b = 16;  // highest partial heard in the voice (default 16: voices, bowed strings; common practice)
    double max_freq_hz = 4000.0;  // partials above this are not heard beating (default 4 kHz; common practice)
    int simple_max_term = 10;     // "simple ratio": both terms at most this (default 10)
    double max_apart_cents =
        100.0;  // a simpler pair further than this from the target is heard as two tones, not a beat (default 100; common practice)
};

struct AudiblePair {
    bool found = false;              // false: no present partials coincide near the target
    bool own = false;                // true: it is the target's own coinciding pair
    int partial_a = -1;              // harmonic number on the drone (1 = fundamental)
    int partial_b = -1;              // harmonic number on the voice
    double meet_hz = NAN;            // partial_a * f_a: where the pair sounds
    double beat_hz = NAN;            // |partial_b f_b - partial_a f_a| now
    double beat_at_target_hz = NAN;  // the same with the voice exactly on target (0 for the own pair)
};

// The audible pair for a drone at f_a_hz, a voice at f_b_hz and a target
// target_cents above the drone (own: the target's exact ratio, if it has
// one, already moved to target_cents's octave). Thread: any. Allocates: no.
AudiblePair audible_pair(double f_a_hz, double f_b_hz, double target_cents, std::optional<Ratio> own,
                         const AudibleRange& range = {}) noexcept;

// The audible pair for a matched target: `target` moved by `octaves` (its
// own pair when it is a ratio; a cents target has none), target_cents
// above tone a. Thread: any. Allocates: no.
AudiblePair audible_pair_of_target(double f_a_hz, double f_b_hz, const Interval& target, int octaves,
                                   double target_cents, const AudibleRange& range = {}) noexcept;

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
    double still_below_hz = 0.2;      // default 0.2 Hz: under one beat in five seconds
    double countable_below_hz = 5.0;  // default 5 Hz (common practice)
    double rough_above_hz = 15.0;     // default 15 Hz (common practice; Plomp & Levelt 1965)
};

// The band of a beat rate; BeatBand::none for NaN or a negative rate.
BeatBand beat_band(double beat_hz, const BeatBands& bands = {}) noexcept;

}  // namespace beatless::pitch
