#include "audio/demo_duo.h"

#include "audio/demo_blocks.h"
#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace beatless::audio {

namespace {
constexpr int kPartials = 30;
constexpr double kBeta = 0.13;           // bow position (fraction of the string)
constexpr double kCorrectS = 0.7;        // time constant of her correction
constexpr double kBowChangeDipS = 0.06;  // the level dips this long at a bow change
const double kDefaultIntervals[] = {701.955, 968.826, 386.314, 582.512, 315.641, 884.359};  // 3/2 7/4 5/4 7/5 6/5 5/3
}  // namespace

DemoDuo::DemoDuo(const DemoDuoConfig& config)
    : cfg_(config),
      low_(SynthConfig{config.sample_rate_hz, kPartials, 0.03}),
      high_(SynthConfig{config.sample_rate_hz, kPartials, 0.03}),
      rng_(config.seed) {
    if (!(cfg_.root_hz >= 20.0 && cfg_.root_hz <= 2000.0))
        throw Error("demo violinist: root out of range (20 Hz to 2 kHz)");
    if (!(cfg_.low_hz >= 60.0 && cfg_.low_hz <= 600.0))
        throw Error("demo violinist: low_hz out of range (60 to 600 Hz)");
    if (!(cfg_.stop_s >= 1.0 && cfg_.lift_s >= 0.0)) throw Error("demo violinist: stop_s must be at least 1 s");
    if (cfg_.interval_cents.empty())
        cfg_.interval_cents.assign(std::begin(kDefaultIntervals), std::end(kDefaultIntervals));
    for (double c : cfg_.interval_cents)
        if (!(c >= 100.0 && c <= 1900.0)) throw Error("demo violinist: intervals must lie within 100 .. 1900 cents");
    for (const DemoNote& n : cfg_.script) {
        if (!(n.target_cents >= 100.0 && n.target_cents <= 1900.0))
            throw Error("demo violinist: intervals must lie within 100 .. 1900 cents");
        if (!(n.start_s >= 0.0 && n.dur_s >= 0.5 && n.start_s + n.dur_s <= 1e6))
            throw Error("demo violinist: a double stop of the script starts before 0 or lasts under 0.5 s");
    }
    partials_.assign(kPartials, 0.0);
    double power = 0.0;
    for (int l = 1; l <= kPartials; ++l) {
        const double a = std::fabs(std::sin(std::numbers::pi * l * kBeta)) / std::pow(l, 1.5);
        partials_[static_cast<std::size_t>(l - 1)] = a;
        power += a * a;
    }
    for (double& a : partials_) a /= std::sqrt(power);
    low_.set_partials(partials_, true);
    high_.set_partials(partials_, true);
    gain_ =
        std::pow(10.0, cfg_.level_dbfs / 20.0) * std::sqrt(2.0) / std::sqrt(1.0 + std::pow(10.0, cfg_.upper_db / 10.0));
    noise_rms_ = std::pow(10.0, (cfg_.level_dbfs + cfg_.bow_noise_db) / 20.0);
    next_ = static_cast<std::int64_t>((cfg_.script.empty() ? 0.3 : cfg_.script.front().start_s) * cfg_.sample_rate_hz);
}

void DemoDuo::start_stop() noexcept {
    const double fs = cfg_.sample_rate_hz;
    std::uniform_real_distribution<double> u(0.0, 1.0);
    const bool scripted = !cfg_.script.empty();
    if (scripted && index_ >= cfg_.script.size()) {  // the script is over: silence from here
        next_ = INT64_MAX;
        return;
    }
    truth_.stop_index = static_cast<int>(scripted ? index_ : index_ % cfg_.interval_cents.size());
    interval_cents_ =
        scripted ? cfg_.script[index_].target_cents : cfg_.interval_cents[static_cast<std::size_t>(truth_.stop_index)];
    double f = cfg_.root_hz;
    while (f < cfg_.low_hz) f *= 2.0;
    while (f >= 2.0 * cfg_.low_hz) f /= 2.0;
    low_hz_ = f;
    // The lower string is tuned to the drone (within a cent); the stopped
    // upper note lands 6 .. 16 cents off and is corrected to within 1.5 cents.
    low_dev_cents_ = (u(rng_) - 0.5) * 2.0;
    const double sign = u(rng_) < 0.5 ? -1.0 : 1.0;
    start_dev_cents_ = sign * (6.0 + 10.0 * u(rng_));
    final_dev_cents_ = (u(rng_) - 0.5) * 3.0;
    start_ = next_;
    if (scripted) {
        end_ = start_ + static_cast<std::int64_t>(cfg_.script[index_].dur_s * fs);
        next_ = index_ + 1 < cfg_.script.size()
                    ? std::max(end_, static_cast<std::int64_t>(cfg_.script[index_ + 1].start_s * fs))
                    : INT64_MAX;
    } else {
        end_ = start_ + static_cast<std::int64_t>(cfg_.stop_s * fs);
        next_ = end_ + static_cast<std::int64_t>(cfg_.lift_s * fs);
    }
    ++index_;
    low_.set_f0(low_hz_ * std::exp2(low_dev_cents_ / 1200.0), true);
    high_.set_f0(low_hz_ * std::exp2((low_dev_cents_ + interval_cents_ + start_dev_cents_) / 1200.0), true);
    low_.set_level(gain_, false);
    high_.set_level(gain_ * std::pow(10.0, cfg_.upper_db / 20.0), false);
}

void DemoDuo::render(std::span<float> out) noexcept {
    const double fs = cfg_.sample_rate_hz;
    std::normal_distribution<double> gauss(0.0, 1.0);
    render_in_blocks(out, [&](std::size_t i, std::size_t len) {
        if (pos_ >= next_) start_stop();
        const bool in_stop = pos_ >= start_ && pos_ < end_;
        const double t = static_cast<double>(pos_ + static_cast<std::int64_t>(len) - start_) / fs;
        // Two bow strokes per double stop: the level dips at the change.
        const double half = 0.5 * static_cast<double>(end_ - start_) / fs;
        const bool at_change = in_stop && std::fabs(t - half) < 0.5 * kBowChangeDipS;
        const double want = !in_stop ? 0.0 : at_change ? 0.35 : 1.0;
        if (std::fabs(low_.level() - want * gain_) > 1e-9 && !low_.ramping()) {
            low_.set_level(want * gain_, false);
            high_.set_level(want * gain_ * std::pow(10.0, cfg_.upper_db / 20.0), false);
        }
        const double dev =
            final_dev_cents_ + (start_dev_cents_ - final_dev_cents_) * std::exp(-std::max(0.0, t) / kCorrectS);
        if (in_stop) high_.glide_f0(low_hz_ * std::exp2((low_dev_cents_ + interval_cents_ + dev) / 1200.0), len);
        low_.render_add(out.subspan(i, len));
        high_.render_add(out.subspan(i, len));
        // Bow noise: low-passed white noise following the bow's level, louder at a change.
        const double level = low_.level() / gain_;
        const double nr = noise_rms_ * level * (at_change ? 4.0 : 1.0) * 2.0;
        for (std::size_t j = i; j < i + len; ++j) {
            noise_lp_ = 0.7 * noise_lp_ + 0.3 * gauss(rng_);
            out[j] += static_cast<float>(nr * noise_lp_);
        }
        truth_.sounding = in_stop;
        truth_.f_low_hz = in_stop ? low_hz_ * std::exp2(low_dev_cents_ / 1200.0) : 0.0;
        truth_.f_high_hz = in_stop ? low_hz_ * std::exp2((low_dev_cents_ + interval_cents_ + dev) / 1200.0) : 0.0;
        truth_.interval_cents = interval_cents_;
        truth_.dev_cents = in_stop ? dev : 0.0;
        pos_ += static_cast<std::int64_t>(len);
    });
}

}  // namespace beatless::audio
