// Decimator — integer-factor sample-rate reduction by a linear-phase FIR.
//
// The low-pass is a Kaiser-windowed ideal low-pass (J. F. Kaiser, "Nonrecursive
// digital filter design using the I0-sinh window function", Proc. IEEE ISCAS
// 1974; design formulas for beta and the length as in A. V. Oppenheim and
// R. W. Schafer, Discrete-Time Signal Processing, 3rd ed., sec. 7.6.1).
// Cutoff at half the output rate; passband to 0.4 of the output rate and
// stopband from 0.6 of it, so whatever aliases lands above the passband.
// Output m is centred on input sample m * factor (odd length, symmetric
// taps: no time shift), and is computed only for the outputs kept.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace beatless::pitch {

class Decimator {
public:
    // factor >= 1 (1 passes samples through); stop_db: stopband attenuation.
    explicit Decimator(std::size_t factor, double stop_db = 60.0);

    std::size_t factor() const noexcept { return factor_; }
    // Output m needs inputs m * factor - half_len() .. m * factor + half_len().
    std::size_t half_len() const noexcept { return half_len_; }
    std::span<const float> taps() const noexcept { return taps_; }

    // One output from the 2 * half_len() + 1 inputs starting at `first`
    // (input m * factor - half_len()). Allocates: no.
    float at(const float* first) const noexcept;

private:
    std::size_t factor_ = 1;
    std::size_t half_len_ = 0;
    std::vector<float> taps_;
};

}  // namespace beatless::pitch
