// The lane — the horizontal deviation display around the current target,
// shared by the Practice and Drills screens.
//
// A band spanning exactly -50 .. +50 cents (x = centre + dev_cents * width /
// 100; the snapshot tests find the band's edges in the PNG and check the
// marker against this), the in-tune window (±in_tune_cents, a colour only
// the lane uses), ticks every 5 cents with labels every 10 below the band,
// "flat" and "sharp" at the ends, the marker (a needle with the state's
// shape: up sharp, down flat, a disc in tune) with a half-second fading
// trail, and a hollow diamond for the vibrato centre on its own track below
// the labels. Deviations beyond the band pin the marker to its edge with an
// outward arrow and the value.
#pragma once

#include "pitch/reading.h"
#include "ui/app_state.h"

#include <imgui.h>

#include <cmath>

namespace beatless::ui {

constexpr double kLaneHalfCents = 50.0;  // the lane spans ±50 cents
constexpr double kLaneTrailS = 0.5;      // the marker's fading trail

struct LaneView {
    double in_tune_cents = 5.0;           // half-width of the in-tune window; default 5
    const pitch::Reading* now = nullptr;  // the newest voiced reading; null: the lane alone
    const TraceStore* trail = nullptr;    // readings for the trail (newest last); null: none
};

// The deviation the readouts and the state use: the vibrato centre's when known.
inline double shown_dev_cents(const pitch::Reading& r) { return std::isfinite(r.centre_dev_cents) ? r.centre_dev_cents : r.dev_cents; }

// Draws the lane with its band's top-left at (x0, y0); the marker's head
// rises about 1.4 body units above, the labels and the centre track take
// about 3 below.
void draw_lane(ImDrawList* dl, float x0, float y0, float w, float band_h, const LaneView& v);

}  // namespace beatless::ui
