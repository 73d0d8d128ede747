// Performer-like test signals with exact instantaneous-f0 truth (test-only).
//
// Sung tones: additive synthesis of a glottal-like source (partials falling
// 12 dB/octave, G. Fant, Acoustic Theory of Speech Production, 1960, from
// memory) with +6 dB/octave lip radiation, shaped by three formant resonators
// (analogue two-pole magnitude, D. H. Klatt, "Software for a cascade/parallel
// formant synthesizer", JASA 67(3), 1980; vowel formants from G. E. Peterson
// and H. L. Barney, JASA 24(2), 1952), with cycle-to-cycle jitter and shimmer
// and pulse-synchronous aspiration noise. Bowed strings: Helmholtz-motion
// partials a_l ~ sin(pi l beta) / l^2 for bow position beta (L. Cremer, The
// Physics of the Violin, 1984, from memory), first partial weakened by the
// body. Rooms: direct sound plus Gaussian noise decaying 60 dB in RT60
// (J. A. Moorer, "About this reverberation business", CMJ 3(2), 1979).
// Pink/brown noise by 1/f and 1/f^2 power shaping in the frequency domain;
// babble from several of our own sung voices at speech-like pitches.
// Truth: f0_hz(t) is the smooth fundamental; jitter perturbs the phase only.
// Deterministic: the same arguments and seed give the same samples.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

namespace beatless::test {

using F0Track = std::function<double(double)>;  // t_s -> f0_hz

struct Voice {
    double f1_hz = 730, f2_hz = 1090, f3_hz = 2440;  // formants (Peterson-Barney /a/, men)
    double b1_hz = 80, b2_hz = 100, b3_hz = 120;     // formant bandwidths (from memory)
    double jitter = 0.0;                             // RMS cycle-to-cycle period perturbation, fraction (0.002 = 0.2 %)
    double shimmer_db = 0.0;                         // RMS cycle-to-cycle amplitude perturbation, dB
    double aspiration_db = -100;                     // pulse-synchronous noise power re the voiced power, dB
    double peak = 0.4;                               // peak of the sum of partial amplitudes
};

// A sung tone following f0 (Hz as a function of t) for len samples.
std::vector<float> sung_tone(double rate_hz, std::size_t len, const F0Track& f0, const Voice& voice,
                             std::uint64_t seed);

// A bowed-string tone: bow position beta (0.08 .. 0.15), the fundamental
// scaled by fundamental_gain (0.1 = 20 dB weak).
std::vector<float> bowed_tone(double rate_hz, std::size_t len, const F0Track& f0, double beta, double fundamental_gain,
                              std::uint64_t seed);

// y = x convolved with a synthetic room response (direct sound 1 at lag 0, a
// diffuse tail of Gaussian noise decaying by 60 dB in rt60_s, its energy
// 10^(-drr_db / 10) times the direct sound's), trimmed to x's length.
std::vector<float> in_room(const std::vector<float>& x, double rate_hz, double rt60_s, double drr_db,
                           std::uint64_t seed);

// Zero-phase band-pass with Butterworth magnitudes of the given order at
// each edge (a microphone or telephone channel, e.g. 300 .. 3400 Hz).
std::vector<float> band_pass(const std::vector<float>& x, double rate_hz, double low_hz, double high_hz, int order);

enum class NoiseColour { white, pink, brown, babble };

// len samples of noise of the colour, unit mean power (babble: six voices).
std::vector<float> coloured_noise(NoiseColour colour, double rate_hz, std::size_t len, std::uint64_t seed);

// x += noise scaled so that signal_power / noise_power = 10^(snr_db / 10).
void add_noise(std::vector<float>& x, const std::vector<float>& noise, double signal_power, double snr_db);

}  // namespace beatless::test
