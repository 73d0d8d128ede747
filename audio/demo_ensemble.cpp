#include "audio/demo_ensemble.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace beatless::audio {

namespace {
constexpr std::size_t kBlock = 256;  // frames rendered per inner block
constexpr std::size_t kStep = 32;    // pitch trajectory resolution (frames)
constexpr int kPartials = 40;

// Vowel resonances (centre Hz, bandwidth Hz, gain): "ah" and "oh", common
// practice values from memory.
struct Formant {
    double fc, bw, g;
};
constexpr Formant kAh[3] = {{700.0, 130.0, 1.0}, {1220.0, 160.0, 0.5}, {2600.0, 250.0, 0.18}};
constexpr Formant kOh[3] = {{450.0, 100.0, 1.0}, {800.0, 120.0, 0.6}, {2830.0, 250.0, 0.1}};

double formant_gain(const Formant (&f)[3], double hz) {
    double g = 0.02;
    for (const Formant& x : f) {
        const double u = (hz - x.fc) / x.bw;
        g += x.g / (1.0 + u * u);
    }
    return g;
}

// The four habits (start, settle, sag per second of the phrase, vibrato rate, depth).
struct Habit {
    double start_cents, settle_cents, sag_cents_per_s, vib_rate_hz, vib_depth_cents;
};
constexpr Habit kHabits[4] = {
    {+14.0, +6.0, 0.0, 5.8, 26.0},  // leans sharp, settles a little sharp
    {-9.0, -5.0, 0.0, 5.1, 18.0},   // a shade flat
    {+2.0, +2.0, -2.4, 5.4, 22.0},  // sags flat through the phrase
    {-3.0, +1.0, 0.0, 4.8, 12.0},   // steady
};

}  // namespace

struct DemoEnsemble::Singer {
    explicit Singer(double rate) : synth(SynthConfig{rate, kPartials, 0.03}) {}
    HarmonicSynth synth;
    double voice_hz = 0.0;
    int channel = 0;
    bool oh = false;
    Habit h{};
    double vib_phase = 0.0;
    double gain = 0.0;
    DemoSingerTruth truth;
};

DemoEnsemble::DemoEnsemble(const DemoEnsembleConfig& config) : cfg_(config), rng_(config.seed) {
    const std::size_t n = cfg_.voice_cents.size();
    if (n < 1 || n > kMaxDemoSingers) throw Error("demo ensemble: needs 1 to 8 singers");
    if (!(cfg_.sample_rate_hz >= 8000.0 && cfg_.sample_rate_hz <= 192000.0))
        throw Error("demo ensemble: sample rate out of range");
    if (!(cfg_.root_hz >= 20.0 && cfg_.root_hz <= 2000.0))
        throw Error("demo ensemble: root out of range (20 Hz to 2 kHz)");
    if (!(cfg_.phrase_s >= 1.0 && cfg_.breath_s >= 0.0)) throw Error("demo ensemble: a phrase lasts at least 1 s");
    if (cfg_.channel_of_singer.empty())
        for (std::size_t i = 0; i < n; ++i) cfg_.channel_of_singer.push_back(static_cast<int>(i));
    if (cfg_.channel_of_singer.size() != n) throw Error("demo ensemble: one channel per singer");
    int top = 0;
    for (int c : cfg_.channel_of_singer) {
        if (c < 0 || c >= 64) throw Error("demo ensemble: channel out of range");
        top = std::max(top, c + 1);
    }
    channels_ = std::max(top, cfg_.channels);
    for (std::size_t i = 0; i < n; ++i) {
        auto s = std::make_unique<Singer>(cfg_.sample_rate_hz);
        s->voice_hz = cfg_.root_hz * std::exp2(cfg_.voice_cents[i] / 1200.0);
        if (!(s->voice_hz * 2.0 < 0.45 * cfg_.sample_rate_hz && s->voice_hz >= 30.0))
            throw Error("demo ensemble: voice " + std::to_string(i + 1) + " out of range (30 Hz up)");
        s->channel = cfg_.channel_of_singer[i];
        s->oh = i % 2 == 1;
        std::vector<double> amps(kPartials);
        double power = 0.0;
        for (int k = 0; k < kPartials; ++k) {
            const double a = formant_gain(s->oh ? kOh : kAh, s->voice_hz * (k + 1)) / (1.0 + 0.15 * k);
            amps[static_cast<std::size_t>(k)] = a;
            power += a * a;
        }
        for (double& a : amps) a /= std::sqrt(power);
        s->synth.set_partials(amps, true);
        s->synth.set_f0(s->voice_hz, true);
        singers_.push_back(std::move(s));
    }
    voice_buf_.assign(n * kBlock, 0.0f);
    next_start_ = static_cast<std::int64_t>(0.3 * cfg_.sample_rate_hz);
    phrase_start_ = phrase_end_ = next_start_;
}

DemoEnsemble::~DemoEnsemble() = default;

DemoSingerTruth DemoEnsemble::truth(std::size_t singer) const noexcept {
    return singer < singers_.size() ? singers_[singer]->truth : DemoSingerTruth{};
}

void DemoEnsemble::start_phrase() noexcept {
    const double fs = cfg_.sample_rate_hz;
    std::uniform_real_distribution<double> u(0.7, 1.3);
    std::uniform_real_distribution<double> ph(0.0, 2.0 * std::numbers::pi);
    for (std::size_t i = 0; i < singers_.size(); ++i) {
        Singer& s = *singers_[i];
        Habit h = kHabits[i % 4];
        // Singers 5-8 have the same habits, other amounts; every phrase varies them.
        const double k = (i >= 4 ? 0.6 : 1.0) * u(rng_);
        h.start_cents *= k;
        h.settle_cents *= k;
        h.sag_cents_per_s *= k;
        h.vib_rate_hz *= 0.95 + 0.1 * (u(rng_) - 0.7) / 0.6;
        h.vib_depth_cents *= u(rng_);
        if (cfg_.hold)
            h = Habit{cfg_.hold_dev_cents + kHoldOffsetsCents[i], cfg_.hold_dev_cents + kHoldOffsetsCents[i], 0.0, 5.0,
                      0.0};
        s.h = h;
        s.vib_phase = ph(rng_);
        s.gain = std::pow(10.0, cfg_.level_dbfs / 20.0) * std::sqrt(2.0);
        s.synth.set_f0(s.voice_hz * std::exp2(h.start_cents / 1200.0), true);
        s.synth.set_level(s.gain, false);  // 30 ms onset
    }
    phrase_start_ = next_start_;
    phrase_end_ = cfg_.hold ? INT64_MAX / 2 : phrase_start_ + static_cast<std::int64_t>(cfg_.phrase_s * fs);
    next_start_ = phrase_end_ + static_cast<std::int64_t>(cfg_.breath_s * fs);
    ++phrase_;
}

void DemoEnsemble::render(std::span<float> out) noexcept {
    const auto ch = static_cast<std::size_t>(channels_);
    const std::size_t frames = out.size() / ch;
    std::fill(out.begin(), out.end(), 0.0f);
    const double fs = cfg_.sample_rate_hz;
    const double xt = std::isfinite(cfg_.crosstalk_db) ? std::pow(10.0, cfg_.crosstalk_db / 20.0) : 0.0;
    const std::size_t n = singers_.size();
    std::size_t done = 0;
    while (done < frames) {
        const std::size_t len = std::min(kBlock, frames - done);
        std::fill(voice_buf_.begin(), voice_buf_.end(), 0.0f);
        for (std::size_t j = 0; j < len;) {
            const std::size_t step = std::min(kStep, len - j);
            if (pos_ >= next_start_) start_phrase();
            const bool in_phrase = pos_ >= phrase_start_ && pos_ < phrase_end_;
            const double t = static_cast<double>(pos_ + static_cast<std::int64_t>(step) - phrase_start_) / fs;
            for (std::size_t i = 0; i < n; ++i) {
                Singer& s = *singers_[i];
                if (pos_ >= phrase_end_ && s.synth.level() > 0.0 && !s.synth.ramping()) s.synth.set_level(0.0, false);
                // Settling with a 0.6 s time constant, the sag growing through the phrase,
                // the vibrato blooming after 0.3 s.
                const double tt = std::max(0.0, t);
                const double dev = s.h.settle_cents + (s.h.start_cents - s.h.settle_cents) * std::exp(-tt / 0.6) +
                                   s.h.sag_cents_per_s * tt;
                const double bloom = std::clamp((tt - 0.3) / 0.5, 0.0, 1.0);
                const double vib =
                    s.h.vib_depth_cents * bloom * std::sin(2.0 * std::numbers::pi * s.h.vib_rate_hz * tt + s.vib_phase);
                const double centre = s.voice_hz * std::exp2(dev / 1200.0);
                const double f = centre * std::exp2(vib / 1200.0);
                if (in_phrase) s.synth.glide_f0(f, step);
                s.synth.render_add(std::span<float>(&voice_buf_[i * kBlock + j], step));
                s.truth.voiced = in_phrase;
                s.truth.f0_hz = in_phrase ? f : 0.0;
                s.truth.centre_f0_hz = in_phrase ? centre : 0.0;
                s.truth.dev_cents = in_phrase ? dev : 0.0;
            }
            pos_ += static_cast<std::int64_t>(step);
            j += step;
        }
        // Each microphone: its singer, and the neighbours (by singer order) quieter.
        for (std::size_t i = 0; i < n; ++i) {
            const std::size_t c = static_cast<std::size_t>(singers_[i]->channel);
            for (std::size_t k = 0; k < n; ++k) {
                const double g = k == i ? 1.0 : (k + 1 == i || i + 1 == k) ? xt : 0.0;
                if (g == 0.0) continue;
                const float* v = &voice_buf_[k * kBlock];
                for (std::size_t f = 0; f < len; ++f) out[(done + f) * ch + c] += static_cast<float>(g * v[f]);
            }
        }
        done += len;
    }
}

}  // namespace beatless::audio
