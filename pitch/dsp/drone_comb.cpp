// DroneComb — see drone_comb.h. The delayed sample x(n - D), D = W + u with
// W = floor(D) and 0 <= u < 1, is interpolated from the four samples
// x[n-W+1], x[n-W], x[n-W-1], x[n-W-2] (positions -1, 0, 1, 2 around the
// delay W) with the third-order Lagrange weights at u:
//   c0 = -u(u-1)(u-2)/6, c1 = (u+1)(u-1)(u-2)/2, c2 = -(u+1)u(u-2)/2, c3 = (u+1)u(u-1)/6;
// y(n - D) likewise from the ring of outputs. With the delay in the middle of
// the four points the interpolator's gain is at most 1 at every frequency
// (Laakso et al. 1996, odd orders), so the loop's gain stays below g < 1.
// Until a whole period of input has been seen, x(n - D) is the silence before
// the file and the output is not fed back: a drone sounding from the start
// leaves no tail.
#include "pitch/dsp/drone_comb.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <cmath>
#include <string>

namespace beatless::pitch {

DroneComb::DroneComb(const DroneCombConfig& config) : cfg_(config) {
    const double fs = cfg_.sample_rate_hz;
    if (!(fs >= 8000.0 && fs <= 192000.0))
        throw Error("drone filter: sample rate " + format_trimmed(fs, 3) + " Hz is out of range (8000 to 192000)");
    if (!(cfg_.root_hz >= 20.0 && cfg_.root_hz <= fs / 8.0))
        throw Error("drone filter: root " + format_trimmed(cfg_.root_hz, 3) + " Hz is out of range (20 Hz to " +
                    format_trimmed(fs / 8.0, 0) + " Hz at this sample rate)");
    if (!(cfg_.feedback >= 0.0 && cfg_.feedback <= 0.99))
        throw Error("drone filter: feedback " + format_trimmed(cfg_.feedback, 3) + " is out of range (0 to 0.99)");
    delay_ = fs / cfg_.root_hz;
    whole_ = static_cast<std::size_t>(std::floor(delay_));
    const double u = delay_ - static_cast<double>(whole_);
    c_[0] = -u * (u - 1.0) * (u - 2.0) / 6.0;
    c_[1] = (u + 1.0) * (u - 1.0) * (u - 2.0) / 2.0;
    c_[2] = -(u + 1.0) * u * (u - 2.0) / 2.0;
    c_[3] = (u + 1.0) * u * (u - 1.0) / 6.0;
    std::size_t len = 1;
    while (len < whole_ + 4) len <<= 1;
    hist_.assign(len, 0.0f);
    out_.assign(len, 0.0);
    mask_ = len - 1;
}

void DroneComb::reset() noexcept {
    std::fill(hist_.begin(), hist_.end(), 0.0f);
    std::fill(out_.begin(), out_.end(), 0.0);
    pos_ = 0;
    filled_ = 0;
}

void DroneComb::process(std::span<const float> in, std::span<float> out) noexcept {
    const std::size_t n = std::min(in.size(), out.size());
    const float* h = hist_.data();
    const double* o = out_.data();
    const double g = cfg_.feedback;
    if (g == 0.0) {  // the feedforward comb alone: no output ring to keep (the analysis's case)
        for (std::size_t i = 0; i < n; ++i) {
            const float x = in[i];
            hist_[pos_] = x;
            const std::size_t b = pos_ + hist_.size() - whole_;
            const double xd = c_[0] * h[(b + 1) & mask_] + c_[1] * h[b & mask_] + c_[2] * h[(b - 1) & mask_] +
                              c_[3] * h[(b - 2) & mask_];
            out[i] = static_cast<float>(static_cast<double>(x) - xd);
            pos_ = (pos_ + 1) & mask_;
        }
        return;
    }
    for (std::size_t i = 0; i < n; ++i) {
        const float x = in[i];
        hist_[pos_] = x;
        // x[n - k] and y[n - k] sit at pos_ - k.
        const std::size_t b = pos_ + hist_.size() - whole_;
        const std::size_t i0 = (b + 1) & mask_, i1 = b & mask_, i2 = (b - 1) & mask_, i3 = (b - 2) & mask_;
        const double xd = c_[0] * h[i0] + c_[1] * h[i1] + c_[2] * h[i2] + c_[3] * h[i3];
        const double yd = c_[0] * o[i0] + c_[1] * o[i1] + c_[2] * o[i2] + c_[3] * o[i3];
        const double y = static_cast<double>(x) - xd + g * yd;
        if (filled_ < whole_ + 3) {
            ++filled_;
            out_[pos_] = 0.0;  // no feedback from the start-up, where x(n - D) was the silence before the file
        } else {
            out_[pos_] = y;
        }
        out[i] = static_cast<float>(y);
        pos_ = (pos_ + 1) & mask_;
    }
}

}  // namespace beatless::pitch
