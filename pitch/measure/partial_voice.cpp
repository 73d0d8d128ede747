// PartialVoice (partial_voice.h).
#include "pitch/measure/partial_voice.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace beatless::pitch {

namespace {
double db_of(double mean_square) { return 10.0 * std::log10(std::max(mean_square, 1e-20)); }
}  // namespace

PartialLevels::PartialLevels(const PartialVoiceConfig& config) : cfg_(config) {
    if (!(cfg_.sample_rate_hz > 0.0) || !(cfg_.drone_hz > 0.0) || !(cfg_.frame_s > 0.0))
        throw Error("PartialLevels: rate, drone and frame must be positive");
    frame_len_ = std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(cfg_.frame_s * cfg_.sample_rate_hz)));
}

void PartialLevels::push(std::span<const float> raw, std::span<const float> combed) {
    const std::size_t n = std::min(raw.size(), combed.size());
    for (std::size_t i = 0; i < n; ++i) {
        raw_sum_ += static_cast<double>(raw[i]) * raw[i];
        comb_sum_ += static_cast<double>(combed[i]) * combed[i];
        if (++filled_ == frame_len_) {
            raw_db_.push_back(static_cast<float>(db_of(raw_sum_ / static_cast<double>(frame_len_))));
            comb_db_.push_back(static_cast<float>(db_of(comb_sum_ / static_cast<double>(frame_len_))));
            raw_sum_ = comb_sum_ = 0.0;
            filled_ = 0;
        }
    }
}

bool PartialLevels::in_busy(std::size_t frame, const std::vector<TimeSpan>& busy) const {
    const double t0 = static_cast<double>(frame) * cfg_.frame_s, t1 = t0 + cfg_.frame_s;
    return std::any_of(busy.begin(), busy.end(), [&](const TimeSpan& b) { return t0 < b.end_s && b.start_s < t1; });
}

double PartialLevels::drone_level_dbfs(const std::vector<TimeSpan>& busy) const {
    std::vector<float> v;
    for (std::size_t i = 0; i < raw_db_.size(); ++i)
        if (raw_db_[i] > cfg_.silence_dbfs && !in_busy(i, busy)) v.push_back(raw_db_[i]);
    if (v.empty()) return NAN;
    const auto k = static_cast<std::size_t>(cfg_.drone_pct * static_cast<double>(v.size() - 1));
    std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
    return v[k];
}

std::vector<PartialVoice> PartialLevels::candidates(const std::vector<TimeSpan>& busy) const {
    std::vector<PartialVoice> out;
    const double drone_db = drone_level_dbfs(busy);
    if (!std::isfinite(drone_db)) return out;
    const std::size_t n = raw_db_.size();
    std::vector<float> rises;
    std::size_t run = 0;
    for (std::size_t i = 0; i <= n; ++i) {
        const bool hit = i < n && !in_busy(i, busy) && raw_db_[i] >= drone_db + cfg_.rise_db &&
                         comb_db_[i] <= raw_db_[i] - cfg_.periodic_db;
        if (hit) {
            rises.push_back(raw_db_[i] - static_cast<float>(drone_db));
            ++run;
            continue;
        }
        if (run > 0 && static_cast<double>(run) * cfg_.frame_s >= cfg_.min_len_s) {
            PartialVoice v;
            v.start_s = static_cast<double>(i - run) * cfg_.frame_s;
            v.end_s = static_cast<double>(i) * cfg_.frame_s;
            std::nth_element(rises.begin(), rises.begin() + static_cast<std::ptrdiff_t>(rises.size() / 2), rises.end());
            v.rise_db = rises[rises.size() / 2];
            out.push_back(v);
        }
        run = 0;
        rises.clear();
    }
    return out;
}

bool PartialLevels::drone_alone(double from_s, double to_s, const std::vector<TimeSpan>& busy) const {
    if (from_s < 0.0) return false;
    const double drone_db = drone_level_dbfs(busy);
    if (!std::isfinite(drone_db)) return false;
    const auto f0 = static_cast<std::size_t>(std::floor(from_s / cfg_.frame_s));
    const auto f1 = static_cast<std::size_t>(std::ceil(to_s / cfg_.frame_s));
    if (f1 > raw_db_.size() || f1 <= f0) return false;
    for (std::size_t i = f0; i < f1; ++i)
        if (in_busy(i, busy) || raw_db_[i] <= cfg_.silence_dbfs ||
            std::fabs(raw_db_[i] - drone_db) > 0.5 * cfg_.rise_db + 3.0)
            return false;
    return true;
}

std::vector<double> partial_amplitudes(std::span<const float> x, double sample_rate_hz, double drone_hz, int count) {
    std::vector<double> out(static_cast<std::size_t>(std::max(count, 0)), 0.0);
    const double period = sample_rate_hz / drone_hz;
    const double periods = std::floor(static_cast<double>(x.size()) / period);
    if (periods < 2.0) return out;
    const auto len = static_cast<std::size_t>(std::lround(periods * period));
    std::vector<double> w(len);
    double wsum = 0.0;
    for (std::size_t i = 0; i < len; ++i) {
        w[i] = 0.5 - 0.5 * std::cos(2.0 * std::numbers::pi * static_cast<double>(i) / static_cast<double>(len));
        wsum += w[i];
    }
    for (int k = 1; k <= count; ++k) {
        const double f = k * drone_hz;
        if (f >= 0.45 * sample_rate_hz) break;
        const double step = 2.0 * std::numbers::pi * f / sample_rate_hz;
        double re = 0.0, im = 0.0;
        for (std::size_t i = 0; i < len; ++i) {
            re += w[i] * x[i] * std::cos(step * static_cast<double>(i));
            im -= w[i] * x[i] * std::sin(step * static_cast<double>(i));
        }
        out[static_cast<std::size_t>(k - 1)] = 2.0 * std::hypot(re, im) / wsum;  // a sine's amplitude
    }
    return out;
}

bool name_partial(PartialVoice& v, std::span<const float> during, std::span<const float> drone_alone,
                  const PartialVoiceConfig& cfg) {
    const std::vector<double> a = partial_amplitudes(during, cfg.sample_rate_hz, cfg.drone_hz, cfg.max_partial);
    const std::vector<double> b = partial_amplitudes(drone_alone, cfg.sample_rate_hz, cfg.drone_hz, cfg.max_partial);
    // A partial the drone barely has counts against the louder of its own level and a floor 40 dB under the drone's
    // strongest partial.
    const double floor = 0.01 * *std::max_element(b.begin(), b.end());
    std::vector<double> rise(a.size(), NAN);
    std::vector<double> seen;
    for (std::size_t k = 0; k < a.size(); ++k)
        if (a[k] > 0.0) seen.push_back(rise[k] = 20.0 * std::log10(a[k] / std::max(b[k], floor)));
    if (seen.empty()) return false;
    // The drone's own swell lifts every partial alike: a partial counts by how far it stands above the median rise.
    std::nth_element(seen.begin(), seen.begin() + static_cast<std::ptrdiff_t>(seen.size() / 2), seen.end());
    const double common = std::max(0.0, seen[seen.size() / 2]);
    for (std::size_t k = 0; k < a.size(); ++k) {
        if (!(rise[k] - common >= cfg.partial_db)) continue;
        v.partial = static_cast<int>(k + 1);
        v.f_hz = v.partial * cfg.drone_hz;
        v.partial_rise_db = rise[k];
        return true;
    }
    return false;
}

}  // namespace beatless::pitch
