#include "pitch/dsp/decimator.h"

#include "pitch/dsp/vec_ops.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace beatless::pitch {

Decimator::Decimator(std::size_t factor, double stop_db) : factor_(factor < 1 ? 1 : factor) {
    if (factor_ == 1) {
        taps_ = {1.0f};
        return;
    }
    const double d = static_cast<double>(factor_);
    // Transition from 0.4 to 0.6 of the output rate, in radians per input sample.
    const double transition = 2.0 * std::numbers::pi * 0.2 / d;
    const double beta =
        stop_db > 50.0 ? 0.1102 * (stop_db - 8.7)
                       : (stop_db > 21.0 ? 0.5842 * std::pow(stop_db - 21.0, 0.4) + 0.07886 * (stop_db - 21.0) : 0.0);
    const double order = (stop_db - 8.0) / (2.285 * transition);
    half_len_ = static_cast<std::size_t>(std::ceil(order / 2.0));
    const std::size_t len = 2 * half_len_ + 1;
    const double fc = 0.5 / d;  // cutoff in cycles per input sample
    std::vector<double> h(len);
    double sum = 0.0;
    const double i0_beta = std::cyl_bessel_i(0.0, beta);
    for (std::size_t k = 0; k < len; ++k) {
        const double m = static_cast<double>(k) - static_cast<double>(half_len_);
        const double arg = 2.0 * fc * m;
        const double sinc = m == 0.0 ? 1.0 : std::sin(std::numbers::pi * arg) / (std::numbers::pi * arg);
        const double r = m / static_cast<double>(half_len_);
        const double win = std::cyl_bessel_i(0.0, beta * std::sqrt(std::max(0.0, 1.0 - r * r))) / i0_beta;
        h[k] = 2.0 * fc * sinc * win;
        sum += h[k];
    }
    taps_.resize(len);
    for (std::size_t k = 0; k < len; ++k) taps_[k] = static_cast<float>(h[k] / sum);  // unit gain at DC
}

float Decimator::at(const float* first) const noexcept { return vec::dot(first, taps_.data(), taps_.size()); }

}  // namespace beatless::pitch
