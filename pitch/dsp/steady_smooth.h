// Steady-note smoothing for the file path: where a voiced stretch holds its pitch, each frame's f0 becomes the centre
// value of a quadratic least-squares fit over the frames around it (a Savitzky-Golay filter: A. Savitzky and M. J. E.
// Golay, "Smoothing and differentiation of data by simplified least squares procedures", Anal. Chem. 36(8),
// 1627-1639, 1964; quadratic, symmetric window of 2m + 1 points). A quadratic keeps a slow glide or the top of a
// vibrato where it is and only averages the noise. The window is as wide as the stretch stays steady around the
// frame: up to max_half_s each side, all frames voiced and clear of the stretch's first and last edge_s, their f0s
// within range_cents of each other. A frame at a note change, in a vibrato's sweep, or beside an unvoiced frame keeps
// a narrow window or its own value. (Tried: a limit that grows with the frames' own noise let noisy low notes smooth
// too, but spread pink noise's error bursts to their neighbours: pink 20 dB p95 6.4 -> 8.0 c on the tracker bench.)
// Thread: any (no state). Allocates: no.
#pragma once

#include "pitch/dsp/yin.h"

#include <cstddef>
#include <span>

namespace beatless::pitch {

struct SteadySmoothConfig {
    double max_half_s = 0.05;  // half the widest window (default 50 ms each side)
    double range_cents = 4.0;  // the window's f0s lie within this of each other (default 4 c)
    double edge_s = 0.025;     // a stretch's first and last frames this long are left alone (default 25 ms:
                               //   half the file path's 50 ms span)
};

// The Savitzky-Golay quadratic centre-value weight of point i (-m .. m) in a window of 2m + 1 points (m >= 1):
// (3 (3m^2 + 3m - 1) - 15 i^2) / ((2m - 1)(2m + 1)(2m + 3)).
double savitzky_golay_weight(int m, int i) noexcept;

// Smooths the voiced frames' f0 in place (in cents); hop_s is the time between frames. Unvoiced frames and
// every other field are left alone. work must hold frames.size() values (the unsmoothed f0s in cents).
void smooth_steady(std::span<PitchFrame> frames, double hop_s, const SteadySmoothConfig& config,
                   std::span<double> work) noexcept;

}  // namespace beatless::pitch
