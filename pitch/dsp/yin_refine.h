// LagRefiner (internal) — the minimum of the difference function near a multiple of the period, far below one sample.
// Method: ours: measure the lag near K periods and divide by K (the interpolation error is divided by K); Newton's
// method on d interpolated by a tapered Gaussian kernel. Steps and reasoning: DEVELOPERS.md, "Methods in detail".
// Thread: one at a time (the tracker's). Allocates: in the constructor only.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::pitch {

class LagRefiner {
public:
    struct Kernel;                         // the tabulated interpolation kernel (yin_refine.cpp)
    // M: the kernels' support, +-M lags. The wide kernel's Gaussian (sigma 2) is cut by its taper at +-4 as the
    // narrow one's: a +-8 support (and the longer margins and lookahead it needs) gained a little more on low strings
    // in noise (10 dB p95 1.23 c against 1.51 c) but read a vibrato voice sung on a drone's third partial 4 c flat.
    static constexpr int kKernelHalf = 4;
    static constexpr int kSearch = 2;      // S: integer search radius around the prediction
    static constexpr std::size_t kReach =
        2 * (kKernelHalf + kSearch) + 8;  // lags past j0 (+ vector padding) it may read

    // Windows up to max_window samples. wide_kernel: d is interpolated by a Gaussian of sigma 2 lags (tapered to +-4) instead
    // of 1 (+-4), damping more of d's noise-times-noise part (for the full rate, where a period spans many lags).
    explicit LagRefiner(std::size_t max_window, bool wide_kernel = false);

    struct Result {
        double lag = 0.0;    // refined lag, samples
        double d_min = 0.0;  // interpolated d at the refined lag
        bool ok = false;     // false: no interior minimum found
    };

    // x: the window's first sample; lags around j0 >= kKernelHalf + 2 kSearch + ... ;
    // x must be readable (and finite) up to x[window + j0 + kReach]. Allocates: no.
    // flat: weight the window by vec::flat_window (a steady tone: more of its samples count) instead of the biweight.
    Result refine(const float* x, std::size_t window, std::size_t j0, bool flat = false) noexcept;

private:
    void set_window(std::size_t window, bool flat) noexcept;
    bool newton(const double* d, long first_lag, long j_int, double& tau, double& value) const noexcept;

    std::size_t max_window_;
    const Kernel* tab_;
    int m_;  // the kernel's half support, lags
    std::size_t window_ = 0;
    bool flat_ = false;
    std::vector<float> w_;   // biweight or flat-topped window, zero padded to a multiple of 8
    std::vector<double> d_;  // d at the integer lags searched
};

}  // namespace beatless::pitch
