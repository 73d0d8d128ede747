// DecimatedTrace — a pitch trace of any length in a fixed number of points.
//
// Frames (time, cents) fall into buckets of bucket_s; each bucket keeps the
// mean, minimum and maximum of its voiced frames. When max_points buckets
// are full, neighbouring pairs merge and the bucket doubles, so a two-hour
// take costs the same memory as a two-minute one (at most max_points
// buckets, always at least max_points / 2 once the buffer has filled) and
// the trace keeps an even time resolution over the whole file. Plain
// bookkeeping: no paper. Allocation in the constructor only.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::pitch {

struct DecimatedTraceConfig {
    double bucket_s = 0.01;           // starting bucket length (default 10 ms)
    std::size_t max_points = 8192;    // buckets kept, even, >= 2 (default 8192)
};

struct TracePoint {
    double t_s = 0.0;                 // bucket centre
    int frames = 0;                   // voiced frames in the bucket (0: a gap)
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

    std::size_t size() const noexcept { return used_; }            // buckets up to the latest frame
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
