// Drill chart — the Drills screen's panel of small plots of a drill's progress.
//
// Each series of ui/session/drill_progress.h as a small plot over at most
// the last 30 days (a dot per day that has attempts, the tolerance band and
// the target line for holds), its label and its latest value; the targets
// that do not fit are counted, pointing to `beatless history`.
#pragma once

#include "ui/session/drill_progress.h"

#include <imgui.h>

namespace beatless::ui {

void draw_drill_progress(ImDrawList* dl, const DrillProgress& h, const Drill& drill, float x0, float y0, float w,
                         float hgt);

}  // namespace beatless::ui
