// DroneComb — removes a steady drone of known root from a recording: y[n] = x[n] - x[n - D], D = rate / root_hz.
// Method: a feedforward comb (J. O. Smith, Physical Audio Signal Processing, W3K 2010, "Feedforward Comb Filters"),
// D's fraction by 4-point Lagrange interpolation (T. I. Laakso et al., "Splitting the unit delay", IEEE Signal
// Processing Magazine 13(1), 1996). Why it keeps the voice: DEVELOPERS.md, "Methods in detail".
// Thread: one at a time. Allocates: in the constructor only. Locks: no.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace beatless::pitch {

struct DroneCombConfig {
    double sample_rate_hz = 44100.0;  // 8 000 .. 192 000
    double root_hz = 110.0;           // the drone's fundamental, 20 Hz .. rate / 8
};

class DroneComb {
public:
    explicit DroneComb(const DroneCombConfig& config);  // throws Error on invalid settings

    // Filters `in` into `out` (same length; may be the same span). The
    // history carries over between calls. Thread: one at a time.
    // Allocates: no. Locks: no.
    void process(std::span<const float> in, std::span<float> out) noexcept;

    void reset() noexcept;                                    // forget the history (zeros)
    double delay_samples() const noexcept { return delay_; }  // D = rate / root_hz

private:
    DroneCombConfig cfg_;
    double delay_ = 0.0;
    std::size_t whole_ = 0;    // floor(D)
    double c_[4] = {};         // Lagrange weights for x[n-whole+1] .. x[n-whole-2]
    std::vector<float> hist_;  // ring of past inputs, a power of two long
    std::size_t mask_ = 0;
    std::size_t pos_ = 0;  // where the next input goes
};

}  // namespace beatless::pitch
