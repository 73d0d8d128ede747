// Drill score — how well one hold of a target was sung or played: time to lock, mean deviation, spread, share in tune.
// Method: ours, no published source (common practice in intonation teaching: how fast, how close, how steady);
// the definitions (window, in, run, lock, held, shares) are in DEVELOPERS.md, "Methods in detail".
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
