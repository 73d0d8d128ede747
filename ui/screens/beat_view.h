// BeatView — draws a BeatPulse's history as the scrolling envelope of the
// two coinciding partials' sum (ui/session/beat_pulse.h): one column per pixel, the
// newest at the right, a tick under each null (one beat), a steady dense band
// for rates heard as roughness, nothing where no beat was known (silence).
// Thread: the screens' thread.
#pragma once

#include "ui/session/beat_pulse.h"

#include <imgui.h>

#include <cstdint>

namespace beatless::ui {

struct BeatViewStyle {
    double span_s = 4.0;           // seconds across the view (default 4)
    std::uint32_t background = 0;  // 0: no background
    std::uint32_t envelope = 0;    // the lobes' colour
    std::uint32_t tick = 0;        // the null marks' colour; 0: none
    float tick_h = 0.0f;           // their height in pixels
};

void draw_beat_view(ImDrawList* dl, const BeatPulse& p, ImVec2 p0, ImVec2 p1, const BeatViewStyle& style);

}  // namespace beatless::ui
