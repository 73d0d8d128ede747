#include "audio/demo_performer.h"

#include "audio/demo_blocks.h"
#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace beatless::audio {

namespace {
constexpr int kPartials = 40;
}  // namespace

double DemoPerformer::formant_gain(double f) const noexcept {
    // Sum of three resonances (vowel "ah", common practice values from
    // memory) over a -12 dB/octave source slope.
    auto peak = [f](double fc, double bw, double g) {
        const double x = (f - fc) / bw;
        return g / (1.0 + x * x);
    };
    return peak(700.0, 130.0, 1.0) + peak(1220.0, 160.0, 0.5) + peak(2600.0, 250.0, 0.18) + 0.02;
}

DemoPerformer::DemoPerformer(const DemoConfig& config)
    : cfg_(config), synth_(SynthConfig{config.sample_rate_hz, kPartials, 0.03}), rng_(config.seed) {
    if (cfg_.target_cents.empty()) throw Error("demo performer: needs at least one target");
    if (!(cfg_.root_hz >= 20.0 && cfg_.root_hz <= 2000.0))
        throw Error("demo performer: root out of range (20 Hz to 2 kHz)");
    if (!(cfg_.low_hz > 0 && cfg_.high_hz >= 2.0 * cfg_.low_hz))
        throw Error("demo performer: range must span an octave");
    if (!(cfg_.vibrato_scale >= 0.0 && cfg_.vibrato_scale <= 2.0))
        throw Error("demo performer: vibrato_scale out of range (0 to 2)");
    for (std::size_t i = 0; i < cfg_.script.size(); ++i) {
        const DemoNote& n = cfg_.script[i];
        if (!(n.start_s >= 0.0 && n.dur_s > 0.0 && std::isfinite(n.start_s + n.dur_s + n.target_cents)))
            throw Error("demo performer: script note " + std::to_string(i + 1) + " has a bad time or target");
        if (i > 0 && n.start_s < cfg_.script[i - 1].start_s + cfg_.script[i - 1].dur_s)
            throw Error("demo performer: script note " + std::to_string(i + 1) +
                        " starts before the one before it ends");
    }
    partials_.assign(kPartials, 0.0);
    noise_rms_ = 0.02 * std::pow(10.0, cfg_.level_dbfs / 20.0);
    next_start_ = cfg_.script.empty()
                      ? static_cast<std::int64_t>(0.3 * cfg_.sample_rate_hz)  // a short breath before the first note
                      : static_cast<std::int64_t>(std::llround(cfg_.script.front().start_s * cfg_.sample_rate_hz));
}

void DemoPerformer::start_note() noexcept {
    const double fs = cfg_.sample_rate_hz;
    const std::size_t n = cfg_.target_cents.size();
    const bool scripted = !cfg_.script.empty();
    if (scripted && note_index_ >= cfg_.script.size()) {  // the script is sung: silence from now on
        next_start_ = INT64_MAX;
        return;
    }
    truth_.target_index = static_cast<int>(scripted ? note_index_ : cfg_.hold ? 0 : note_index_ % n);
    const double cents = scripted ? cfg_.script[note_index_].target_cents
                                  : cfg_.target_cents[static_cast<std::size_t>(truth_.target_index)];
    double f = cfg_.root_hz * std::exp2(cents / 1200.0);
    while (f < cfg_.low_hz) f *= 2.0;
    while (f > cfg_.high_hz) f /= 2.0;
    note_target_hz_ = f;
    std::uniform_real_distribution<double> u(0.0, 1.0);
    const double sign = u(rng_) < 0.5 ? -1.0 : 1.0;
    if (cfg_.hold) {
        start_dev_cents_ = final_dev_cents_ = cfg_.hold_dev_cents;
        vib_depth_cents_ = 0.0;
    } else {
        start_dev_cents_ = sign * (6.0 + 14.0 * u(rng_));
        final_dev_cents_ = (u(rng_) - 0.5) * 6.0;  // within ±3 cents after correcting
        vib_rate_hz_ = 5.0 + 1.2 * u(rng_);
        vib_depth_cents_ = (20.0 + 10.0 * u(rng_)) * cfg_.vibrato_scale;
    }
    vib_phase_ = 0.0;
    // Partial amplitudes from the vowel envelope at this f0.
    double power = 0.0;
    for (int k = 0; k < kPartials; ++k) {
        const double fk = f * (k + 1);
        const double a = formant_gain(fk) / (1.0 + 0.15 * k);
        partials_[static_cast<std::size_t>(k)] = a;
        power += a * a;
    }
    for (double& a : partials_) a /= std::sqrt(power);
    note_start_ = next_start_;
    if (scripted) {
        note_end_ = note_start_ + static_cast<std::int64_t>(std::llround(cfg_.script[note_index_].dur_s * fs));
        next_start_ = note_index_ + 1 < cfg_.script.size()
                          ? std::max(note_end_,
                                     static_cast<std::int64_t>(std::llround(cfg_.script[note_index_ + 1].start_s * fs)))
                          : INT64_MAX;
    } else {
        note_end_ = cfg_.hold ? INT64_MAX : note_start_ + static_cast<std::int64_t>(cfg_.note_s * fs);
        next_start_ = cfg_.hold ? INT64_MAX : note_end_ + static_cast<std::int64_t>(cfg_.breath_s * fs);
    }
    ++note_index_;
    synth_.set_partials(partials_, true);
    synth_.set_f0(note_target_hz_ * std::exp2(start_dev_cents_ / 1200.0), true);
    gain_ = std::pow(10.0, cfg_.level_dbfs / 20.0) * std::sqrt(2.0);
    synth_.set_level(gain_, false);  // 30 ms onset ramp
}

void DemoPerformer::render(std::span<float> out) noexcept {
    const double fs = cfg_.sample_rate_hz;
    std::normal_distribution<double> gauss(0.0, 1.0);
    render_in_blocks(out, [&](std::size_t i, std::size_t len) {
        if (pos_ >= next_start_) start_note();
        if (pos_ >= note_end_ && synth_.level() > 0.0 && !synth_.ramping()) synth_.set_level(0.0, false);
        const bool in_note = pos_ >= note_start_ && pos_ < note_end_;
        // Pitch at the end of this block: correction toward final_dev with a
        // 0.5 s time constant, vibrato fading in after 0.4 s.
        const double t = static_cast<double>(pos_ + static_cast<std::int64_t>(len) - note_start_) / fs;
        const double dev = final_dev_cents_ + (start_dev_cents_ - final_dev_cents_) * std::exp(-std::max(0.0, t) / 0.5);
        const double bloom = std::clamp((t - 0.4) / 0.6, 0.0, 1.0);
        vib_phase_ += 2.0 * std::numbers::pi * vib_rate_hz_ * static_cast<double>(len) / fs;
        const double vib = vib_depth_cents_ * bloom * std::sin(vib_phase_);
        const double centre = note_target_hz_ * std::exp2(dev / 1200.0);
        const double f = centre * std::exp2(vib / 1200.0);
        if (in_note) synth_.glide_f0(f, len);
        synth_.render_add(out.subspan(i, len));
        if (synth_.level() > 0.0) {
            const double nr = noise_rms_ * synth_.level() / gain_;
            for (std::size_t j = i; j < i + len; ++j) out[j] += static_cast<float>(nr * gauss(rng_));
        }
        truth_.voiced = in_note;
        truth_.f0_hz = in_note ? f : 0.0;
        truth_.centre_f0_hz = in_note ? centre : 0.0;
        truth_.dev_cents = in_note ? dev : 0.0;
        pos_ += static_cast<std::int64_t>(len);
    });
}

}  // namespace beatless::audio
