#include "pitch/dsp/vibrato.h"

#include "pitch/base/error.h"
#include "pitch/dsp/whole_cycles.h"

#include <algorithm>
#include <cmath>
#include <string>

namespace beatless::pitch {

namespace {
void check(bool ok, const char* what, double v) {
    if (!ok) throw Error("vibrato: " + std::string(what) + " " + std::to_string(v) + " is out of range");
}
}  // namespace

VibratoCentre::VibratoCentre(const VibratoConfig& config) : cfg_(config), target_cents_(NAN) {
    check(cfg_.hop_s >= 1e-4 && cfg_.hop_s <= 0.1, "hop_s", cfg_.hop_s);
    check(cfg_.window_s >= 0.1 && cfg_.window_s <= 10.0, "window_s", cfg_.window_s);
    check(cfg_.fallback_s > 0.0 && cfg_.fallback_s <= 10.0, "fallback_s", cfg_.fallback_s);
    check(cfg_.steady_s > 0.0 && cfg_.steady_s <= 10.0, "steady_s", cfg_.steady_s);
    check(cfg_.min_rate_hz > 0.0 && cfg_.max_rate_hz > cfg_.min_rate_hz, "min_rate_hz", cfg_.min_rate_hz);
    check(cfg_.ref_hz > 0.0 && std::isfinite(cfg_.ref_hz), "ref_hz", cfg_.ref_hz);
    const double keep_s = std::max({cfg_.window_s, cfg_.fallback_s, cfg_.steady_s});
    // A jittery hop may pack frames a little closer than hop_s; keep a margin.
    cap_ = static_cast<std::size_t>(std::ceil(1.25 * keep_s / cfg_.hop_s)) + 8;
    t_.assign(2 * cap_, 0.0);
    c_.assign(2 * cap_, 0.0);
    centre_.assign(2 * cap_, 0.0);
    reset();
}

void VibratoCentre::reset() noexcept {
    count_ = 0;
    head_ = cap_ - 1;
    last_voiced_t_ = -1e300;
    reading_ = VibratoReading{};
    reading_.centre_dev_cents = NAN;
}

void VibratoCentre::set_target_cents(double target_cents) noexcept {
    target_cents_ = target_cents;
    reading_.centre_dev_cents = reading_.ready ? reading_.centre_cents - target_cents_ : NAN;
}

double VibratoCentre::centre_hz() const noexcept {
    if (!reading_.ready) return NAN;
    return cfg_.ref_hz * std::exp2(reading_.centre_cents / 1200.0);
}

const VibratoReading& VibratoCentre::push_hz(double t_s, double f0_hz) noexcept {
    const bool voiced = std::isfinite(f0_hz) && f0_hz > 0.0;
    return push(t_s, voiced ? 1200.0 * std::log2(f0_hz / cfg_.ref_hz) : 0.0, voiced);
}

const VibratoReading& VibratoCentre::push(double t_s, double cents, bool voiced) noexcept {
    if (!voiced || !std::isfinite(cents) || !std::isfinite(t_s)) {
        if (count_ > 0 && t_s - last_voiced_t_ > cfg_.max_gap_s) reset();
        return reading_;
    }
    if (count_ > 0 && (t_s - last_voiced_t_ > cfg_.max_gap_s + 0.5 * cfg_.hop_s || t_s <= last_voiced_t_)) reset();
    push_value(t_s, cents);
    return reading_;
}

void VibratoCentre::push_value(double t_s, double cents) noexcept {
    head_ = (head_ + 1) % cap_;
    t_[head_] = t_[head_ + cap_] = t_s;
    c_[head_] = c_[head_ + cap_] = cents;
    count_ = std::min(count_ + 1, cap_);
    last_voiced_t_ = t_s;
    const std::size_t end = head_ + cap_ + 1;  // one past the newest, in the doubled layout

    // Frames within a time span of the newest, as a contiguous run [end - m, end).
    auto frames_within = [&](double span_s) {
        std::size_t m = 0;
        while (m < count_ && t_s - t_[end - 1 - m] <= span_s + 1e-9) ++m;
        return m;
    };

    const std::size_t min_frames = std::max<std::size_t>(4, static_cast<std::size_t>(0.1 / cfg_.hop_s));
    VibratoReading& r = reading_;
    r.ready = count_ >= min_frames;

    const std::size_t mw = frames_within(cfg_.window_s);
    CycleConfig cc;
    cc.min_rate_hz = cfg_.min_rate_hz;
    cc.max_rate_hz = cfg_.max_rate_hz;
    cc.hysteresis_abs = 0.5 * cfg_.min_depth_cents;
    const CycleStats cs = find_cycles(&t_[end - mw], &c_[end - mw], mw, cc);
    if (cs.found && cs.depth >= cfg_.min_depth_cents) {
        r.vibrato = true;
        r.centre_cents = cs.mean;
        r.rate_hz = cs.rate_hz;
        r.depth_cents = cs.depth;
        r.cycles = cs.cycles;
        r.span_start_s = cs.t_first_s;
        r.span_end_s = cs.t_last_s;
    } else {
        const std::size_t mf = frames_within(cfg_.fallback_s);
        double mean = 0.0, sd = 0.0;
        mean_and_spread(&c_[end - mf], mf, mean, sd);
        r.vibrato = false;
        r.centre_cents = mean;
        r.rate_hz = 0.0;
        r.depth_cents = 0.0;
        r.cycles = 0;
        r.span_start_s = t_[end - mf];
        r.span_end_s = t_s;
    }
    centre_[head_] = centre_[head_ + cap_] = r.centre_cents;

    const std::size_t ms = frames_within(cfg_.steady_s);
    double mean = 0.0;
    mean_and_spread(&c_[end - ms], ms, mean, r.spread_cents);
    mean_and_spread(&centre_[end - ms], ms, mean, r.centre_spread_cents);
    r.centre_dev_cents = std::isnan(target_cents_) ? NAN : r.centre_cents - target_cents_;
}

}  // namespace beatless::pitch
