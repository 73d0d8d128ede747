#include "audio/drone.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <cmath>

namespace beatless::audio {

namespace {
constexpr int kRootPartials = 64;       // room for a 32-partial timbre with the octave folded in
constexpr double kAddedToneGain = 0.7;  // fifth and octave sit 3 dB under the root
constexpr double kReferenceDb = -3.0;   // reference voice against the drone level
}  // namespace

double drone_gain(double level_dbfs) noexcept { return std::pow(10.0, level_dbfs / 20.0) * std::sqrt(2.0); }

void check_drone_settings(const DroneSettings& s) {
    if (!(s.root_hz >= 20.0 && s.root_hz <= 2000.0))
        throw Error("drone root " + pitch::format_trimmed(s.root_hz, 3) + " Hz: out of range (20 Hz to 2 kHz)");
    if (!(s.level_dbfs >= kDroneMinLevelDbfs && s.level_dbfs <= kDroneMaxLevelDbfs))
        throw Error("drone level " + pitch::format_trimmed(s.level_dbfs, 1) + " dBFS: out of range (-80 to -6 dBFS)");
}

std::size_t drone_partials(const DroneSettings& s, double fs, double max_freq_hz,
                           std::span<DronePartial> out) noexcept {
    double a[kMaxTimbrePartials] = {};
    const int na = static_cast<int>(timbre_partials_into(s.timbre, a));
    const double limit = std::min(max_freq_hz, 0.45 * fs);
    std::size_t n = 0;
    auto add = [&](double f, double amp) {
        if (!(f < limit) || amp <= 0.0) return;
        amp *= band_limit_gain(f, fs);
        for (std::size_t i = 0; i < n; ++i) {
            if (std::fabs(out[i].freq_hz - f) <= 1e-9 * f) {
                out[i].amplitude = std::sqrt(out[i].amplitude * out[i].amplitude + amp * amp);
                return;
            }
        }
        if (n < out.size()) out[n++] = DronePartial{f, amp};
    };
    for (int k = 0; k < na; ++k) {
        const double fk = (k + 1) * s.root_hz;
        double amp = a[k];
        if (s.octave && (k + 1) % 2 == 0) amp += kAddedToneGain * a[(k + 1) / 2 - 1];
        add(fk, amp);
    }
    if (s.octave)  // octave partials beyond the root's own count
        for (int k = 0; k < na; ++k)
            if (2 * (k + 1) > na) add(2.0 * (k + 1) * s.root_hz, kAddedToneGain * a[k]);
    if (s.fifth)
        for (int k = 0; k < na; ++k) add(1.5 * (k + 1) * s.root_hz, kAddedToneGain * a[k]);
    std::sort(out.begin(), out.begin() + static_cast<std::ptrdiff_t>(n),
              [](const DronePartial& x, const DronePartial& y) { return x.freq_hz < y.freq_hz; });
    return n;
}

Drone::Drone(double sample_rate_hz)
    : rate_hz_(sample_rate_hz),
      root_(SynthConfig{sample_rate_hz, kRootPartials, 0.05}),
      fifth_(SynthConfig{sample_rate_hz, 32, 0.05}),
      reference_(SynthConfig{sample_rate_hz, 8, 0.05}),
      clip_(sample_rate_hz) {
    amps_.assign(kRootPartials, 0.0);
    const auto look = static_cast<std::size_t>(std::max(8L, std::lround(0.0015 * sample_rate_hz)));
    delay_.assign(look, 0.0f);
    attack_coef_ = 1.0 - std::exp(-4.0 / static_cast<double>(look));  // ~98% within the look-ahead
    release_coef_ = 1.0 - std::exp(-1.0 / (0.2 * sample_rate_hz));    // 200 ms release
    ceiling_ = static_cast<float>(std::pow(10.0, kDroneCeilingDbfs / 20.0));
    reference_.set_partials(timbre_partials(Timbre::soft), true);
}

void Drone::apply(const DroneSettings& s, bool first) noexcept {
    const bool silent = first || (root_.level() == 0.0 && !root_.ramping());
    const double root = std::clamp(s.root_hz, 20.0, 2000.0);
    const double gain = s.on ? drone_gain(std::clamp(s.level_dbfs, kDroneMinLevelDbfs, kDroneMaxLevelDbfs)) : 0.0;

    // Timbre amplitudes, octave folded into the even partials.
    std::fill(amps_.begin(), amps_.end(), 0.0);
    double a[kMaxTimbrePartials] = {};
    const int na = static_cast<int>(timbre_partials_into(s.timbre, a));
    for (int k = 0; k < na; ++k) amps_[static_cast<std::size_t>(k)] += a[k];
    if (s.octave)
        for (int k = 0; k < na && 2 * k + 1 < kRootPartials; ++k)
            amps_[static_cast<std::size_t>(2 * k + 1)] += kAddedToneGain * a[k];

    root_.set_f0(root, silent);
    root_.set_partials(amps_, silent);
    root_.set_level(gain);

    const bool fifth_silent = silent || (fifth_.level() == 0.0 && !fifth_.ramping());
    double fa[kMaxTimbrePartials] = {};
    for (int k = 0; k < na; ++k) fa[k] = kAddedToneGain * a[k];
    fifth_.set_f0(1.5 * root, fifth_silent);
    fifth_.set_partials(std::span<const double>(fa, static_cast<std::size_t>(na)), fifth_silent);
    fifth_.set_level(s.fifth ? gain : 0.0);

    if (s.reference_hz > 0.0 && (first || s.reference_count != applied_.reference_count)) {
        const bool ref_silent = reference_.level() == 0.0 && !reference_.ramping();
        reference_.set_f0(std::clamp(s.reference_hz, 20.0, 0.4 * rate_hz_), ref_silent);
        reference_.set_level(
            drone_gain(std::clamp(s.level_dbfs + kReferenceDb, kDroneMinLevelDbfs, kDroneMaxLevelDbfs)));
        reference_left_ = static_cast<std::int64_t>(std::max(0.1, s.reference_s) * rate_hz_);
    } else if (reference_left_ > 0 && s.reference_hz > 0.0 && s.reference_hz != applied_.reference_hz) {
        reference_.set_f0(std::clamp(s.reference_hz, 20.0, 0.4 * rate_hz_));
    }
    applied_ = s;
    applied_.root_hz = root;
    have_applied_ = true;
}

void Drone::render(std::span<float> out) noexcept {
    DroneSettings s;
    if (pending_.read(s)) apply(s, !have_applied_);
    if (want_phases_.exchange(false, std::memory_order_acq_rel)) {
        taken_ = DronePhases{root_.phase_rad(), fifth_.phase_rad(), !root_.ramping() && !fifth_.ramping()};
        phases_taken_.store(true, std::memory_order_release);
    }
    std::fill(out.begin(), out.end(), 0.0f);
    root_.render_add(out);
    fifth_.render_add(out);
    if (reference_left_ > 0) {
        reference_left_ -= static_cast<std::int64_t>(out.size());
        if (reference_left_ <= 0) reference_.set_level(0.0);
    }
    reference_.render_add(out);
    clip_.mix(out);
    limit(out);
}

void Drone::start_sounding(const DroneSettings& s, const DronePhases& p) noexcept {
    apply(s, true);
    const double gain = s.on ? drone_gain(std::clamp(s.level_dbfs, kDroneMinLevelDbfs, kDroneMaxLevelDbfs)) : 0.0;
    root_.set_level(gain, true);
    fifth_.set_level(s.fifth ? gain : 0.0, true);
    root_.set_phase(p.root_rad);
    fifth_.set_phase(p.fifth_rad);
}

void Drone::limit(std::span<float> out) noexcept {
    const std::size_t look = delay_.size();
    for (float& x : out) {
        const float in = x;
        x = delay_[delay_pos_];
        delay_[delay_pos_] = in;
        delay_pos_ = delay_pos_ + 1 == look ? 0 : delay_pos_ + 1;
        // Peak over the look-ahead line, rescanned only when the held peak leaves it.
        const float a = std::fabs(in);
        if (a >= peak_) {
            peak_ = a;
            peak_age_ = 0;
        } else if (++peak_age_ >= look) {
            peak_ = 0.0f;
            peak_age_ = 0;
            for (std::size_t i = 0; i < look; ++i) {
                const std::size_t j = (delay_pos_ + look - 1 - i) % look;  // newest first
                if (std::fabs(delay_[j]) > peak_) {
                    peak_ = std::fabs(delay_[j]);
                    peak_age_ = i;
                }
            }
        }
        const double want = peak_ > ceiling_ ? ceiling_ / peak_ : 1.0;
        lim_gain_ += (want - lim_gain_) * (want < lim_gain_ ? attack_coef_ : release_coef_);
        x = std::clamp(static_cast<float>(x * lim_gain_), -ceiling_, ceiling_);
    }
}

}  // namespace beatless::audio
