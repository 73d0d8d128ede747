// DecimatedTrace — a pitch trace of any length in a fixed number of points, at an even time resolution.
// Method: plain bookkeeping, no paper: buckets keep the mean, min and max of their voiced frames; when max_points are
// full, neighbours merge and the bucket doubles (a two-hour take costs the memory of a two-minute one).
// Thread: one at a time. Allocates: in the constructor only; between max_points / 2 and max_points buckets once full.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::pitch {

struct DecimatedTraceConfig {
    double bucket_s = 0.01;         // starting bucket length (default 10 ms)
    std::size_t max_points = 8192;  // buckets kept, even, >= 2 (default 8192)
};

struct TracePoint {
    double t_s = 0.0;  // bucket centre
    int frames = 0;    // voiced frames in the bucket (0: a gap)
    double mean_cents = 0.0;
    double min_cents = 0.0;
    double max_cents = 0.0;
};

class DecimatedTrace {
public:
    explicit DecimatedTrace(const DecimatedTraceConfig& config = {});  // throws Error on invalid settings

    // Adds a frame; voiced == false marks time without pitch. Times must not
    // decrease; t_s < 0 is ignored. Thread: one at a time. Allocates: no.
    void push(double t_s, double cents, bool voiced) noexcept;

    std::size_t size() const noexcept { return used_; }  // buckets up to the latest frame
    const TracePoint& operator[](std::size_t i) const noexcept { return pts_[i]; }
    double bucket_s() const noexcept { return bucket_s_; }

private:
    void merge_pairs() noexcept;

    DecimatedTraceConfig cfg_;
    double bucket_s_ = 0.05;
    std::vector<TracePoint> pts_;
    std::size_t used_ = 0;
};

}  // namespace beatless::pitch
