#include "pitch/theory/beats.h"

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
            const bool better =
                err < best_err - 1e-9 || (std::fabs(err - best_err) <= 1e-9 && p * q < best.num * best.den);
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

namespace {}  // namespace

bool shift_by_octaves(std::int64_t& p, std::int64_t& q, int octaves) noexcept {
    constexpr std::int64_t kLimit = std::int64_t{1} << 40;
    for (int k = 0; k < octaves; ++k) {
        if (q % 2 == 0)
            q /= 2;
        else
            p *= 2;
        if (p > kLimit) return false;
    }
    for (int k = 0; k > octaves; --k) {
        if (p % 2 == 0)
            p /= 2;
        else
            q *= 2;
        if (q > kLimit) return false;
    }
    return true;
}

namespace {

bool present(std::int64_t p, std::int64_t q, double f_a_hz, const AudibleRange& range) noexcept {
    return p >= 1 && q >= 1 && p <= range.partials_a && q <= range.partials_b &&
           static_cast<double>(p) * f_a_hz <= range.max_freq_hz;
}

}  // namespace

AudiblePair audible_pair(double f_a_hz, double f_b_hz, double target_cents, std::optional<Ratio> own,
                         const AudibleRange& range) noexcept {
    AudiblePair out;
    if (!(f_a_hz > 0.0) || !std::isfinite(target_cents)) return out;
    std::int64_t p = 0, q = 0;
    if (own && present(own->num, own->den, f_a_hz, range)) {
        p = own->num;
        q = own->den;
        out.own = true;
    } else {
        const double octaves = std::floor(target_cents / 1200.0);
        const double within_cents = target_cents - 1200.0 * octaves;
        double best_apart = range.max_apart_cents;
        std::int64_t best_product = 0;
        for (std::int64_t a = 1; a <= range.simple_max_term; ++a) {
            for (std::int64_t b = 1; b <= range.simple_max_term; ++b) {
                if (std::gcd(a, b) != 1) continue;
                const double apart =
                    std::fabs(1200.0 * std::log2(static_cast<double>(a) / static_cast<double>(b)) - within_cents);
                if (apart > best_apart + 1e-9) continue;
                if (std::fabs(apart - best_apart) <= 1e-9 && best_product != 0 && a * b >= best_product) continue;
                std::int64_t sp = a, sq = b;
                if (!shift_by_octaves(sp, sq, static_cast<int>(octaves)) || !present(sp, sq, f_a_hz, range)) continue;
                best_apart = apart;
                best_product = a * b;
                p = sp;
                q = sq;
            }
        }
        if (best_product == 0) return out;
        if (own && own->num == p && own->den == q) out.own = true;
    }
    out.found = true;
    out.partial_a = static_cast<int>(p);
    out.partial_b = static_cast<int>(q);
    out.meet_hz = static_cast<double>(p) * f_a_hz;
    const double on_target_hz = f_a_hz * std::exp2(target_cents / 1200.0);
    if (f_b_hz > 0.0) out.beat_hz = std::fabs(static_cast<double>(q) * f_b_hz - out.meet_hz);
    out.beat_at_target_hz = out.own ? 0.0 : std::fabs(static_cast<double>(q) * on_target_hz - out.meet_hz);
    return out;
}

AudiblePair audible_pair_of_target(double f_a_hz, double f_b_hz, const Interval& target, int octaves,
                                   double target_cents, const AudibleRange& range) noexcept {
    std::optional<Ratio> own;
    if (target.is_ratio()) own = beating_ratio(target, octaves);
    return audible_pair(f_a_hz, f_b_hz, target_cents, own, range);
}

BeatBand beat_band(double beat_hz, const BeatBands& bands) noexcept {
    if (!std::isfinite(beat_hz) || beat_hz < 0.0) return BeatBand::none;
    if (beat_hz < bands.still_below_hz) return BeatBand::still;
    if (beat_hz < bands.countable_below_hz) return BeatBand::countable;
    if (beat_hz <= bands.rough_above_hz) return BeatBand::flutter;
    return BeatBand::rough;
}

}  // namespace beatless::pitch
