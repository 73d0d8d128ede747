#include "audio/drone_removal.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>

namespace beatless::audio {

namespace {
constexpr double kTwoPi = 2.0 * std::numbers::pi;
constexpr double kSilent = 1e-9;  // levels below this count as "drone off"

// Four floats processed together (GCC/Clang vector extension; plain code
// on targets without SIMD).
using F4 = float __attribute__((vector_size(16)));
}  // namespace

DroneCanceller::DroneCanceller(const CancellerConfig& config) : cfg_(config) {
    const double fs = cfg_.sample_rate_hz;
    if (!(fs >= 8000.0 && fs <= 192000.0))
        throw Error("drone removal: sample rate " + std::to_string(fs) + " Hz is out of range");
    if (cfg_.max_partials < 1 || cfg_.max_partials > 512) throw Error("drone removal: max_partials must be 1 to 512");
    if (!(cfg_.bandwidth_hz >= 0.0 && cfg_.quiet_bandwidth_hz > 0.0 && cfg_.quiet_bandwidth_hz >= cfg_.bandwidth_hz &&
          cfg_.acquire_bandwidth_hz >= cfg_.bandwidth_hz && cfg_.acquire_bandwidth_hz <= 100.0 &&
          cfg_.quiet_bandwidth_hz <= 100.0))
        throw Error(
            "drone removal: bandwidths must satisfy 0 <= bandwidth <= quiet and acquire bandwidths <= 100 Hz, quiet > "
            "0");
    if (!(cfg_.history_s >= 0.0 && cfg_.history_s <= 2.0)) throw Error("drone removal: history_s must be 0 to 2 s");
    if (!(cfg_.quiet_hold_s >= 0.0 && cfg_.quiet_hold_s <= 1.0))
        throw Error("drone removal: quiet_hold_s must be 0 to 1 s");
    if (cfg_.block_len_samples < 1 || cfg_.block_len_samples > 4096)
        throw Error("drone removal: block length must be 1 to 4096");
    const std::size_t n = cfg_.max_partials;
    const std::size_t padded = (n + 3) / 4 * 4;
    freq_.assign(n, 0.0);
    amp_.assign(n, 0.0);
    phase_.assign(n, 0.0);
    wr_.assign(n, 0.0);
    wi_.assign(n, 0.0);
    for (auto* v : {&zr_, &zi_, &cr_, &ci_, &vr_, &vi_}) v->assign(padded + 4, 0.0f);
    quiet_wr_.assign(n, 0.0);
    quiet_wi_.assign(n, 0.0);
    hist_slots_ = 1 + static_cast<std::size_t>(cfg_.history_s * fs / static_cast<double>(cfg_.block_len_samples));
    hist_.assign(hist_slots_ * n * 2, 0.0);
    mu_ = 4.0 * std::numbers::pi * cfg_.bandwidth_hz / fs;
    mu_quiet_ = 4.0 * std::numbers::pi * cfg_.quiet_bandwidth_hz / fs;
    mu_acquire_ = 4.0 * std::numbers::pi * cfg_.acquire_bandwidth_hz / fs;
}

void DroneCanceller::reset() noexcept {
    std::fill(wr_.begin(), wr_.end(), 0.0);
    std::fill(wi_.begin(), wi_.end(), 0.0);
    std::fill(quiet_wr_.begin(), quiet_wr_.end(), 0.0);
    std::fill(quiet_wi_.begin(), quiet_wi_.end(), 0.0);
    hist_count_ = 0;
    quiet_valid_ = false;
    std::fill(phase_.begin(), phase_.end(), 0.0);
    acquire_left_ = static_cast<std::size_t>(cfg_.acquire_s * cfg_.sample_rate_hz);
}

void DroneCanceller::set_partials(std::span<const DronePartial> partials) noexcept {
    const double fs = cfg_.sample_rate_hz;
    const double limit = std::min(cfg_.max_freq_hz, 0.45 * fs);
    std::size_t n = 0;
    bool same = true;
    for (const DronePartial& p : partials) {
        if (n == cfg_.max_partials) break;
        if (!(p.freq_hz > 0.0 && p.freq_hz < limit && p.amplitude > 0.0)) continue;
        same = same && n < count_ && std::fabs(freq_[n] - p.freq_hz) <= 1e-12 * p.freq_hz;
        freq_[n] = p.freq_hz;
        amp_[n] = p.amplitude;
        ++n;
    }
    same = same && n == count_;
    count_ = n;
    groups_ = (n + 3) / 4;
    for (std::size_t k = 0; k < groups_ * 4; ++k) {
        const double w = k < n ? kTwoPi * freq_[k] / fs : 0.0;
        cr_[k] = static_cast<float>(std::cos(w));
        ci_[k] = static_cast<float>(std::sin(w));
        zr_[k] = zi_[k] = vr_[k] = vi_[k] = 0.0f;
    }
    if (!same) reset();
}

void DroneCanceller::set_harmonics(double root_hz) noexcept {
    DronePartial parts[512];
    std::size_t n = 0;
    if (root_hz > 0.0)
        for (; n < cfg_.max_partials && (n + 1) * root_hz < std::min(cfg_.max_freq_hz, 0.45 * cfg_.sample_rate_hz); ++n)
            parts[n] = DronePartial{(n + 1) * root_hz, 1.0};
    set_partials(std::span<const DronePartial>(parts, n));
}

void DroneCanceller::set_level(double gain, bool immediate) noexcept {
    if (!std::isfinite(gain) || gain < 0.0) gain = 0.0;
    level_target_ = gain;
    if (immediate) {
        level_ = gain;
        level_left_ = 0;
        return;
    }
    level_left_ = std::max<std::size_t>(1, static_cast<std::size_t>(cfg_.ramp_s * cfg_.sample_rate_hz));
    level_step_ = (level_target_ - level_) / static_cast<double>(level_left_);
}

void DroneCanceller::save_history() noexcept {
    hist_head_ = hist_head_ + 1 == hist_slots_ ? 0 : hist_head_ + 1;
    double* h = hist_.data() + hist_head_ * cfg_.max_partials * 2;
    for (std::size_t k = 0; k < count_; ++k) {
        h[2 * k] = wr_[k];
        h[2 * k + 1] = wi_[k];
    }
    hist_count_ = std::min(hist_count_ + 1, hist_slots_);
}

void DroneCanceller::set_voice(bool sounding, std::size_t onset_age_samples) noexcept {
    if (sounding == sounding_) return;
    sounding_ = sounding;
    if (!sounding) {
        quiet_since_ = processed_;
        return;
    }
    if (count_ == 0 || !quiet_valid_) return;
    const auto quiet_samples = static_cast<double>(processed_ - quiet_since_);
    if (quiet_samples < cfg_.quiet_hold_s * cfg_.sample_rate_hz) return;  // the notch stayed narrow: nothing to undo
    if (quiet_samples < cfg_.min_quiet_s * cfg_.sample_rate_hz) {
        // Only a gap between notes: what the wide notch took of the note's tail is dropped.
        std::copy_n(quiet_wr_.begin(), count_, wr_.begin());
        std::copy_n(quiet_wi_.begin(), count_, wi_.begin());
        return;
    }
    // Roll back to the weights from before the onset (or the oldest kept).
    const std::size_t back =
        std::min(hist_count_ > 0 ? hist_count_ - 1 : 0, onset_age_samples / cfg_.block_len_samples + 1);
    if (hist_count_ > 0) {
        const std::size_t slot = (hist_head_ + hist_slots_ - back) % hist_slots_;
        const double* h = hist_.data() + slot * cfg_.max_partials * 2;
        for (std::size_t k = 0; k < count_; ++k) {
            wr_[k] = h[2 * k];
            wi_[k] = h[2 * k + 1];
        }
    }
    std::copy_n(wr_.begin(), count_, quiet_wr_.begin());
    std::copy_n(wi_.begin(), count_, quiet_wi_.begin());
}

bool DroneCanceller::is_residue(double f0_hz, double level_dbfs) const noexcept {
    if (!active() || !(f0_hz > 0.0)) return false;
    double power = 0.0;  // the drone at the microphone, mean square
    for (std::size_t k = 0; k < count_; ++k) {
        const double a = partial_amplitude(k);
        power += 0.5 * a * a;
    }
    if (!(power > 0.0) || level_dbfs > 10.0 * std::log10(power) - cfg_.residue_db) return false;
    for (std::size_t k = 0; k < count_; ++k)
        for (int div = 1; div <= 4; ++div)  // a partial, or a subharmonic the tracker may report
            if (std::fabs(1200.0 * std::log2(f0_hz * div / freq_[k])) <= cfg_.residue_cents) return true;
    return false;
}

double DroneCanceller::partial_amplitude(std::size_t k) const noexcept {
    if (k >= count_) return 0.0;
    return std::hypot(wr_[k], wi_[k]) * amp_[k] * level_;
}

void DroneCanceller::process(std::span<const float> in, std::span<float> out) noexcept {
    const std::size_t len = std::min(in.size(), out.size());
    processed_ += len;
    std::size_t i = 0;
    while (i < len) {
        const std::size_t m = std::min(cfg_.block_len_samples, len - i);
        // Level ramp: constant within a block, at the block's middle value.
        double lv = level_;
        if (level_left_ > 0) {
            const std::size_t steps = std::min(level_left_, m);
            lv = level_ + level_step_ * (0.5 * static_cast<double>(steps));
            level_ += level_step_ * static_cast<double>(steps);
            level_left_ -= steps;
            if (level_left_ == 0) level_ = level_target_;
        }
        if (count_ == 0 || lv <= kSilent) {
            if (out.data() != in.data()) std::copy_n(in.data() + i, m, out.data() + i);
            for (std::size_t k = 0; k < count_; ++k)
                phase_[k] = std::fmod(phase_[k] + kTwoPi * freq_[k] * m / cfg_.sample_rate_hz, kTwoPi);
        } else {
            run_block(in.data() + i, out.data() + i, m, lv);
        }
        i += m;
    }
}

void DroneCanceller::run_block(const float* in, float* out, std::size_t m, double lv) noexcept {
    const double fs = cfg_.sample_rate_hz;
    // Exact phasors at the block start, weights scaled to this level.
    for (std::size_t k = 0; k < count_; ++k) {
        zr_[k] = static_cast<float>(std::cos(phase_[k]));
        zi_[k] = static_cast<float>(std::sin(phase_[k]));
        const double s = lv * amp_[k];
        vr_[k] = static_cast<float>(wr_[k] * s);
        vi_[k] = static_cast<float>(wi_[k] * s);
        phase_[k] = std::fmod(phase_[k] + kTwoPi * freq_[k] * static_cast<double>(m) / fs, kTwoPi);
    }
    const std::size_t acquiring = std::min(acquire_left_, m);
    // Right after the performer falls silent the notch stays narrow: unvoiced frames at a note change (two notes
    // in one span) are not a silence, and a wide notch there would take the new note's partials with the drone's.
    const bool quiet_long = static_cast<double>(processed_ - quiet_since_) >= cfg_.quiet_hold_s * fs;
    const double mu_now = sounding_ || !quiet_long ? mu_ : mu_quiet_;
    acquire_left_ -= acquiring;
    const bool acquired_now = acquiring > 0 && acquire_left_ == 0;
    auto* zr = reinterpret_cast<F4*>(zr_.data());
    auto* zi = reinterpret_cast<F4*>(zi_.data());
    auto* cr = reinterpret_cast<const F4*>(cr_.data());
    auto* ci = reinterpret_cast<const F4*>(ci_.data());
    auto* vr = reinterpret_cast<F4*>(vr_.data());
    auto* vi = reinterpret_cast<F4*>(vi_.data());
    const std::size_t g_n = groups_;
    for (std::size_t n = 0; n < m; ++n) {
        F4 acc = {0.0f, 0.0f, 0.0f, 0.0f};
        for (std::size_t g = 0; g < g_n; ++g) acc += vr[g] * zr[g] - vi[g] * zi[g];
        const float e = in[n] - (acc[0] + acc[1] + acc[2] + acc[3]);
        out[n] = e;
        const float ge = static_cast<float>((n < acquiring ? mu_acquire_ : mu_now) * e);
        for (std::size_t g = 0; g < g_n; ++g) {
            vr[g] += ge * zr[g];
            vi[g] -= ge * zi[g];
            const F4 r = zr[g] * cr[g] - zi[g] * ci[g];
            zi[g] = zr[g] * ci[g] + zi[g] * cr[g];
            zr[g] = r;
        }
    }
    for (std::size_t k = 0; k < count_; ++k) {
        const double s = lv * amp_[k];
        wr_[k] = vr_[k] / s;
        wi_[k] = vi_[k] / s;
    }
    if (acquire_left_ > 0) return;  // history and the quiet weights start once the room is learned
    save_history();
    if (acquired_now || (!sounding_ && !quiet_valid_)) {
        std::copy_n(wr_.begin(), count_, quiet_wr_.begin());
        std::copy_n(wi_.begin(), count_, quiet_wi_.begin());
        quiet_valid_ = true;
    }
}

}  // namespace beatless::audio
