// BeatView — see beat_view.h.
#include "ui/screens/beat_view.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace beatless::ui {

void draw_beat_view(ImDrawList* dl, const BeatPulse& p, ImVec2 p0, ImVec2 p1, const BeatViewStyle& st) {
    const float x0 = std::round(p0.x), x1 = std::round(p1.x), y0 = std::round(p0.y), y1 = std::round(p1.y);
    if (x1 - x0 < 2.0f || y1 - y0 < 2.0f) return;
    if (st.background) dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x1, y1), st.background);
    const float cy = std::round(0.5f * (y0 + y1));
    const float half = std::max(1.0f, 0.5f * (y1 - y0) - std::max(1.0f, st.tick_h));
    if (p.band() == pitch::BeatBand::rough) {
        dl->AddRectFilled(ImVec2(x0, cy - 0.45f * half), ImVec2(x1, cy + 0.45f * half), st.envelope);
        return;
    }
    const double s_per_px = st.span_s / static_cast<double>(x1 - x0);
    double prev = NAN;
    BeatPulse::Walker walk(p);  // columns right to left: one pass over the history
    for (float px = x1 - 1.0f; px >= x0; px -= 1.0f) {
        const double ph = walk.phase_ago(static_cast<double>(x1 - 1.0f - px) * s_per_px);
        if (!std::isfinite(ph)) {
            prev = NAN;
            continue;
        }
        const float e = static_cast<float>(std::fabs(std::cos(std::numbers::pi * ph)));
        const float hh = std::max(1.0f, std::round(e * half));
        dl->AddRectFilled(ImVec2(px, cy - hh), ImVec2(px + 1.0f, cy + hh + 1.0f), st.envelope);
        // A null of the envelope: the phase passes k + 1/2.
        if (st.tick && std::isfinite(prev) && std::floor(prev - 0.5) != std::floor(ph - 0.5))
            dl->AddRectFilled(ImVec2(px, y1 - st.tick_h), ImVec2(px + 1.0f, y1), st.tick);
        prev = ph;
    }
}

}  // namespace beatless::ui
