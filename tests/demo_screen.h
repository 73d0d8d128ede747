// Demo screen — a busy test screen for the rasterizer, the window and the
// draw benchmark. Test code only: it is not the Practice screen.
//
// It resembles a tuner's working view: a wide band with a tick every cent
// from -50 to +50 and labels every 10, a marker, a scrolling pitch trace of
// a few thousand line segments against target lines, and panels of text and
// widgets (buttons, slider, checkbox, progress bar, plot, table, shapes).
// Everything is a function of the time given, so frames are reproducible.
#pragma once

#include "ui/render/imgui_host.h"

#include <vector>

namespace beatless::testing {

class DemoScreen {
public:
    explicit DemoScreen(int trace_points = 3000);

    // Builds one frame at time t_s (call between new_frame and render of an
    // ImGuiHost, which must be current).
    void build(float t_s);

    int trace_points() const { return static_cast<int>(trace_.size()); }

private:
    std::vector<ImVec2> trace_;  // sized once
    std::vector<float> plot_;    // sized once
    float slider_cents_ = 5.0f;
    bool drone_on_ = true;
    int voice_ = 1;
};

}  // namespace beatless::testing
