// The lane — see lane.h.
#include "ui/screens/lane.h"

#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"

#include <algorithm>
#include <cmath>
#include <string>

namespace beatless::ui {

void draw_lane(ImDrawList* dl, float x0, float y0, float w, float band_h, const LaneView& v) {
    const float u = ui_unit();
    const float lx0 = std::round(x0), lx1 = std::round(x0 + w);
    const float cx = 0.5f * (lx0 + lx1);
    const float ppc = (lx1 - lx0) / static_cast<float>(2.0 * kLaneHalfCents);
    const float by0 = std::round(y0), by1 = std::round(y0 + band_h);
    auto x_of = [&](double dev) { return cx + static_cast<float>(dev) * ppc; };

    dl->AddRectFilled(ImVec2(lx0, by0), ImVec2(lx1, by1), palette::kPanelRaised);
    const double tol = v.in_tune_cents;
    dl->AddRectFilled(ImVec2(std::round(x_of(-tol)), by0), ImVec2(std::round(x_of(tol)), by1), palette::kInTuneZone);
    // Ticks every 5 cents from the bottom edge, longer every 10; labels below.
    for (int c = -50; c <= 50; c += 5) {
        const float x = std::round(x_of(c));
        const bool major = c % 10 == 0;
        const float len = c == 0 ? band_h : std::round(band_h * (major ? 0.32f : 0.18f));
        const float th = c == 0 ? std::max(2.0f, std::round(0.1f * u)) : 1.0f;
        dl->AddRectFilled(ImVec2(x - std::floor(th * 0.5f), by1 - len), ImVec2(x - std::floor(th * 0.5f) + th, by1),
                          c == 0 ? palette::kTextDim : palette::kGrid);
        if (major) {
            const std::string s = c == 0 ? std::string("0") : signed_text(c, 0);
            draw_text_centred(dl, FontFace::body, x, by1 + std::round(0.2f * u), palette::kTextDim, s);
        }
    }
    // The ends in words, for whoever reads the lane for the first time; an
    // end where the marker is pinned shows the value there instead.
    const Verdict* vd = v.verdict && v.verdict->known() ? v.verdict : nullptr;
    const bool out = vd && std::fabs(vd->dev_cents) > kLaneHalfCents;
    const double pinned_side = out ? vd->dev_cents : 0.0;
    if (!(pinned_side < 0.0))
        draw_text(dl, FontFace::body, ImVec2(lx0 + std::round(0.4f * u), by0 + std::round(0.2f * u)), palette::kTextDim,
                  v.low_word);
    if (!(pinned_side > 0.0))
        draw_text(
            dl, FontFace::body,
            ImVec2(lx1 - std::round(0.4f * u) - text_size(FontFace::body, v.high_word).x, by0 + std::round(0.2f * u)),
            palette::kTextDim, v.high_word);

    if (!vd) return;
    const bool current = vd->current();
    const double target = vd->reading.target_cents;
    const Tuning t = tuning_of(vd->dev_cents, tol);
    const std::uint32_t col = current ? tuning_colour(t) : palette::kTextDim;
    const float mid = std::round(0.5f * (by0 + by1));

    // Trail: the last half second of instantaneous pitch, fading with age
    // (only while the verdict is current: a trail never outlives the sound).
    const std::size_t trail_n = current && v.trail ? v.trail->size() : 0;
    const double now_t = vd->reading.t_s;
    for (std::size_t i = trail_n; i-- > 0;) {
        const pitch::Reading& r = v.trail->at(i);
        const double age = now_t - r.t_s;
        if (age > kLaneTrailS) break;
        if (!r.voiced() || age < 0.0) continue;
        const double dev = r.cents_above_root - target;
        if (std::fabs(dev) > kLaneHalfCents) continue;
        const unsigned a = static_cast<unsigned>(std::lround(150.0 * (1.0 - age / kLaneTrailS)));
        const float rr = std::round(0.22f * u);
        dl->AddRectFilled(ImVec2(std::round(x_of(dev)) - rr, mid - rr), ImVec2(std::round(x_of(dev)) + rr, mid + rr),
                          palette::with_alpha(col, a));
    }

    // The marker: a needle across the band with the state's shape above it;
    // hollow and dim when it only remembers the last verdict.
    const double dev_now = vd->dev_cents;
    const double pinned = std::clamp(dev_now, -kLaneHalfCents, kLaneHalfCents);
    const float mx = std::round(x_of(pinned));
    const float nw = std::max(3.0f, std::round(0.3f * u));
    const float nx0 = mx - std::floor(nw * 0.5f);
    const ImVec2 n0(nx0, by0 - std::round(0.25f * u)), n1(nx0 + nw, by1 + std::round(0.1f * u));
    if (current)
        dl->AddRectFilled(n0, n1, col);
    else
        dl->AddRect(n0, n1, col, 0.0f, 0, 1.0f);
    const float head_r = std::round(0.5f * u);
    const ImVec2 head(mx, by0 - std::round(0.35f * u) - head_r);
    if (current)
        draw_tuning_shape(dl, t, head, head_r, col);
    else {
        const float lw = text_size(FontFace::body, "last").x;
        draw_text(dl, FontFace::body, ImVec2(std::round(std::clamp(mx - 0.5f * lw, lx0, lx1 - lw)), head.y - 0.6f * u),
                  col, "last");
    }
    if (out) {  // pinned: an arrow outward and the verdict's value
        const float dir = dev_now > 0 ? 1.0f : -1.0f;
        dl->AddTriangleFilled(ImVec2(mx + dir * 1.6f * u, mid), ImVec2(mx + dir * 0.5f * u, mid - 0.7f * u),
                              ImVec2(mx + dir * 0.5f * u, mid + 0.7f * u), col);
        const std::string s = signed_text(dev_now, 0) + " c";
        const float sw = text_size(FontFace::bold, s).x;
        draw_text(dl, FontFace::bold, ImVec2(dir > 0 ? mx - sw - 0.8f * u : mx + 0.8f * u, by0 + 0.15f * u),
                  current ? palette::kText : col, s);
    }

    // Secondary: while the verdict is the vibrato centre, the instantaneous
    // pitch as a small tick on its own track below the labels, marked "now".
    if (v.show_now && current && vd->source == VerdictSource::centre && std::isfinite(vd->reading.dev_cents)) {
        const double c = std::clamp(vd->reading.dev_cents, -kLaneHalfCents, kLaneHalfCents);
        const float dy = by1 + std::round(1.2f * u) + std::round(0.6f * u) + std::round(0.5f * u);
        const float dx = std::round(x_of(c));
        const float r = std::round(0.45f * u);
        dl->AddTriangleFilled(ImVec2(dx, dy - r), ImVec2(dx - r, dy + r), ImVec2(dx + r, dy + r),
                              palette::kCentreMarker);
        // Its word on the side with room: right of it, or left near the sharp end.
        const float word_w = text_size(FontFace::body, "now").x;
        const float wx = dx + 0.9f * u + word_w <= lx1 + 0.5f * u ? dx + 0.9f * u : dx - 0.9f * u - word_w;
        draw_text(dl, FontFace::body, ImVec2(std::round(wx), dy - 0.5f * u), palette::kTextDim, "now");
    }
}

}  // namespace beatless::ui
