// YIN coarse stage (internal): the difference function from block lag products, and YIN's steps 2-5 on it.
// Method: A. de Cheveigné and H. Kawahara, "YIN, a fundamental frequency estimator for speech and music", J. Acoust.
// Soc. Am. 111(4), 1917-1930 (2002); the cross term block by block, in the time domain (BlockCorrelator).
// Thread: one at a time (the tracker's). Allocates: in the constructor only.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace beatless::pitch {

// Keeps the cross term r of YIN's difference function for a sliding window of k blocks of P samples, as the sum of
// the blocks' own lag products p_b[tau] = sum_{j in block b} y[j] y[j + tau] (de Cheveigné and Kawahara 2002, eq. 1
// split over the window's blocks). Each block's products are computed once, directly, when its lagged segment (the
// next R blocks) has arrived: P (max_lag + 1) multiply-adds, eight lags at a time (vec::lag_products); a window
// sums k of them. Per second of audio that is rate x (max_lag + 1) multiply-adds, whatever the hop: at the tracker's
// 11 kHz and 41 Hz floor about a tenth of the two 360-point FFTs per block it replaced, and exact to float rounding.
class BlockCorrelator {
public:
    // block_len P >= 1, blocks_per_window k >= 1, lags 0 .. max_lag.
    BlockCorrelator(std::size_t block_len, std::size_t blocks_per_window, std::size_t max_lag);

    std::size_t block_len() const noexcept { return block_len_; }
    std::size_t blocks_per_window() const noexcept { return blocks_; }
    std::size_t max_lag() const noexcept { return max_lag_; }
    std::size_t lookahead_blocks() const noexcept { return lookahead_; }  // R: blocks after a block its lags reach
    std::size_t blocks_added() const noexcept { return added_; }

    void reset() noexcept;

    // Appends the next P samples of the stream. Allocates: no.
    void add_block(const float* block) noexcept;

    // True once the window of blocks [added - R - k, added - R) has all its lags.
    bool window_ready() const noexcept { return added_ >= lookahead_ + blocks_; }

    // r[tau] = sum over the window's samples j of y[j] * y[j + tau], tau = 0 .. max_lag
    // (r.size() >= max_lag + 1). Allocates: no.
    void window_correlation(std::span<float> r) noexcept;

private:
    std::size_t block_len_, blocks_, max_lag_, lookahead_, lags_;  // lags_: max_lag + 1 rounded up to vec::kLanes
    std::size_t added_ = 0;
    std::vector<float> recent_;    // the last R + 1 blocks, oldest first, then zeros (lags_ + P readable)
    std::vector<float> products_;  // k blocks' lag products, ring, lags_ each
};

// YIN step 2, d(tau) = sum_j (y_j - y_{j+tau})^2, with the cross term r (BlockCorrelator):
// d[tau] = E0 + E(tau) - 2 r[tau] for tau = 0 .. max_lag, E0 = sum_{j<window} y[j]^2,
// E(tau) = sum_{j<window} y[j+tau]^2 (energies in double, d clamped at 0,
// d[0] = 0). y must hold window + max_lag samples. Allocates: no.
void difference_from_correlation(const float* y, std::size_t window, std::size_t max_lag, const float* r,
                                 double* d) noexcept;

// Cumulative mean normalised difference (YIN step 3): dn[0] = 1,
// dn[tau] = d[tau] * tau / sum_{j=1..tau} d[j] (1 where that sum is 0).
void cumulative_mean_normalised(std::span<const double> d, std::span<double> dn) noexcept;

struct LagChoice {
    std::size_t lag = 0;           // integer lag of the chosen dip
    double aperiodicity = 1.0;     // dn at that lag
    bool below_threshold = false;  // a dip under the threshold was found
};

// YIN step 4: the first lag in [lag_min, lag_max] where dn < threshold, then
// on to the bottom of that dip; the overall minimum in range when none is.
// Our addition: a local minimum also counts when the bottom of the parabola
// through it and its neighbours is under the threshold (a short period whose
// dip falls between two lags); aperiodicity is then that bottom. Then the
// shortest divisor lag / k (k = 6 .. 2) whose dip is nearly as deep (at most
// 1.5 d' + 0.05): in noise every multiple of the period dips about as deep.
LagChoice absolute_threshold(std::span<const double> dn, std::size_t lag_min, std::size_t lag_max,
                             double threshold) noexcept;

// A period k t (k = 2, 3) for a chosen lag t whose own dip leaves much more unexplained: d' at a lag is the share
// of the power not periodic at it (de Cheveigné and Kawahara 2002, sec. VI), and where the lag k t leaves at most
// kDeeperShare of what t leaves (t's own d' at least kDeeperFloor; each dip's depth the bottom of its parabola), that
// power is periodic at k t: the fundamental and
// odd partials of a tone whose second partial dominates (on a formant or a room's resonance), which step 4's
// first-dip rule skips when t's d' is under the threshold. White noise leaves the same share at every multiple, so
// the choice in noise stands. A period of a few coarse samples is sampled too coarsely for its dip to show its depth:
// the tracker confirms the choice at the full rate. Returns c unchanged when no multiple qualifies. Allocates: no.
LagChoice deeper_multiple(std::span<const double> dn, LagChoice c, std::size_t lag_max) noexcept;
inline constexpr double kDeeperShare = 0.3;   // k t leaves at most this share of t's d'
inline constexpr double kDeeperFloor = 0.03;  // ... and t's d' is at least this (clean tones: both dips near 0)
// Or, with t's d' at least kDeeperWide: k t is deeper by the allowance step 4 gives a divisor (yin_coarse.cpp,
// absolute_threshold: t's d' over 1.5 k t's + 0.05). In brown noise a sung /a/ whose second
// partial sits on its first formant dips at half its period to d' 0.1-0.15 and at the period to 0.03-0.05: over 0.3
// of it, yet four times deeper.
inline constexpr double kDeeperWide = 0.08;
// True when a dip of depth `other` at a multiple of a lag whose dip is `own` deep is far deeper in either sense above.
bool far_deeper(double own, double other) noexcept;

// A chosen lag that is a common period of a recent note (old_lag, its period in the same samples) and a new one:
// where a room's reverberation of the old note overlaps the new note, the mixture repeats only after m old periods
// (m = 2 .. 4: a fifth or an octave apart). The new note's period is then the dip at a divisor lag / k (k = 2 .. 4)
// that is not a multiple of old_lag, if it is at most kOldNoteRatio d' + kOldNoteTolerance deep. Returns c unchanged
// otherwise. Allocates: no.
LagChoice beside_old_note(std::span<const double> dn, LagChoice c, double old_lag, std::size_t lag_min) noexcept;

// The lowest value of the parabola through (-1, a), (0, b), (1, c), at least 0; b where it opens downwards.
double parabola_bottom(double a, double b, double c) noexcept;

// YIN step 5: abscissa of the parabola through d[lag - 1], d[lag], d[lag + 1]
// (lag itself at the ends or where the parabola opens downwards).
double parabolic_minimum(std::span<const double> d, std::size_t lag) noexcept;

}  // namespace beatless::pitch
