// DroneComb — removes a steady drone of known root from a recording: a comb, with optional feedback,
//   y[n] = x[n] - x[n - D] + g y[n - D],   D = rate / root_hz,
// H(z) = (1 - z^-D) / (1 - g z^-D): zeros on every harmonic of rate / D (the drone's partials); with g > 0 poles
// inside them at radius g narrow each notch. g = 0 (the default) is the feedforward comb, gain 2 |sin(pi f D / rate)|:
// a voice between two partials loses SNR against white noise (8.0 dB at 320 Hz over a 110 Hz drone; 2.4 dB at
// g = 0.5, 0.1 dB at g = 0.95). The feedback's cost is time: the response is an impulse followed by echoes
// -(1 - g) g^(k-1) at k D, so a drone's onset or swell leaves a tail falling only by g a period (-19 dB still, half a
// second after an 87 Hz drone starts, at g = 0.95) and each held note ends smeared over a few periods (at g = 0.5
// the analysis's note ends moved 40-70 ms, past its 30 ms bar, tests/test_cli_analyze.cpp): so the analysis keeps
// g = 0. Method: J. O. Smith, Physical Audio Signal Processing, W3K 2010, "Feedforward Comb Filters" and "Feedback
// Comb Filters"; D's fraction by 4-point Lagrange interpolation (T. I. Laakso et al., "Splitting the unit delay",
// IEEE Signal Processing Magazine 13(1), 1996) in both branches. Why it keeps the voice: DEVELOPERS.md, "Methods in
// detail".
// Thread: one at a time. Allocates: in the constructor only. Locks: no.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace beatless::pitch {

struct DroneCombConfig {
    double sample_rate_hz = 44100.0;  // 8 000 .. 192 000
    double root_hz = 110.0;           // the drone's fundamental, 20 Hz .. rate / 8
    double feedback = 0.0;            // g, 0 .. 0.99: 0 is the feedforward comb; nearer 1 the notches narrow and the
                                      //   drone's changes and the notes' ends ring longer (see above)
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
    std::vector<double> out_;  // ring of past outputs (the feedback's state), as long
    std::size_t mask_ = 0;
    std::size_t pos_ = 0;     // where the next input goes
    std::size_t filled_ = 0;  // inputs seen, up to whole_ + 3: the feedback waits for a whole period of history
};

}  // namespace beatless::pitch
