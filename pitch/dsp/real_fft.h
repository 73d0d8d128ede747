// RealFft — a forward real FFT of fixed size, and the analysis windows the spectral modules share (internal header).
// Method: KissFFT's real transform, out of place (so it never allocates a temporary); windows from F. J. Harris, "On
// the use of windows for harmonic analysis with the discrete Fourier transform", Proc. IEEE 66(1), 1978.
// Thread: one at a time. Allocates: in the constructor (and make_window's result) only.
#pragma once

#include <complex>
#include <cstddef>
#include <vector>

struct kiss_fftr_state;

namespace beatless::pitch {

class RealFft {
public:
    explicit RealFft(std::size_t n);  // n even, >= 16; throws Error otherwise
    ~RealFft();
    RealFft(const RealFft&) = delete;
    RealFft& operator=(const RealFft&) = delete;

    std::size_t size() const noexcept { return n_; }
    // in: n floats (n even); out: n/2 + 1 complex bins. Allocates: no.
    void forward(const float* in, std::complex<float>* out) noexcept;

    // Smallest size >= n that KissFFT transforms quickly (even, factors 2, 3, 5).
    static std::size_t fast_size(std::size_t n);

private:
    std::size_t n_;
    kiss_fftr_state* cfg_ = nullptr;
};

// hann: periodic Hann, w[i] = 0.5 - 0.5 cos(2 pi i / n). blackman_harris: the 4-term Blackman-Harris window,
// a = 0.35875, 0.48829, 0.14128, 0.01168, side lobes -92 dB (Harris 1978).
enum class WindowKind { hann, blackman_harris };

// Sample i of the periodic window of length n. Allocates: no.
double window_value(WindowKind kind, std::size_t i, std::size_t n) noexcept;

// All n samples of the periodic window.
std::vector<float> make_window(WindowKind kind, std::size_t n);

}  // namespace beatless::pitch
