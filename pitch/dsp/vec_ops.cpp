#include "pitch/dsp/vec_ops.h"

#include <cstring>

// Function multiversioning resolves through ifuncs before any sanitizer
// runtime starts; ThreadSanitizer's instrumented resolver crashes there, so
// a TSan build takes the default code path only.
#if defined(__x86_64__) && !defined(__clang__) && !defined(__SANITIZE_THREAD__)
#define BEATLESS_CLONES __attribute__((target_clones("arch=x86-64-v3", "default")))
#else
#define BEATLESS_CLONES
#endif

namespace beatless::pitch::vec {

// The helpers below pass 32-byte vectors by value. They are always inlined
// (also at -O0), so no call crosses between clones built for different ISAs
// and the ABI note GCC gives for the baseline clone does not apply.
#pragma GCC diagnostic ignored "-Wpsabi"

namespace {
typedef float v8 __attribute__((vector_size(32)));

__attribute__((always_inline)) inline v8 load(const float* p) noexcept {
    v8 v;
    std::memcpy(&v, p, sizeof v);
    return v;
}

__attribute__((always_inline)) inline double hsum(v8 v) noexcept {
    double s = 0.0;
    for (std::size_t k = 0; k < kLanes; ++k) s += static_cast<double>(v[k]);
    return s;
}
}  // namespace

BEATLESS_CLONES
float dot(const float* a, const float* b, std::size_t n) noexcept {
    v8 acc0{}, acc1{};
    std::size_t i = 0;
    for (; i + 2 * kLanes <= n; i += 2 * kLanes) {
        acc0 += load(a + i) * load(b + i);
        acc1 += load(a + i + kLanes) * load(b + i + kLanes);
    }
    for (; i + kLanes <= n; i += kLanes) acc0 += load(a + i) * load(b + i);
    float s = static_cast<float>(hsum(acc0 + acc1));
    for (; i < n; ++i) s += a[i] * b[i];
    return s;
}

BEATLESS_CLONES
double sum_sq(const float* x, std::size_t n) noexcept {
    v8 acc0{}, acc1{};
    std::size_t i = 0;
    for (; i + 2 * kLanes <= n; i += 2 * kLanes) {
        const v8 a = load(x + i), b = load(x + i + kLanes);
        acc0 += a * a;
        acc1 += b * b;
    }
    for (; i + kLanes <= n; i += kLanes) {
        const v8 a = load(x + i);
        acc0 += a * a;
    }
    double s = hsum(acc0) + hsum(acc1);
    for (; i < n; ++i) s += static_cast<double>(x[i]) * x[i];
    return s;
}

BEATLESS_CLONES
void weighted_sq_diff(const float* x, const float* w, std::size_t n, std::size_t lag0, std::size_t n_lags,
                      double* out) noexcept {
    // Four lags per pass share the loads of x[i] and w[i].
    std::size_t k = 0;
    for (; k + 4 <= n_lags; k += 4) {
        const float* y = x + lag0 + k;
        v8 a0{}, a1{}, a2{}, a3{};
        for (std::size_t i = 0; i < n; i += kLanes) {
            const v8 xi = load(x + i), wi = load(w + i);
            const v8 d0 = xi - load(y + i), d1 = xi - load(y + i + 1);
            const v8 d2 = xi - load(y + i + 2), d3 = xi - load(y + i + 3);
            a0 += (wi * d0) * d0;
            a1 += (wi * d1) * d1;
            a2 += (wi * d2) * d2;
            a3 += (wi * d3) * d3;
        }
        out[k] = hsum(a0);
        out[k + 1] = hsum(a1);
        out[k + 2] = hsum(a2);
        out[k + 3] = hsum(a3);
    }
    for (; k < n_lags; ++k) {
        const float* y = x + lag0 + k;
        v8 a0{};
        for (std::size_t i = 0; i < n; i += kLanes) {
            const v8 d0 = load(x + i) - load(y + i);
            a0 += (load(w + i) * d0) * d0;
        }
        out[k] = hsum(a0);
    }
}

BEATLESS_CLONES
void lag_products(const float* x, std::size_t n, std::size_t n_lags, float* out) noexcept {
    // Thirty-two lags per pass share each broadcast of x[j]; the four sums stay in registers.
    std::size_t t = 0;
    for (; t + 4 * kLanes <= n_lags; t += 4 * kLanes) {
        v8 a0{}, a1{}, a2{}, a3{};
        const float* y = x + t;
        for (std::size_t j = 0; j < n; ++j) {
            const v8 b = v8{} + x[j];
            a0 += b * load(y + j);
            a1 += b * load(y + j + kLanes);
            a2 += b * load(y + j + 2 * kLanes);
            a3 += b * load(y + j + 3 * kLanes);
        }
        std::memcpy(out + t, &a0, sizeof a0);
        std::memcpy(out + t + kLanes, &a1, sizeof a1);
        std::memcpy(out + t + 2 * kLanes, &a2, sizeof a2);
        std::memcpy(out + t + 3 * kLanes, &a3, sizeof a3);
    }
    for (; t < n_lags; t += kLanes) {
        v8 a0{};
        for (std::size_t j = 0; j < n; ++j) a0 += (v8{} + x[j]) * load(x + t + j);
        std::memcpy(out + t, &a0, sizeof a0);
    }
}

namespace {
// w[i] = (1 - u^(2^doublings))^2, u = (2 i + 1 - n) / n. Symmetric: u at n - 1 - i is exactly -u at i (an integer
// numerator), so the second half mirrors the first.
void squared_taper(float* w, std::size_t n, int doublings) noexcept {
    const double wd = static_cast<double>(n);
    const std::size_t half = (n + 1) / 2;
    for (std::size_t i = 0; i < half; ++i) {
        const double u = (2.0 * static_cast<double>(i) + 1.0 - wd) / wd;
        double p = u;
        for (int k = 0; k < doublings; ++k) p *= p;
        const double b = 1.0 - p;
        w[i] = static_cast<float>(b * b);
    }
    for (std::size_t i = half; i < n; ++i) w[i] = w[n - 1 - i];
}
}  // namespace

void biweight(float* w, std::size_t n) noexcept { squared_taper(w, n, 1); }

void flat_window(float* w, std::size_t n) noexcept { squared_taper(w, n, 3); }

BEATLESS_CLONES
void add(float* acc, const float* a, std::size_t n) noexcept {
    for (std::size_t i = 0; i < n; ++i) acc[i] += a[i];
}

}  // namespace beatless::pitch::vec
