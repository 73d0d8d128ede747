// Simulated listener — see listener_model.h.
#include "ui/session/listener_model.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <charconv>
#include <cmath>

namespace beatless::ui {

using pitch::format_trimmed;

namespace {

double normal_cdf(double x) { return 0.5 * std::erfc(-x / std::sqrt(2.0)); }

// The edges of the answer regions of target i: halfway to its neighbours in pitch.
void region(const std::vector<double>& c, std::size_t i, double& lo, double& hi) {
    lo = -INFINITY;
    hi = INFINITY;
    for (std::size_t k = 0; k < c.size(); ++k) {
        if (k == i) continue;
        const double mid = 0.5 * (c[k] + c[i]);
        if (c[k] < c[i])
            lo = std::max(lo, mid);
        else if (c[k] > c[i])
            hi = std::min(hi, mid);
    }
}

}  // namespace

double normal_quantile(double p) {
    // P. J. Acklam's coefficients (2003, widely reprinted), then one Newton step.
    static const double a[] = {-3.969683028665376e+01, 2.209460984245205e+02,  -2.759285104469687e+02,
                               1.383577518672690e+02,  -3.066479806614716e+01, 2.506628277459239e+00};
    static const double b[] = {-5.447609879822406e+01, 1.615858368580409e+02, -1.556989798598866e+02,
                               6.680131188771972e+01, -1.328068155288572e+01};
    static const double c[] = {-7.784894002430293e-03, -3.223964580411365e-01, -2.400758277161838e+00,
                               -2.549732539343734e+00, 4.374664141464968e+00,  2.938163982698783e+00};
    static const double d[] = {7.784695709041462e-03, 3.224671290700398e-01, 2.445134137142996e+00,
                               3.754408661907416e+00};
    if (!(p > 0.0 && p < 1.0)) return p == 0.0 ? -INFINITY : p == 1.0 ? INFINITY : NAN;
    double x;
    if (p < 0.02425) {
        const double q = std::sqrt(-2.0 * std::log(p));
        x = (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
            ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1.0);
    } else if (p > 1.0 - 0.02425) {
        const double q = std::sqrt(-2.0 * std::log(1.0 - p));
        x = -(((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
            ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1.0);
    } else {
        const double q = p - 0.5, r = q * q;
        x = (((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q /
            (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1.0);
    }
    const double e = normal_cdf(x) - p;
    const double u = e * std::sqrt(2.0 * M_PI) * std::exp(0.5 * x * x);
    return x - u / (1.0 + 0.5 * x * u);  // Halley's step
}

SimulatedListener::SimulatedListener(const ListenerConfig& c) : cfg_(c), rng_(c.seed) {
    if (c.kind != ListenerKind::model) {
        cfg_.lapse = 0.0;
        return;
    }
    if (!(c.threshold_cents > 0.0 && c.threshold_cents <= 1200.0))
        throw Error("simulated listener: threshold " + format_trimmed(c.threshold_cents, 3) +
                    " cents is out of range (above 0, at most 1200)");
    if (!(c.lapse >= 0.0 && c.lapse <= 0.1))
        throw Error("simulated listener: lapse rate " + format_trimmed(c.lapse, 4) + " must lie between 0 and 0.1");
    if (!(c.threshold_p > 0.5 && c.threshold_p < 1.0 - c.lapse))
        throw Error("simulated listener: threshold_p " + format_trimmed(c.threshold_p, 4) +
                    " must lie between 0.5 and 1 - lapse");
    if (!(c.slope > 0.0 && c.slope <= 20.0))
        throw Error("simulated listener: slope " + format_trimmed(c.slope, 3) + " is out of range (0 to 20)");
    const double f = (c.threshold_p - 0.5) / (0.5 - c.lapse);  // F(T)
    alpha_ = c.threshold_cents / std::pow(-std::log(1.0 - f), 1.0 / c.slope);
    sigma_ = c.threshold_cents / (std::sqrt(2.0) * normal_quantile(c.threshold_p));
}

double SimulatedListener::p_correct(double d) const noexcept {
    if (cfg_.kind == ListenerKind::perfect) return 1.0;
    if (cfg_.kind == ListenerKind::guess || !(d > 0.0)) return 0.5;
    return 0.5 + (0.5 - cfg_.lapse) * (1.0 - std::exp(-std::pow(d / alpha_, cfg_.slope)));
}

bool SimulatedListener::answers_right(double d) noexcept { return rng_.uniform() < p_correct(d); }

std::size_t SimulatedListener::identify(const std::vector<double>& cents, std::size_t played) noexcept {
    const std::size_t n = cents.size();
    if (n == 0) return 0;
    if (cfg_.kind == ListenerKind::perfect) return played;
    if (cfg_.kind == ListenerKind::guess || rng_.uniform() < cfg_.lapse) return static_cast<std::size_t>(rng_.below(n));
    // Box-Muller from two uniforms (the first kept away from 0).
    const double u1 = 1.0 - rng_.uniform(), u2 = rng_.uniform();
    const double heard = cents[played] + sigma_ * std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * M_PI * u2);
    std::size_t best = played;
    for (std::size_t k = 0; k < n; ++k)
        if (std::fabs(cents[k] - heard) < std::fabs(cents[best] - heard)) best = k;
    return best;
}

ListenerConfig parse_listener(const std::string& text, std::uint64_t seed) {
    ListenerConfig c;
    c.seed = seed;
    if (text == "perfect")
        c.kind = ListenerKind::perfect;
    else if (text == "guess")
        c.kind = ListenerKind::guess;
    else {
        double v = NAN;
        const auto r = std::from_chars(text.data(), text.data() + text.size(), v);
        if (r.ec != std::errc() || r.ptr != text.data() + text.size()) v = NAN;
        if (!(v > 0.0 && v <= 1200.0))
            throw Error("--listener " + pitch::quote(text) +
                        ": must be perfect, guess or a threshold in cents (above 0, at most 1200)");
        c.threshold_cents = v;
    }
    SimulatedListener check(c);
    return c;
}

int SimulatedListener::answer(const EarQuestion& q, const std::vector<double>& cents) noexcept {
    if (q.task == EarTask::identify) return static_cast<int>(identify(cents, q.target));
    return answers_right(q.level_cents) ? q.correct_answer : 1 - q.correct_answer;
}

std::vector<std::vector<double>> identification_probabilities(const std::vector<double>& c, double sigma, double lapse,
                                                              ListenerKind kind) {
    const std::size_t n = c.size();
    std::vector<std::vector<double>> p(n, std::vector<double>(n, 0.0));
    for (std::size_t i = 0; i < n; ++i)
        for (std::size_t j = 0; j < n; ++j) {
            if (kind == ListenerKind::guess) {
                p[i][j] = 1.0 / static_cast<double>(n);
                continue;
            }
            double lo, hi;
            region(c, j, lo, hi);
            const double hit = kind == ListenerKind::perfect || sigma <= 0.0
                                   ? (i == j ? 1.0 : 0.0)
                                   : normal_cdf((hi - c[i]) / sigma) - normal_cdf((lo - c[i]) / sigma);
            p[i][j] = (1.0 - lapse) * hit + lapse / static_cast<double>(n);
        }
    return p;
}

}  // namespace beatless::ui
