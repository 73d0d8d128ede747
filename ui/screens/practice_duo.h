// The Practice screen's two-voice view — a double stop or a duet from one microphone, read as one interval.
// Method: ours: the verdict is the interval's deviation from its just target (ui/session/duo_verdict.h); the lane
// shows it, the info lines show both voices (secondary, labelled) and who should move, the trace both voices'
// lines against the interval's target line, the beat cue the measured beat when the partials give one.
// Thread: the UI thread. Allocates: only through ImGui's draw lists and the scratch it is given (sized once).
#pragma once

#include "ui/session/app_state.h"

#include <imgui.h>

#include <vector>

namespace beatless::ui {

struct DuoScratch {
    std::vector<ImVec2> points = std::vector<ImVec2>(4096);  // the trace's polylines
};

// Draws everything above the controls into the area (x0, y0, w, h).
void draw_practice_duo(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h, DuoScratch& s);

// The parts another screen shows the same way (the Drills screen's double-stop holds).
struct DuoLook {
    double in_tune_cents = 5.0;  // the lane's window and the width that needs no move
    bool against_root = true;    // true: each voice also against the root, and with a drone the one farther from
                                 //   its target moves; false: the interval alone (a drill's target), the lower leads
    bool show_verdict = true;    // false: the lane and voices empty (a drill between its count-in and hold)
};
// The lane: the interval's deviation from its target, the one marker (band_h high at (x0, y0), w wide).
void draw_duo_lane(AppState& app, ImDrawList* dl, float x0, float y0, float w, float band_h, const DuoLook& look);
// Under the lane: both voices (secondary, labelled) and who should move; two lines of body text at (x0, y0).
void draw_duo_voices(AppState& app, ImDrawList* dl, float x0, float y0, const DuoLook& look);

}  // namespace beatless::ui
