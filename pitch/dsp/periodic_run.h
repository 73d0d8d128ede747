// PeriodicRun (internal) — the stretch of a span over which the signal repeats at a given lag: the samples one
// period estimate may use when a note changes inside the span.
// Method: YIN's aperiodicity (A. de Cheveigné and H. Kawahara, JASA 111(4), 2002, sec. II.F: the ratio of aperiodic
// to total power, d(T) / sum(x_j^2 + x_{j+T}^2)) measured block by block along the span, the lag following a straight
// line in time (the linear-chirp period model of M. Kepesi and L. Weruaga, Speech Communication 48(5), 2006, from
// memory), so a vibrato's sweep stays periodic; a block far above the span's best marks a change. DEVELOPERS.md.
// Thread: one at a time (the tracker's). Allocates: in the constructor only.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::pitch {

class PeriodicRun {
public:
    // Spans up to max_len samples, lags up to max_lag.
    PeriodicRun(std::size_t max_len, std::size_t max_lag);

    struct Result {
        bool found = false;         // a run of at least min_len samples exists
        bool whole = false;         // every block of the span is periodic (no change inside it)
        std::size_t begin = 0;      // first sample of the run
        std::size_t end = 0;        // one past its last sample (the lagged samples included)
        double aperiodicity = 1.0;  // aperiodic / total power over the run
    };

    // y[0 .. len): the span; the pair from sample n is lag + slope * (n + lag / 2 - len / 2) samples apart (the
    // period at the pair's centre; linear interpolation between samples). Of the maximal periodic runs of at least min_len samples,
    // returns the one that ends last (the newest note). floor: aperiodicity a block may always have
    // (0.45 = 45 %); forgive_lone: a lone block over the threshold is taken for noise. Allocates: no.
    Result find(const float* y, std::size_t len, double lag, double slope, std::size_t min_len, double floor,
                bool forgive_lone = true) noexcept;

    // The period of the newest note in y[0 .. len): YIN's steps 2-5 (direct sums) on the last quarter of the span,
    // else its last third, else its last half, whichever first shows a dip under threshold; lags lag_min .. lag_max
    // (at most three quarters of that part). Returns 0 when none does. Allocates: no.
    double newest_period(const float* y, std::size_t len, std::size_t lag_min, std::size_t lag_max,
                         double threshold) noexcept;

    // Aperiodicity of one block of samples [n0, n1) of the last find() (n: the first sample of each pair).
    double block_aperiodicity(std::size_t n0, std::size_t n1) const noexcept;

    // The run r of the last find() that reaches the span's end, its start moved later (by steps of `step` pairs)
    // until the pairs from it are periodic to within `target` aperiodicity; not found when fewer than min_len
    // samples remain. Allocates: no.
    Result tightened(Result r, double target, std::size_t step, std::size_t min_len) const noexcept;

private:
    std::size_t max_len_, max_lag_;
    std::vector<double> d_, dn_;  // the newest part's difference function and its normalised form
    std::vector<double> q_;       // prefix sums of (y[n] - y[n + lag(n)])^2
    std::vector<double> e_;       // prefix sums of y[n]^2 + y[n + lag(n)]^2
    std::vector<double> lag_at_;
    std::size_t pairs_ = 0;  // pairs of the last find()
};

}  // namespace beatless::pitch
