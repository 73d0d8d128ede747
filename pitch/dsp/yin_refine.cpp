#include "pitch/dsp/yin_refine.h"

#include "pitch/dsp/vec_ops.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>
#include <vector>

namespace beatless::pitch {

namespace {
constexpr int kQ = 256;  // table points per lag
}  // namespace

// Kernel h(t) and its derivatives h'(t), h''(t), normalised, tabulated over t = -M .. M.
struct LagRefiner::Kernel {
    int m = 0;
    int size = 0;  // 2 M Q + 1 points
    std::vector<double> d1, d2, h;

    // Unnormalised g and its derivatives at t (|t| <= M).
    static void raw(double t, int m, double sigma, double& g, double& g1, double& g2) {
        if (std::fabs(t) >= m) {
            g = g1 = g2 = 0.0;
            return;
        }
        const double s2 = sigma * sigma;
        const double e = std::exp(-t * t / (2.0 * s2)), e1 = -t / s2 * e, e2 = (t * t / (s2 * s2) - 1.0 / s2) * e;
        const double a = std::numbers::pi / (2.0 * m);
        const double c = 0.5 * (1.0 + std::cos(2.0 * a * t)), c1 = -a * std::sin(2.0 * a * t),
                     c2 = -2.0 * a * a * std::cos(2.0 * a * t);
        g = e * c;
        g1 = e1 * c + e * c1;
        g2 = e2 * c + 2.0 * e1 * c1 + e * c2;
    }

    Kernel(int half, double sigma) : m(half), size(2 * half * kQ + 1) {
        const auto n = static_cast<std::size_t>(size + 1);
        d1.assign(n, 0.0);
        d2.assign(n, 0.0);
        h.assign(n, 0.0);
        // g and its derivatives at every table point t_i = -M + i / Q, once: t_i - j is the table point i - j Q
        // (exact in binary, Q a power of two), and g is 0 outside the table.
        std::vector<std::array<double, 3>> raws(n);
        for (int i = 0; i <= size; ++i) {
            auto& r = raws[static_cast<std::size_t>(i)];
            raw(-m + static_cast<double>(i) / kQ, m, sigma, r[0], r[1], r[2]);
        }
        for (int i = 0; i <= size; ++i) {
            const auto& [g, g1, g2] = raws[static_cast<std::size_t>(i)];
            // Partition of unity: S(t) = sum_j g(t - j).
            double s = 0.0, s1 = 0.0, s2 = 0.0;
            for (int j = -m - 1; j <= m + 1; ++j) {
                const int k = i - j * kQ;
                if (k < 0 || k > size) continue;
                const auto& a = raws[static_cast<std::size_t>(k)];
                s += a[0];
                s1 += a[1];
                s2 += a[2];
            }
            h[static_cast<std::size_t>(i)] = g / s;
            d1[static_cast<std::size_t>(i)] = (g1 * s - g * s1) / (s * s);
            d2[static_cast<std::size_t>(i)] =
                g2 / s - 2.0 * g1 * s1 / (s * s) - g * s2 / (s * s) + 2.0 * g * s1 * s1 / (s * s * s);
        }
    }

    double lookup(const std::vector<double>& tab, double t) const noexcept {
        const double u = (t + m) * kQ;
        if (u <= 0.0 || u >= size) return 0.0;
        const auto i = static_cast<std::size_t>(u);
        const double f = u - static_cast<double>(i);
        return tab[i] + f * (tab[i + 1] - tab[i]);
    }
};

namespace {

constexpr int kS = LagRefiner::kSearch;

// The narrow kernel (sigma 1 lag, +-4 lags) and the wide one (sigma 2 lags, tapered to +-4 lags).
const LagRefiner::Kernel& tables(bool wide) {
    static const LagRefiner::Kernel narrow(LagRefiner::kKernelHalf, 1.0), broad(LagRefiner::kKernelHalf, 2.0);
    return wide ? broad : narrow;
}

}  // namespace

LagRefiner::LagRefiner(std::size_t max_window, bool wide_kernel)
    : max_window_(max_window), tab_(&tables(wide_kernel)), m_(tab_->m) {
    w_.assign(max_window_ + vec::kLanes, 0.0f);
    d_.assign(2 * (m_ + kS) + 1, 0.0);
}

void LagRefiner::set_window(std::size_t window, bool flat) noexcept {
    if (window == window_ && flat == flat_) return;
    window_ = window;
    flat_ = flat;
    if (flat)
        vec::flat_window(w_.data(), window);
    else
        vec::biweight(w_.data(), window);
    // refine() reads the window padded to a multiple of vec::kLanes: only that much needs zeros.
    const std::size_t padded = (window + vec::kLanes - 1) / vec::kLanes * vec::kLanes;
    std::fill(w_.begin() + static_cast<std::ptrdiff_t>(window), w_.begin() + static_cast<std::ptrdiff_t>(padded), 0.0f);
}

bool LagRefiner::newton(const double* d, long first_lag, long j_int, double& tau, double& value) const noexcept {
    const Kernel& tab = *tab_;
    const long n = 2 * (m_ + kS) + 1;
    tau = static_cast<double>(j_int);
    for (int it = 0; it < 12; ++it) {
        double g1 = 0.0, g2 = 0.0;
        const long lo = std::max(0L, static_cast<long>(std::floor(tau)) - m_ - first_lag);
        const long hi = std::min(n - 1, static_cast<long>(std::ceil(tau)) + m_ - first_lag);
        for (long k = lo; k <= hi; ++k) {
            const double t = tau - static_cast<double>(first_lag + k);
            g1 += d[k] * tab.lookup(tab.d1, t);
            g2 += d[k] * tab.lookup(tab.d2, t);
        }
        if (!(g2 > 0.0)) return false;
        const double step = std::clamp(g1 / g2, -0.5, 0.5);
        tau -= step;
        if (std::fabs(tau - static_cast<double>(j_int)) > 1.0) return false;
        if (std::fabs(step) < 1e-7) break;
    }
    value = 0.0;
    for (long k = 0; k < n; ++k) value += d[k] * tab.lookup(tab.h, tau - static_cast<double>(first_lag + k));
    return true;
}

LagRefiner::Result LagRefiner::refine(const float* x, std::size_t window, std::size_t j0, bool flat) noexcept {
    Result res;
    window = std::min(window, max_window_);
    if (window < 2 || j0 < static_cast<std::size_t>(2 * (m_ + kS))) return res;
    set_window(window, flat);
    const std::size_t padded = (window + vec::kLanes - 1) / vec::kLanes * vec::kLanes;
    const long n_lags = 2 * (m_ + kS) + 1;
    long centre = static_cast<long>(j0);
    for (int attempt = 0; attempt < 2; ++attempt) {
        const long first = centre - m_ - kS;
        vec::weighted_sq_diff(x, w_.data(), padded, static_cast<std::size_t>(first), static_cast<std::size_t>(n_lags),
                              d_.data());
        const long best = static_cast<long>(std::min_element(d_.begin(), d_.end()) - d_.begin());
        const long j_int = first + best;
        if (std::labs(j_int - centre) > kS) {
            // Outside the search radius: look again around it, once.
            if (attempt == 0 && std::labs(j_int - static_cast<long>(j0)) <= m_ + kS) {
                centre = j_int;
                continue;
            }
            return res;
        }
        res.ok = newton(d_.data(), first, j_int, res.lag, res.d_min);
        return res;
    }
    return res;
}

}  // namespace beatless::pitch
