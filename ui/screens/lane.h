// The lane — the horizontal deviation display around the current target,
// shared by the Practice and Drills screens.
//
// A band spanning exactly -50 .. +50 cents (x = centre + dev_cents * width /
// 100; the snapshot tests find the band's edges in the PNG and check the
// marker against this), the in-tune window (±in_tune_cents, a colour only
// the lane uses), ticks every 5 cents with labels every 10 below the band,
// "flat" and "sharp" at the ends, the marker at the verdict (ui/session/verdict.h:
// the vibrato centre once known, the pitch before) as a needle with the
// state's shape (up sharp, down flat, a disc in tune), the instantaneous
// pitch as a half-second fading trail and, while the verdict is the centre,
// a small "now" tick on its own track below the labels. When the verdict is
// not current (silence, low confidence) the marker is drawn hollow and dim
// and labelled "last". Deviations beyond the band pin the marker to its edge
// with an outward arrow and the verdict's value.
#pragma once

#include "pitch/measure/reading.h"
#include "ui/session/app_state.h"

#include <imgui.h>

#include <cmath>

namespace beatless::ui {

constexpr double kLaneHalfCents = 50.0;  // the lane spans ±50 cents
constexpr double kLaneTrailS = 0.5;      // the marker's fading trail

struct LaneView {
    double in_tune_cents = 5.0;           // half-width of the in-tune window; default 5
    const Verdict* verdict = nullptr;     // what the marker shows; null or idle: the lane alone
    const TraceStore* trail = nullptr;    // readings for the trail (newest last); null: none
    bool show_now = true;                 // the "now" tick below the labels (needs about 2.5 body units)
};

// Draws the lane with its band's top-left at (x0, y0); the marker's head
// rises about 1.4 body units above, the labels and the centre track take
// about 3 below.
void draw_lane(ImDrawList* dl, float x0, float y0, float w, float band_h, const LaneView& v);

}  // namespace beatless::ui
