// Vector inner loops shared by the pitch internals (internal header).
//
// Plain sums of products over float arrays, written with GCC/Clang vector
// extensions (8 floats at a time, several accumulators) so they vectorize
// without -ffast-math. On x86-64 each function is compiled twice, for the
// baseline ISA and for x86-64-v3 (AVX2 + FMA), and the loader picks the
// one the CPU supports (function multiversioning); elsewhere the baseline
// build is used. No allocation, no state: safe on any thread.
#pragma once

#include <cstddef>

namespace beatless::pitch::vec {

constexpr std::size_t kLanes = 8;  // pad lengths to multiples of this

// sum a[i] * b[i], i < n (any n).
float dot(const float* a, const float* b, std::size_t n) noexcept;

// sum x[i]^2, i < n (any n), accumulated in float lanes, summed in double.
double sum_sq(const float* x, std::size_t n) noexcept;

// out[k] = sum_{i < n} w[i] * (x[i] - x[i + lag0 + k])^2 for k < n_lags.
// n must be a multiple of kLanes (pad w with zeros); x must be readable up to
// x[n - 1 + lag0 + n_lags - 1]. The differences are formed before squaring,
// so a value near zero keeps its full relative precision.
void weighted_sq_diff(const float* x, const float* w, std::size_t n, std::size_t lag0, std::size_t n_lags,
                      double* out) noexcept;

// out[t] = sum_{j < n} x[j] * x[j + t] for t < n_lags (any n; n_lags a multiple of kLanes); x must be readable up
// to x[n - 1 + n_lags - 1]. Lags are taken eight at a time (the broadcast x[j] times x[j + t .. j + t + 7]), each
// sum in float in the order of j.
void lag_products(const float* x, std::size_t n, std::size_t n_lags, float* out) noexcept;

// The biweight window of n samples: w[i] = (1 - u^2)^2 with u = (2 i + 1 - n) / n, each in double, stored as
// float.
void biweight(float* w, std::size_t n) noexcept;
// The flat-topped window of n samples: w[i] = (1 - u^8)^2, u as above. Flat over most of its length (an effective
// length of 0.82 n against the biweight's 0.70 n), smooth to its ends.
void flat_window(float* w, std::size_t n) noexcept;
// acc[i] += a[i], i < n floats.
void add(float* acc, const float* a, std::size_t n) noexcept;

}  // namespace beatless::pitch::vec
