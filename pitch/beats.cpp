#include "pitch/beats.h"

#include <algorithm>
#include <cmath>
#include <numeric>

namespace beatless::pitch {

PartialPair coinciding_pair(double f_a_hz, double f_b_hz, const Ratio& target) {
    PartialPair p;
    // f_b / f_a = num/den  =>  den * f_b = num * f_a.
    p.partial_a = static_cast<int>(std::min<std::int64_t>(target.num, 1 << 30));
    p.partial_b = static_cast<int>(std::min<std::int64_t>(target.den, 1 << 30));
    p.freq_a_hz = static_cast<double>(target.num) * f_a_hz;
    p.freq_b_hz = static_cast<double>(target.den) * f_b_hz;
    p.beat_hz = std::fabs(p.freq_a_hz - p.freq_b_hz);
    return p;
}

std::vector<PartialPair> near_pairs(double f_a_hz, double f_b_hz, int max_harmonic, double within_hz) {
    std::vector<PartialPair> out;
    for (int m = 1; m <= max_harmonic; ++m) {
        for (int n = 1; n <= max_harmonic; ++n) {
            const double fa = m * f_a_hz;
            const double fb = n * f_b_hz;
            if (std::fabs(fa - fb) <= within_hz) out.push_back({m, n, fa, fb, std::fabs(fa - fb)});
        }
    }
    std::stable_sort(out.begin(), out.end(), [](const PartialPair& x, const PartialPair& y) {
        return x.partial_a + x.partial_b < y.partial_a + y.partial_b;
    });
    return out;
}

double beat_rate_at(double f_a_hz, const Ratio& target, double dev_cents) {
    return static_cast<double>(target.num) * f_a_hz * std::fabs(std::exp2(dev_cents / 1200.0) - 1.0);
}

Ratio nearest_simple_ratio(double cents, int max_term) {
    Ratio best{1, 1};
    double best_err = INFINITY;
    for (std::int64_t p = 1; p <= max_term; ++p) {
        for (std::int64_t q = 1; q <= max_term; ++q) {
            if (std::gcd(p, q) != 1) continue;
            const Ratio r{p, q};
            const double err = std::fabs(r.cents() - cents);
            const bool better = err < best_err - 1e-9 ||
                                (std::fabs(err - best_err) <= 1e-9 && p * q < best.num * best.den);
            if (better) {
                best = r;
                best_err = err;
            }
        }
    }
    return best;
}

Ratio beating_ratio(const Interval& target, int octaves, int max_term) noexcept {
    std::int64_t num = 1, den = 1;
    if (target.is_ratio()) {
        num = target.ratio().num;
        den = target.ratio().den;
    } else {
        const double oct = std::floor(target.cents() / 1200.0);
        const Ratio r = nearest_simple_ratio(target.cents() - 1200.0 * oct, max_term);
        num = r.num;
        den = r.den;
        octaves += static_cast<int>(oct);
    }
    constexpr std::int64_t kLimit = std::int64_t{1} << 40;
    for (int k = 0; k < octaves && num < kLimit; ++k) num *= 2;
    for (int k = 0; k > octaves && den < kLimit; --k) den *= 2;
    const std::int64_t g = std::gcd(num, den);
    return Ratio{num / g, den / g};
}

BeatBand beat_band(double beat_hz, const BeatBands& bands) noexcept {
    if (!std::isfinite(beat_hz) || beat_hz < 0.0) return BeatBand::none;
    if (beat_hz < bands.still_below_hz) return BeatBand::still;
    if (beat_hz < bands.countable_below_hz) return BeatBand::countable;
    if (beat_hz <= bands.rough_above_hz) return BeatBand::flutter;
    return BeatBand::rough;
}

}  // namespace beatless::pitch
