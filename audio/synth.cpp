#include "audio/synth.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <random>

namespace beatless::audio {

namespace {
constexpr double kTwoPi = 2.0 * std::numbers::pi;
}

double band_limit_gain(double freq_hz, double sample_rate_hz) noexcept {
    const double x = freq_hz / sample_rate_hz;
    if (x <= 0.40) return 1.0;
    if (x >= 0.45) return 0.0;
    return 0.5 + 0.5 * std::cos(std::numbers::pi * (x - 0.40) / 0.05);
}

std::vector<double> partials_power_law(int count, double exponent) {
    std::vector<double> a(static_cast<std::size_t>(std::max(count, 0)));
    for (std::size_t k = 0; k < a.size(); ++k) a[k] = std::pow(static_cast<double>(k + 1), -exponent);
    return a;
}

HarmonicSynth::HarmonicSynth(const SynthConfig& config) : cfg_(config) {
    if (!(cfg_.sample_rate_hz >= 1000.0 && cfg_.sample_rate_hz <= 384000.0))
        throw Error("synth sample rate " + std::to_string(cfg_.sample_rate_hz) + " Hz: out of range");
    if (cfg_.max_partials < 1 || cfg_.max_partials > 512)
        throw Error("synth partial count " + std::to_string(cfg_.max_partials) + ": out of range (1 to 512)");
    ramp_len_samples_ =
        std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(cfg_.ramp_s * cfg_.sample_rate_hz)));
    const auto n = static_cast<std::size_t>(cfg_.max_partials);
    amp_now_.assign(n, 0.0);
    amp_target_.assign(n, 0.0);
    amp_step_.assign(n, 0.0);
    cos_theta_.assign(n, 1.0);
    sin_theta_.assign(n, 0.0);
}

void HarmonicSynth::set_f0(double freq_hz, bool immediate) noexcept {
    if (!(freq_hz > 0.0) || !std::isfinite(freq_hz)) return;
    f0_target_ = freq_hz;
    if (immediate) {
        f0_now_ = freq_hz;
        f0_left_ = 0;
        return;
    }
    f0_left_ = ramp_len_samples_;
    f0_step_ = std::pow(f0_target_ / f0_now_, 1.0 / static_cast<double>(f0_left_));
}

void HarmonicSynth::glide_f0(double freq_hz, std::size_t len_samples) noexcept {
    if (!(freq_hz > 0.0) || !std::isfinite(freq_hz)) return;
    f0_target_ = freq_hz;
    if (len_samples == 0) {
        f0_now_ = freq_hz;
        f0_left_ = 0;
        return;
    }
    f0_left_ = len_samples;
    f0_step_ = std::pow(f0_target_ / f0_now_, 1.0 / static_cast<double>(len_samples));
}

void HarmonicSynth::set_partials(std::span<const double> amplitudes, bool immediate) noexcept {
    for (std::size_t k = 0; k < amp_target_.size(); ++k) {
        const double a = k < amplitudes.size() && std::isfinite(amplitudes[k]) ? amplitudes[k] : 0.0;
        amp_target_[k] = a;
        if (immediate) amp_now_[k] = a;
        amp_step_[k] = (a - amp_now_[k]) / static_cast<double>(ramp_len_samples_);
    }
    amp_left_ = immediate ? 0 : ramp_len_samples_;
    // Partials past the last one sounding now or after the ramp cost nothing.
    top_ = 0;
    for (std::size_t k = 0; k < amp_target_.size(); ++k)
        if (amp_target_[k] != 0.0 || amp_now_[k] != 0.0) top_ = k + 1;
}

void HarmonicSynth::set_phases(std::span<const double> phases_rad) noexcept {
    for (std::size_t k = 0; k < cos_theta_.size(); ++k) {
        const double th = k < phases_rad.size() ? phases_rad[k] : 0.0;
        cos_theta_[k] = std::cos(th);
        sin_theta_[k] = std::sin(th);
    }
}

void HarmonicSynth::set_level(double gain, bool immediate) noexcept {
    if (!std::isfinite(gain) || gain < 0.0) gain = 0.0;
    gain_target_ = gain;
    if (immediate) {
        gain_now_ = gain;
        gain_left_ = 0;
        return;
    }
    gain_left_ = ramp_len_samples_;
    gain_step_ = (gain_target_ - gain_now_) / static_cast<double>(gain_left_);
}

void HarmonicSynth::set_vibrato(double rate_hz, double depth_cents) noexcept {
    vib_rate_hz_ = std::isfinite(rate_hz) ? std::max(0.0, rate_hz) : 0.0;
    vib_depth_cents_ = std::isfinite(depth_cents) ? std::max(0.0, depth_cents) : 0.0;
}

bool HarmonicSynth::ramping() const noexcept { return f0_left_ > 0 || gain_left_ > 0 || amp_left_ > 0; }

void HarmonicSynth::set_phase(double rad) noexcept {
    phase_ = std::fmod(rad, kTwoPi);
    if (phase_ < 0.0) phase_ += kTwoPi;
}

void HarmonicSynth::render_add(std::span<float> out) noexcept {
    const double fs = cfg_.sample_rate_hz;
    const std::size_t np = top_;
    for (float& sample : out) {
        // Advance the ramps by one sample.
        if (f0_left_ > 0) {
            f0_now_ *= f0_step_;
            if (--f0_left_ == 0) f0_now_ = f0_target_;
        }
        if (gain_left_ > 0) {
            gain_now_ += gain_step_;
            if (--gain_left_ == 0) gain_now_ = gain_target_;
        }
        if (amp_left_ > 0) {
            for (std::size_t k = 0; k < top_; ++k) amp_now_[k] += amp_step_[k];
            if (--amp_left_ == 0) std::copy(amp_target_.begin(), amp_target_.end(), amp_now_.begin());
        }
        double f = f0_now_;
        if (vib_depth_cents_ > 0.0 && vib_rate_hz_ > 0.0) {
            f *= std::exp2(vib_depth_cents_ * std::sin(vib_phase_) / 1200.0);
            vib_phase_ += kTwoPi * vib_rate_hz_ / fs;
            if (vib_phase_ >= kTwoPi) vib_phase_ -= kTwoPi;
        }
        if (gain_now_ > 0.0) {
            // sin(k phi) and cos(k phi) by the Chebyshev recurrence.
            const double c1 = std::cos(phase_), s1 = std::sin(phase_);
            const double two_c = 2.0 * c1;
            double s_prev = 0.0, c_prev = 1.0;  // k = 0
            double s_k = s1, c_k = c1;          // k = 1
            double acc = 0.0;
            for (std::size_t k = 0; k < np; ++k) {
                const double fk = f * static_cast<double>(k + 1);
                if (fk >= 0.45 * fs) break;
                const double a = amp_now_[k];
                if (a != 0.0) {
                    const double g = fk > 0.40 * fs ? band_limit_gain(fk, fs) : 1.0;
                    acc += a * g * (s_k * cos_theta_[k] + c_k * sin_theta_[k]);
                }
                const double s_next = two_c * s_k - s_prev;
                const double c_next = two_c * c_k - c_prev;
                s_prev = s_k;
                c_prev = c_k;
                s_k = s_next;
                c_k = c_next;
            }
            sample += static_cast<float>(gain_now_ * acc);
        }
        phase_ += kTwoPi * f / fs;
        if (phase_ >= kTwoPi) phase_ -= kTwoPi;
    }
}

void render_tone_add(const ToneSpec& tone, double sample_rate_hz, std::span<float> out) {
    const double fs = sample_rate_hz;
    const auto n = static_cast<std::int64_t>(out.size());
    const auto first = std::max<std::int64_t>(0, static_cast<std::int64_t>(std::ceil(tone.start_s * fs)));
    const auto last =
        std::min<std::int64_t>(n, static_cast<std::int64_t>(std::floor((tone.start_s + tone.dur_s) * fs)));
    if (first >= last) return;
    std::vector<double> amps = tone.partials;
    double phase = 0.0;
    for (std::int64_t i = first; i < last; ++i) {
        const double t = static_cast<double>(i) / fs - tone.start_s;  // time since onset
        double env = 1.0;
        if (tone.attack_s > 0 && t < tone.attack_s) env = 0.5 - 0.5 * std::cos(std::numbers::pi * t / tone.attack_s);
        const double to_end = tone.dur_s - t;
        if (tone.release_s > 0 && to_end < tone.release_s)
            env *= 0.5 - 0.5 * std::cos(std::numbers::pi * std::max(0.0, to_end) / tone.release_s);
        double f = tone.f0_hz;
        if (tone.vibrato_depth_cents > 0.0 && tone.vibrato_rate_hz > 0.0)
            f *= std::exp2(tone.vibrato_depth_cents * std::sin(kTwoPi * tone.vibrato_rate_hz * t) / 1200.0);
        double acc = 0.0;
        for (std::size_t k = 0; k < amps.size(); ++k) {
            const double fk = f * static_cast<double>(k + 1);
            if (fk >= 0.45 * fs) break;
            acc += amps[k] * band_limit_gain(fk, fs) * std::sin(static_cast<double>(k + 1) * phase);
        }
        out[static_cast<std::size_t>(i)] += static_cast<float>(tone.level * env * acc);
        phase += kTwoPi * f / fs;
        if (phase >= kTwoPi) phase -= kTwoPi;
    }
}

void add_white_noise(std::span<float> out, double rms, std::uint64_t seed) {
    std::mt19937_64 rng(seed);
    std::normal_distribution<double> gauss(0.0, rms);
    for (float& s : out) s += static_cast<float>(gauss(rng));
}

}  // namespace beatless::audio
