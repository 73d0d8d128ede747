// Threshold fit — see threshold_fit.h.
#include "ui/session/threshold_fit.h"

#include <algorithm>
#include <map>

namespace beatless::ui {

namespace {
constexpr int kGrid = 721;           // log grid points
constexpr double kGridBelow = 16.0;  // the grid reaches min_cents / 16 ...
constexpr double kGridAbove = 16.0;  // ... and max_cents * 16
}  // namespace

double fit_p_correct(const FitConfig& c, double t, double d) {
    if (!(d > 0.0)) return c.guess;
    const double f_t = (c.threshold_p - c.guess) / (1.0 - c.guess - c.lapse);  // F at the threshold
    const double alpha = t / std::pow(-std::log(1.0 - f_t), 1.0 / c.slope);
    return c.guess + (1.0 - c.guess - c.lapse) * (1.0 - std::exp(-std::pow(d / alpha, c.slope)));
}

ThresholdEstimate fit_threshold(const std::vector<LevelAnswer>& answers, const FitConfig& c) {
    ThresholdEstimate out;
    out.trials = static_cast<int>(answers.size());
    if (answers.empty()) return out;
    // Binomial counts per level (a staircase repeats its levels).
    std::map<double, std::pair<int, int>> at;  // level -> (right, wrong)
    double smallest = INFINITY;
    for (const LevelAnswer& a : answers) {
        auto& n = at[a.level_cents];
        (a.correct ? n.first : n.second) += 1;
        smallest = std::min(smallest, a.level_cents);
    }
    const double g0 = std::log(c.min_cents / kGridBelow), g1 = std::log(c.max_cents * kGridAbove);
    std::vector<double> ll(kGrid);
    int best = 0;
    for (int k = 0; k < kGrid; ++k) {
        const double t = std::exp(g0 + (g1 - g0) * k / (kGrid - 1));
        double s = 0.0;
        for (const auto& [d, n] : at) {
            const double p = std::clamp(fit_p_correct(c, t, d), 1e-12, 1.0 - 1e-12);
            s += n.first * std::log(p) + n.second * std::log(1.0 - p);
        }
        ll[static_cast<std::size_t>(k)] = s;
        if (s > ll[static_cast<std::size_t>(best)]) best = k;
    }
    const double cut = ll[static_cast<std::size_t>(best)] - 0.5 * c.chi2_crit;
    int lo = best, hi = best;
    while (lo > 0 && ll[static_cast<std::size_t>(lo - 1)] >= cut) --lo;
    while (hi < kGrid - 1 && ll[static_cast<std::size_t>(hi + 1)] >= cut) ++hi;
    auto t_of = [&](int k) { return std::exp(g0 + (g1 - g0) * k / (kGrid - 1)); };
    const double t_best = t_of(best);
    const double t_hi = hi == kGrid - 1 ? INFINITY : t_of(hi);
    if (!(t_hi <= c.max_cents)) return out;  // not bounded above within the drill's levels: none
    if (t_best < smallest) {
        out.verdict = ThresholdVerdict::finer;
        out.smallest_cents = smallest;
        return out;
    }
    out.verdict = ThresholdVerdict::measured;
    out.threshold_cents = t_best;
    out.lo_cents = lo == 0 ? 0.0 : t_of(lo);
    out.hi_cents = t_hi;
    return out;
}

}  // namespace beatless::ui
