// Lag refinement (internal): the minimum of the difference function near a
// multiple of the period, located far below one sample.
//
// The method is ours. For a periodic signal of period T, d(tau) =
// sum_n w[n] (x[n] - x[n + tau])^2 is exactly zero at tau = K T for every K,
// so measuring the lag near K T and dividing by K divides any interpolation
// error by K, while the variance in white noise stays close to the
// Cramer-Rao bound when K T is about 2/3 of the span (the window w the rest).
// Steps: (1) d at the integer lags j0 - S - M .. j0 + S + M directly (the
// difference form, no cancellation; w a biweight (1 - u^2)^2, smooth so the
// energy terms of d have no fast ripple); (2) the integer minimum within
// j0 +- S (re-centred once if it lies outside); (3) Newton's method on the
// derivative of d interpolated by a smooth, symmetric kernel (a Gaussian,
// sigma = 1 lag, tapered to +-M lags and normalised to sum to one at every
// offset). A symmetric kernel leaves a symmetric minimum where it is, and it
// damps the fast noise-times-noise part of d.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::pitch {

class LagRefiner {
public:
    static constexpr int kKernelHalf = 4;   // M: kernel support +-M lags
    static constexpr int kSearch = 2;       // S: integer search radius around the prediction
    static constexpr std::size_t kReach = 2 * (kKernelHalf + kSearch) + 8;   // lags past j0 (+ vector padding) it may read

    // Windows up to max_window samples.
    explicit LagRefiner(std::size_t max_window);

    struct Result {
        double lag = 0.0;          // refined lag, samples
        double d_min = 0.0;        // interpolated d at the refined lag
        bool ok = false;           // false: no interior minimum found
    };

    // x: the window's first sample; lags around j0 >= kKernelHalf + 2 kSearch + ... ;
    // x must be readable (and finite) up to x[window + j0 + kReach]. Allocates: no.
    Result refine(const float* x, std::size_t window, std::size_t j0) noexcept;

private:
    void set_window(std::size_t window) noexcept;
    bool newton(const double* d, long first_lag, long j_int, double& tau, double& value) const noexcept;

    std::size_t max_window_;
    std::size_t window_ = 0;
    std::vector<float> w_;          // biweight, zero padded to a multiple of 8
    std::vector<double> d_;         // d at the integer lags searched
};

}  // namespace beatless::pitch
