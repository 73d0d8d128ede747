// Drill score — how well one hold of a target was sung or played.
//
// Scores a hold drill from the pitch readings of one attempt: the time to
// lock into the tolerance band, the mean signed deviation and its spread
// (standard deviation) while held, and the share of the voiced time spent
// within tolerance. No published method: the definitions below are ours
// (common practice in intonation teaching is "how fast did you get there,
// how close, how steady"). Steps: (1) keep points inside the hold window,
// (2) find the first lock, (3) weighted mean and spread after it, (4) shares.
//
// Definitions (all times in seconds, deviations in cents, + is sharp):
//   window   W = [hold_start_s, hold_start_s + hold_dur_s); points outside
//            are ignored. Each point stands for the span [t, t + hop_s),
//            cut at the end of W; that span is its weight w.
//   in       a point is "in" when voiced, its deviation finite and
//            |dev| <= tolerance_cents (the band's edge counts as in).
//   run      consecutive in-points, where no voiced point is out of the band
//            and the uncovered time between two in-points (an unvoiced
//            gap or missing readings) is at most bridge_s.
//   lock     t_lock = the time of the first in-point whose run covers at
//            least dwell_s, measured from t_lock to the end of the run's
//            last in-point's span. time_to_lock_s = t_lock - hold_start_s.
//            A run cut short by the end of W does not lock.
//   held     voiced points with t >= t_lock. mean_dev_cents and spread_cents
//            are the w-weighted mean and population standard deviation
//            (divide by the total weight) over them. Without a lock they
//            are taken over every voiced point of W instead, so a performer
//            who never locked still learns which way and how far they were.
//   shares   in_tolerance_share = weight of in-points / weight of voiced
//            points in W (from hold_start_s, before and after the lock);
//            voiced_share = weight of voiced points / length of W.
// Points need not be in time order; points with a non-finite time are
// ignored. Empty input, or no voiced point: locked = false, the rest NaN, voiced 0.
//
// Thread: any. Allocates: only when points are out of order (a sorted copy).
#pragma once

#include "pitch/measure/reading.h"

#include <cmath>
#include <cstddef>
#include <span>
#include <vector>

namespace beatless::ui {

struct HoldPoint {
    double t_s = 0.0;        // time of the reading
    double dev_cents = NAN;  // deviation from the target, + is sharp
    bool voiced = false;     // false when the tracker heard no pitch
};

struct HoldScoreConfig {
    double tolerance_cents = 10.0;  // half-width of the band around the target; default 10
    double dwell_s = 0.3;           // time to stay in the band for a lock; default 0.3
    double hold_start_s = 0.0;      // start of the hold window; default 0
    double hold_dur_s = INFINITY;   // length of the window; default: to the last point's span end
    double hop_s = 0.005;           // time each point stands for (the tracker's hop); default 0.005
    double bridge_s = 0.05;         // unvoiced gaps up to this long keep a run going; default 0.05
};

struct HoldScore {
    bool locked = false;
    double time_to_lock_s = NAN;      // t_lock - hold_start_s; NaN without a lock
    double held_s = 0.0;              // from t_lock to the end of the window (0 without a lock)
    double mean_dev_cents = NAN;      // weighted mean signed deviation while held
    double spread_cents = NAN;        // weighted population standard deviation while held
    double in_tolerance_share = NAN;  // 0..1 of the voiced time in the window
    double voiced_share = 0.0;        // 0..1 of the window
    std::size_t points_used = 0;      // points inside the window
};

HoldScore score_hold(std::span<const HoldPoint> points, const HoldScoreConfig& config);

// Which deviation of a Reading the score uses.
enum class DeviationSource {
    instant,       // Reading::dev_cents
    centre_first,  // Reading::centre_dev_cents (the vibrato centre) where known, else dev_cents
};

// Converts readings to hold points; a reading is voiced when f0 > 0 and the
// chosen deviation is finite.
std::vector<HoldPoint> hold_points(std::span<const pitch::Reading> readings, DeviationSource source);

}  // namespace beatless::ui
