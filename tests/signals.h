// Test signals with exactly known content (test-only; never linked into the product).
//
// Every generator is deterministic: the same arguments (and seed) give the
// same samples on every machine (std::mt19937_64 is fully specified by the
// C++ standard, and Gaussian values come from our own Box-Muller transform,
// not from std::normal_distribution, whose algorithm is left to the library).
// Sample n sits at time n / rate_hz. Phases are in radians; a partial
// l with phase p contributes a * cos(l * phi(t) + p), where phi(t) is the
// fundamental's phase, 2 pi times the integral of f0 from 0 to t (exact in
// closed form for steady tones and glides, Simpson's rule per sample
// interval for vibrato, far below 1e-9 rad).
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <span>
#include <vector>

namespace beatless::test {

struct Partial {
    int number = 1;          // harmonic number (1 = fundamental)
    double amplitude = 1.0;  // peak amplitude (linear)
    double phase_rad = 0.0;  // phase at t = 0
};

// Partials 1.. of a "realistic" tone: amplitude falling db_per_octave per
// octave of harmonic number (6 dB/octave: a_l = a_1 / l), at most
// max_partials of them, only those with l * max_f0_hz <= nyquist_fraction * rate / 2,
// random phases (uniform, from seed), scaled so the peak of the sum of
// amplitudes is `peak` (the waveform never exceeds it).
std::vector<Partial> falling_partials(double max_f0_hz, double rate_hz, int max_partials, double db_per_octave,
                                      std::uint64_t seed, double peak = 0.5, double nyquist_fraction = 0.9);

// Same amplitudes but with the listed harmonic numbers removed (for instance
// {1} for a missing fundamental).
std::vector<Partial> without(std::vector<Partial> partials, std::span<const int> numbers);

// Mean power (1/n) sum a_l^2 / 2 of a harmonic tone: exact, not measured.
double harmonic_power(std::span<const Partial> partials);

// A single sine a * sin(2 pi f t + phase).
std::vector<float> sine(double rate_hz, std::size_t len, double freq_hz, double amplitude, double phase_rad = 0.0);

// A steady harmonic tone of fundamental f0_hz.
std::vector<float> harmonic_tone(double rate_hz, std::size_t len, double f0_hz, std::span<const Partial> partials);

// A harmonic tone whose fundamental follows f0_of_t (Hz, t in seconds).
std::vector<float> harmonic_tone_fm(double rate_hz, std::size_t len, const std::function<double(double)>& f0_of_t,
                                    std::span<const Partial> partials);

// Sinusoidal vibrato in cents: f0(t) = centre * 2^(depth/1200 * sin(2 pi rate t + phase)).
struct Vibrato {
    double centre_hz = 220.0;
    double depth_cents = 50.0;  // peak deviation (half the peak-to-peak swing)
    double rate_hz = 5.5;
    double phase_rad = 0.0;
    double f0_hz(double t_s) const;
};
std::vector<float> vibrato_tone(double rate_hz, std::size_t len, const Vibrato& v, std::span<const Partial> partials);

// A glide linear in cents: f0(t) = start * 2^(cents_per_s * t / 1200).
struct Glide {
    double start_hz = 220.0;
    double cents_per_s = 1200.0;
    double f0_hz(double t_s) const;
    double phase_rad(double t_s) const;  // 2 pi * integral of f0 from 0 to t (closed form)
};
std::vector<float> glide_tone(double rate_hz, std::size_t len, const Glide& g, std::span<const Partial> partials);

// len zeros.
std::vector<float> silence(std::size_t len);

// Standard normal values from mt19937_64(seed) by the Box-Muller transform.
std::vector<double> gaussian(std::size_t len, std::uint64_t seed);

// Adds white Gaussian noise of variance signal_power / 10^(snr_db / 10).
// signal_power is given (exact, e.g. harmonic_power), not measured, so the
// SNR is exactly what is asked. Returns the noise variance used.
double add_white_noise(std::vector<float>& x, double signal_power, double snr_db, std::uint64_t seed);

// Measured mean square of x.
double mean_square(std::span<const float> x);

// 1200 log2(a / b).
double cents(double a_hz, double b_hz);

// Cramer-Rao bound (standard deviation, in cents) on the fundamental of a
// real harmonic tone in white Gaussian noise of variance noise_var over n
// samples: var(w0) >= 24 noise_var / (n^3 sum_l l^2 A_l^2), w0 in radians per
// sample (M. G. Christensen and A. Jakobsson, Multi-Pitch Estimation,
// Morgan & Claypool 2009, ch. 2; for one partial it is the classic bound for
// a real sinusoid). Converted with d(cents) = 1200 / ln 2 * d(w0) / w0.
double harmonic_crb_cents(std::span<const Partial> partials, double f0_hz, double rate_hz, double noise_var,
                          std::size_t n);

}  // namespace beatless::test
