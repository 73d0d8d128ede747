// The lane — the horizontal deviation display around the current target, shared by the Practice and Drills screens.
// Method: ours: a -50 .. +50 cent band with the in-tune window, the marker at the verdict (ui/session/verdict.h)
// in the state's shape, the instantaneous pitch as a fading trail. Layout: DEVELOPERS.md, "Methods in detail".
// Thread: the UI thread. Allocates: only through ImGui's draw lists.
#pragma once

#include "pitch/measure/reading.h"
#include "ui/session/app_state.h"

#include <imgui.h>

#include <cmath>

namespace beatless::ui {

constexpr double kLaneHalfCents = 50.0;  // the lane spans ±50 cents
constexpr double kLaneTrailS = 0.5;      // the marker's fading trail

struct LaneView {
    double in_tune_cents = 5.0;         // half-width of the in-tune window; default 5
    const Verdict* verdict = nullptr;   // what the marker shows; null or idle: the lane alone
    const TraceStore* trail = nullptr;  // readings for the trail (newest last); null: none
    bool show_now = true;               // the "now" tick below the labels (needs about 2.5 body units)
    const char* low_word = "flat";      // the ends in words ("narrow" / "wide" for an interval)
    const char* high_word = "sharp";
};

// Draws the lane with its band's top-left at (x0, y0); the marker's head
// rises about 1.4 body units above, the labels and the centre track take
// about 3 below.
void draw_lane(ImDrawList* dl, float x0, float y0, float w, float band_h, const LaneView& v);

}  // namespace beatless::ui
