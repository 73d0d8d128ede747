// DecimatedTrace — see decimated_trace.h.
#include "pitch/measure/decimated_trace.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>

namespace beatless::pitch {

DecimatedTrace::DecimatedTrace(const DecimatedTraceConfig& config) : cfg_(config), bucket_s_(config.bucket_s) {
    if (!(cfg_.bucket_s > 0.0 && cfg_.bucket_s <= 60.0)) throw Error("decimated trace: bucket_s must be in (0, 60] s");
    if (cfg_.max_points < 2 || cfg_.max_points % 2 != 0)
        throw Error("decimated trace: max_points must be even and at least 2");
    pts_.resize(cfg_.max_points);
    for (std::size_t i = 0; i < pts_.size(); ++i) pts_[i].t_s = (static_cast<double>(i) + 0.5) * bucket_s_;
}

void DecimatedTrace::merge_pairs() noexcept {
    const std::size_t half = pts_.size() / 2;
    for (std::size_t i = 0; i < half; ++i) {
        const TracePoint& a = pts_[2 * i];
        const TracePoint& b = pts_[2 * i + 1];
        TracePoint m;
        m.frames = a.frames + b.frames;
        if (m.frames > 0) {
            m.mean_cents = (a.mean_cents * a.frames + b.mean_cents * b.frames) / m.frames;
            m.min_cents = a.frames == 0   ? b.min_cents
                          : b.frames == 0 ? a.min_cents
                                          : std::min(a.min_cents, b.min_cents);
            m.max_cents = a.frames == 0   ? b.max_cents
                          : b.frames == 0 ? a.max_cents
                                          : std::max(a.max_cents, b.max_cents);
        }
        pts_[i] = m;
    }
    bucket_s_ *= 2.0;
    for (std::size_t i = 0; i < pts_.size(); ++i) {
        pts_[i].t_s = (static_cast<double>(i) + 0.5) * bucket_s_;
        if (i >= half) pts_[i].frames = 0;
    }
    used_ = std::min(used_, half);
}

void DecimatedTrace::push(double t_s, double cents, bool voiced) noexcept {
    if (!(t_s >= 0.0) || !std::isfinite(t_s)) return;
    auto index = static_cast<std::size_t>(t_s / bucket_s_);
    while (index >= pts_.size()) {
        merge_pairs();
        index = static_cast<std::size_t>(t_s / bucket_s_);
    }
    used_ = std::max(used_, index + 1);
    if (!voiced || !std::isfinite(cents)) return;
    TracePoint& p = pts_[index];
    if (p.frames == 0) {
        p.mean_cents = p.min_cents = p.max_cents = cents;
    } else {
        p.mean_cents += (cents - p.mean_cents) / (p.frames + 1);
        p.min_cents = std::min(p.min_cents, cents);
        p.max_cents = std::max(p.max_cents, cents);
    }
    ++p.frames;
}

}  // namespace beatless::pitch
