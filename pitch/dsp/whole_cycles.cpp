#include "pitch/dsp/whole_cycles.h"

#include <algorithm>
#include <cmath>

namespace beatless::pitch {

void mean_and_spread(const double* x, std::size_t n, double& mean, double& spread) noexcept {
    mean = NAN;
    spread = NAN;
    if (n == 0) return;
    double s = 0.0;
    for (std::size_t i = 0; i < n; ++i) s += x[i];
    mean = s / static_cast<double>(n);
    double v = 0.0;
    for (std::size_t i = 0; i < n; ++i) v += (x[i] - mean) * (x[i] - mean);
    spread = std::sqrt(v / static_cast<double>(n));
}

double interpolated_mean(const double* t, const double* x, std::size_t n, double t0, double t1) noexcept {
    if (n == 0) return NAN;
    if (n == 1 || t1 <= t0) return x[0];
    t0 = std::max(t0, t[0]);
    t1 = std::min(t1, t[n - 1]);
    if (t1 <= t0) return x[0];
    double area = 0.0;
    for (std::size_t i = 0; i + 1 < n; ++i) {
        const double a = std::max(t[i], t0);
        const double b = std::min(t[i + 1], t1);
        if (b <= a) continue;
        const double dt = t[i + 1] - t[i];
        const double xa = x[i] + (x[i + 1] - x[i]) * (a - t[i]) / dt;
        const double xb = x[i] + (x[i + 1] - x[i]) * (b - t[i]) / dt;
        area += 0.5 * (xa + xb) * (b - a);
    }
    return area / (t1 - t0);
}

CycleStats find_cycles(const double* t, const double* x, std::size_t n, const CycleConfig& cfg) noexcept {
    CycleStats out;
    if (n < 4) return out;

    // (1) The level to cross: the mean, or the least-squares line.
    double tm = 0.0, xm = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        tm += t[i];
        xm += x[i];
    }
    tm /= static_cast<double>(n);
    xm /= static_cast<double>(n);
    double stt = 0.0, stx = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        stt += (t[i] - tm) * (t[i] - tm);
        stx += (t[i] - tm) * (x[i] - xm);
    }
    const double slope = cfg.detrend && stt > 0.0 ? stx / stt : 0.0;
    auto resid = [&](std::size_t i) { return x[i] - (xm + slope * (t[i] - tm)); };

    double ss = 0.0;
    for (std::size_t i = 0; i < n; ++i) ss += resid(i) * resid(i);
    const double rms = std::sqrt(ss / static_cast<double>(n));
    const double h = std::max(cfg.hysteresis_abs, cfg.hysteresis_rel * rms);

    const double min_period = 1.0 / cfg.max_rate_hz;
    const double max_period = 1.0 / cfg.min_rate_hz;

    // (2)+(3) Upward crossings with hysteresis; keep the latest consistent run.
    bool armed = false;
    double prev_cross = NAN;
    double run_first = NAN, run_last = NAN;
    int run_cycles = 0;
    double run_min_p = INFINITY, run_max_p = 0.0;
    double run_swing = 0.0;                        // summed peak-to-peak of the run's cycles
    double cyc_lo = INFINITY, cyc_hi = -INFINITY;  // extremes since the last crossing
    for (std::size_t i = 0; i < n; ++i) {
        const double r = resid(i);
        cyc_lo = std::min(cyc_lo, r);
        cyc_hi = std::max(cyc_hi, r);
        if (r <= -h) armed = true;
        if (!(armed && r >= h && i > 0)) continue;
        armed = false;
        std::size_t j = i - 1;
        while (j > 0 && resid(j) >= 0.0) --j;
        const double rj = resid(j), rk = resid(j + 1);
        double tc = t[j];
        if (rk != rj) tc = t[j] + (0.0 - rj) / (rk - rj) * (t[j + 1] - t[j]);
        tc = std::clamp(tc, t[j], t[j + 1]);
        if (!std::isnan(prev_cross)) {
            const double p = tc - prev_cross;
            const double lo = std::min(run_min_p, p), hi = std::max(run_max_p, p);
            const bool in_range = p >= min_period && p <= max_period;
            if (in_range && (run_cycles == 0 || hi <= cfg.max_period_ratio * lo)) {
                if (run_cycles == 0) run_first = prev_cross;
                run_last = tc;
                ++run_cycles;
                run_min_p = lo;
                run_max_p = hi;
                run_swing += cyc_hi - cyc_lo;
            } else if (in_range) {
                run_first = prev_cross;  // restart the run with this one period
                run_last = tc;
                run_cycles = 1;
                run_min_p = run_max_p = p;
                run_swing = cyc_hi - cyc_lo;
            } else {
                run_cycles = 0;
                run_min_p = INFINITY;
                run_max_p = 0.0;
                run_swing = 0.0;
            }
        }
        prev_cross = tc;
        cyc_lo = INFINITY;
        cyc_hi = -INFINITY;
    }
    if (run_cycles < 1) {
        out.mean = xm;
        return out;
    }
    out.found = true;
    out.cycles = run_cycles;
    out.t_first_s = run_first;
    out.t_last_s = run_last;
    out.rate_hz = run_cycles / (run_last - run_first);
    out.mean = interpolated_mean(t, x, n, run_first, run_last);
    out.depth = 0.5 * run_swing / run_cycles;
    return out;
}

namespace {
// The slope at t[at] of the track through samples [a, b) (at one of the ends): the line through two samples, the
// parabola through three (its derivative at the end: exact for a quadratic, where a line's slope belongs to the middle
// of its samples and overshoots near a crest).
double edge_slope(const double* t, const double* x, std::size_t a, std::size_t b, std::size_t at) noexcept {
    if (b - a == 2) return (x[a + 1] - x[a]) / (t[a + 1] - t[a]);
    // Lagrange's parabola through (t0, x0), (t1, x1), (t2, x2), differentiated at t[at].
    const double t0 = t[a], t1 = t[a + 1], t2 = t[a + 2], u = t[at];
    return x[a] * ((u - t1) + (u - t2)) / ((t0 - t1) * (t0 - t2)) +
           x[a + 1] * ((u - t0) + (u - t2)) / ((t1 - t0) * (t1 - t2)) +
           x[a + 2] * ((u - t0) + (u - t1)) / ((t2 - t0) * (t2 - t1));
}
}  // namespace

double dropout_bias(const double* t, const double* x, std::size_t n, double t0, double t1, double max_step) noexcept {
    constexpr std::size_t kSide = 3;  // samples each side's slope is fitted to
    if (n < 2 || !(t1 > t0)) return 0.0;
    double sum = 0.0;
    for (std::size_t i = 1; i < n; ++i) {
        const double g = t[i] - t[i - 1];
        if (!(g > max_step) || t[i - 1] < t0 || t[i] > t1) continue;
        const double chord = (x[i] - x[i - 1]) / g;
        // The runs of samples on each side, up to kSide, not across another gap.
        std::size_t a = i - 1;
        while (a > 0 && i - a < kSide && t[a] - t[a - 1] <= max_step) --a;
        std::size_t b = i + 1;
        while (b < n && b - i < kSide && t[b] - t[b - 1] <= max_step) ++b;
        const double s0 = i - a >= 2 ? edge_slope(t, x, a, i, i - 1) : chord;
        const double s1 = b - i >= 2 ? edge_slope(t, x, i, b, i) : chord;
        sum += g * g * (s0 - s1) / 12.0;
    }
    return sum / (t1 - t0);
}

}  // namespace beatless::pitch
