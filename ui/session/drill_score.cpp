#include "ui/session/drill_score.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <string>

namespace beatless::ui {

using pitch::format_trimmed;

namespace {

constexpr double kTimeEps_s = 1e-9;  // guards sums of hops against rounding

void check_config(const HoldScoreConfig& c) {
    auto bad = [](const char* what, double v) {
        return Error(std::string("hold score: ") + what + " " + format_trimmed(v, 6) + " is out of range");
    };
    if (!(c.tolerance_cents > 0.0) || !std::isfinite(c.tolerance_cents))
        throw bad("tolerance_cents", c.tolerance_cents);
    if (!(c.dwell_s >= 0.0) || !std::isfinite(c.dwell_s)) throw bad("dwell_s", c.dwell_s);
    if (!(c.hop_s > 0.0) || !std::isfinite(c.hop_s)) throw bad("hop_s", c.hop_s);
    if (!(c.bridge_s >= 0.0) || !std::isfinite(c.bridge_s)) throw bad("bridge_s", c.bridge_s);
    if (!std::isfinite(c.hold_start_s)) throw bad("hold_start_s", c.hold_start_s);
    if (!(c.hold_dur_s > 0.0)) throw bad("hold_dur_s", c.hold_dur_s);
}

bool is_in(const HoldPoint& p, double tol) {
    return p.voiced && std::isfinite(p.dev_cents) && std::fabs(p.dev_cents) <= tol;
}

bool is_voiced(const HoldPoint& p) { return p.voiced && std::isfinite(p.dev_cents); }

HoldScore score_sorted(std::span<const HoldPoint> pts, const HoldScoreConfig& c) {
    HoldScore s;
    const double start = c.hold_start_s;
    // First point inside the window, and the window's end.
    std::size_t first = 0;
    while (first < pts.size() && pts[first].t_s < start) ++first;
    double end = start + c.hold_dur_s;
    if (!std::isfinite(end)) {
        if (first == pts.size()) return s;
        end = pts.back().t_s + c.hop_s;
    }
    std::size_t last = first;  // one past the last point inside
    while (last < pts.size() && pts[last].t_s < end) ++last;
    const std::span<const HoldPoint> w = pts.subspan(first, last - first);
    s.points_used = w.size();
    auto weight = [&](const HoldPoint& p) { return std::min(c.hop_s, end - p.t_s); };

    // (2) The first lock: scan maximal runs of in-points from their start.
    bool in_run = false;
    double run_start_s = 0.0;
    double run_end_s = 0.0;  // end of the last in-point's span
    for (const HoldPoint& p : w) {
        if (is_voiced(p) && !is_in(p, c.tolerance_cents)) {
            in_run = false;
            continue;
        }
        if (!is_in(p, c.tolerance_cents)) continue;  // unvoiced: judged by the gap it leaves
        if (in_run && p.t_s - run_end_s > c.bridge_s + kTimeEps_s) in_run = false;
        if (!in_run) {
            in_run = true;
            run_start_s = p.t_s;
        }
        run_end_s = p.t_s + weight(p);
        if (run_end_s - run_start_s >= c.dwell_s - kTimeEps_s) {
            s.locked = true;
            break;
        }
    }
    if (s.locked) {
        s.time_to_lock_s = run_start_s - start;
        s.held_s = end - run_start_s;
    }

    // (3) Weighted mean and population spread over the held points.
    const double from_s = s.locked ? run_start_s : start;
    double sum_w = 0.0, sum_wd = 0.0;
    for (const HoldPoint& p : w) {
        if (!is_voiced(p) || p.t_s < from_s) continue;
        sum_w += weight(p);
        sum_wd += weight(p) * p.dev_cents;
    }
    if (sum_w > 0.0) {
        s.mean_dev_cents = sum_wd / sum_w;
        double sum_wdd = 0.0;
        for (const HoldPoint& p : w) {
            if (!is_voiced(p) || p.t_s < from_s) continue;
            const double d = p.dev_cents - s.mean_dev_cents;
            sum_wdd += weight(p) * d * d;
        }
        s.spread_cents = std::sqrt(sum_wdd / sum_w);
    }

    // (4) Shares of the whole window.
    double voiced_w = 0.0, in_w = 0.0;
    for (const HoldPoint& p : w) {
        if (!is_voiced(p)) continue;
        voiced_w += weight(p);
        if (is_in(p, c.tolerance_cents)) in_w += weight(p);
    }
    if (voiced_w > 0.0) s.in_tolerance_share = in_w / voiced_w;
    s.voiced_share = std::clamp(voiced_w / (end - start), 0.0, 1.0);
    return s;
}

}  // namespace

HoldScore score_hold(std::span<const HoldPoint> points, const HoldScoreConfig& config) {
    check_config(config);
    const auto earlier = [](const HoldPoint& a, const HoldPoint& b) { return a.t_s < b.t_s; };
    const bool all_finite =
        std::all_of(points.begin(), points.end(), [](const HoldPoint& p) { return std::isfinite(p.t_s); });
    if (all_finite && std::is_sorted(points.begin(), points.end(), earlier)) return score_sorted(points, config);
    std::vector<HoldPoint> sorted;
    sorted.reserve(points.size());
    for (const HoldPoint& p : points)
        if (std::isfinite(p.t_s)) sorted.push_back(p);
    std::stable_sort(sorted.begin(), sorted.end(), earlier);
    return score_sorted(sorted, config);
}

std::vector<HoldPoint> hold_points(std::span<const pitch::Reading> readings, DeviationSource source) {
    std::vector<HoldPoint> out;
    out.reserve(readings.size());
    for (const pitch::Reading& r : readings) {
        double d = r.dev_cents;
        if (source == DeviationSource::centre_first && std::isfinite(r.centre_dev_cents)) d = r.centre_dev_cents;
        out.push_back({r.t_s, d, r.voiced() && std::isfinite(d)});
    }
    return out;
}

}  // namespace beatless::ui
