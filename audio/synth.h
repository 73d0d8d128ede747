// HarmonicSynth — additive synthesis of a harmonic tone, safe for real time (test tones, practice tracks, the drone).
// Method: sum_k a_k sin(k phi + theta_k), the partials from sin/cos of phi by the Chebyshev recurrence; every change
// ramps; partials fade out before Nyquist. Detail: DEVELOPERS.md, "Methods in detail".
// Thread: one (the audio callback's, or any one offline), setters too. Allocates: in the constructor only. Locks: no.
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace beatless::audio {

struct SynthConfig {
    double sample_rate_hz = 48000.0;  // output rate
    int max_partials = 48;            // partials 1..max_partials
    double ramp_s = 0.05;             // every change ramps over this time (50 ms)
};

class HarmonicSynth {
public:
    explicit HarmonicSynth(const SynthConfig& config);  // allocates; throws Error on bad config

    // Setters ramp from the current state unless `immediate` is true.
    // Thread: one thread (the one calling render). Allocates: no. Locks: no.
    void set_f0(double freq_hz, bool immediate = false) noexcept;
    void glide_f0(double freq_hz, std::size_t len_samples) noexcept;                         // exponential glide
    void set_partials(std::span<const double> amplitudes, bool immediate = false) noexcept;  // a_1, a_2, ...
    void set_phases(std::span<const double> phases_rad) noexcept;                            // theta_1, ...
    void set_level(double gain, bool immediate = false) noexcept;                            // linear
    void set_vibrato(double rate_hz, double depth_cents) noexcept;

    // Adds the tone into out. Thread: audio callback. Allocates: no. Locks: no.
    void render_add(std::span<float> out) noexcept;

    double f0_hz() const noexcept { return f0_now_; }  // current (ramping) f0, without vibrato
    double phase_rad() const noexcept { return phase_; }  // fundamental phase now, [0, 2pi)
    void set_phase(double rad) noexcept;                  // the fundamental's phase from now on
    double level() const noexcept { return gain_now_; }
    bool ramping() const noexcept;
    const SynthConfig& config() const noexcept { return cfg_; }

private:
    SynthConfig cfg_;
    std::size_t ramp_len_samples_ = 1;
    double phase_ = 0.0;  // fundamental phase in radians, kept in [0, 2pi)
    double vib_phase_ = 0.0;
    double vib_rate_hz_ = 0.0;
    double vib_depth_cents_ = 0.0;
    double f0_now_ = 220.0, f0_target_ = 220.0, f0_step_ = 1.0;  // multiplicative step per sample
    std::size_t f0_left_ = 0;
    double gain_now_ = 0.0, gain_target_ = 0.0, gain_step_ = 0.0;
    std::size_t gain_left_ = 0;
    std::vector<double> amp_now_, amp_target_, amp_step_;
    std::size_t amp_left_ = 0;
    std::size_t top_ = 0;  // partials 1..top_ may sound (the rest are zero)
    std::vector<double> cos_theta_, sin_theta_;
};

// Gain of partial frequency f in the band-limiting fade (1 below 0.40 fs, 0 above 0.45 fs).
double band_limit_gain(double freq_hz, double sample_rate_hz) noexcept;

// Partial amplitude laws used by tones and drone timbres.
std::vector<double> partials_power_law(int count, double exponent);  // a_k = k^-exponent

// Offline rendering of a whole tone for practice tracks, tests and demos.
struct ToneSpec {
    double f0_hz = 220.0;
    std::vector<double> partials{1.0};  // a_1, a_2, ...
    double level = 0.25;                // peak-ish linear gain applied to the sum
    double vibrato_rate_hz = 0.0;
    double vibrato_depth_cents = 0.0;
    double attack_s = 0.05;   // raised-cosine onset
    double release_s = 0.05;  // raised-cosine offset
    double start_s = 0.0;     // onset time within the rendered buffer
    double dur_s = 1.0;       // from onset to the end of the release
};
// Adds the tone into out (rate sample_rate_hz), clipped to the buffer.
void render_tone_add(const ToneSpec& tone, double sample_rate_hz, std::span<float> out);

// Adds white Gaussian noise of the given RMS (seeded, reproducible).
void add_white_noise(std::span<float> out, double rms, std::uint64_t seed);

}  // namespace beatless::audio
