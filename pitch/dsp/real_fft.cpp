#include "pitch/dsp/real_fft.h"

#include "pitch/base/error.h"

#include <kiss_fftr.h>

#include <cmath>
#include <string>

namespace beatless::pitch {

RealFft::RealFft(std::size_t n) : n_(n) {
    if (n < 16 || n % 2 != 0 || n > (1u << 26))
        throw Error("FFT size " + std::to_string(n) + " is not an even size from 16 to 2^26");
    cfg_ = kiss_fftr_alloc(static_cast<int>(n), 0, nullptr, nullptr);
    if (!cfg_) throw Error("FFT size " + std::to_string(n) + ": out of memory");
}

RealFft::~RealFft() { kiss_fftr_free(cfg_); }

void RealFft::forward(const float* in, std::complex<float>* out) noexcept {
    // std::complex<float> is layout-compatible with kiss_fft_cpx {r, i}.
    kiss_fftr(cfg_, in, reinterpret_cast<kiss_fft_cpx*>(out));
}

std::size_t RealFft::fast_size(std::size_t n) {
    return static_cast<std::size_t>(kiss_fftr_next_fast_size_real(static_cast<int>(n)));
}

double window_value(WindowKind kind, std::size_t i, std::size_t n) noexcept {
    const double x = 6.283185307179586476925286766559 * static_cast<double>(i) / static_cast<double>(n);
    switch (kind) {
        case WindowKind::hann: return 0.5 - 0.5 * std::cos(x);
        case WindowKind::blackman_harris:
            return 0.35875 - 0.48829 * std::cos(x) + 0.14128 * std::cos(2 * x) - 0.01168 * std::cos(3 * x);
    }
    return 0.0;
}

std::vector<float> make_window(WindowKind kind, std::size_t n) {
    std::vector<float> w(n);
    for (std::size_t i = 0; i < n; ++i) w[i] = static_cast<float>(window_value(kind, i, n));
    return w;
}

}  // namespace beatless::pitch
