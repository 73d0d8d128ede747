// The Practice screen's two-voice view — see practice_duo.h.
//
//   ┌ the interval's ratio and name ─────────────── the verdict in cents, ▲/▼/● and wide / narrow / in tune ┐
//   │ the lane: ±50 cents around the interval's just target, the marker at the verdict                         │
//   │ lower voice: note, Hz, against the root · upper voice: ... · who should move, which way                   │
//   ├ the trace: both voices over 10 s, the interval's target line riding on the lower ─┬ the beat cue          │
//
// Index: [header] [lane] [voices] [trace] [beat cue] [view]
#include "ui/screens/practice_duo.h"

#include "pitch/base/error.h"
#include "pitch/measure/duo_advice.h"
#include "pitch/theory/notes.h"
#include "ui/screens/beat_view.h"
#include "ui/screens/lane.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"
#include "ui/session/wording.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>

namespace beatless::ui {

namespace {

constexpr double kTraceS = 10.0;
constexpr std::uint32_t kLowColour = palette::kLevelOk;  // the lower voice's line (grey: the reference)
constexpr std::uint32_t kHighColour = palette::kText;    // the upper voice's line

const char* quiet_word(DuoState s) {
    switch (s) {
        case DuoState::silent: return "silent";
        case DuoState::one_series: return "one pitch";
        case DuoState::uncertain: return "unsure";
        default: return "";
    }
}

pitch::Reading target_of(const pitch::TwoVoiceFrame& f) {
    pitch::Reading r;
    r.target_index = f.target_index;
    r.target_octaves = f.target_octaves;
    return r;
}

std::string beat_text(double hz) {
    char buf[32];
    std::snprintf(buf, sizeof buf, hz < 9.95 ? "%.1f Hz" : "%.0f Hz", hz < 9.95 ? std::round(hz * 10.0) / 10.0 : hz);
    return buf;
}

// ---------------------------------------------------------------------------
// [SECTION] Header
// ---------------------------------------------------------------------------

void header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const DuoVerdict& v = app.duo();
    const bool known = v.known(), live = v.current();
    std::string ratio = known ? app.target_ratio_text(target_of(v.pair)) : std::string("\xE2\x80\x93");
    std::string name = known ? app.target_name_text(target_of(v.pair)) : std::string("two voices");
    if (ratio.empty()) ratio = "\xE2\x80\x93";
    const float large = font_px(FontFace::large), medium = font_px(FontFace::medium);
    const float ty = y0 + std::round(0.5f * (h - large));
    draw_text(dl, FontFace::large, ImVec2(x0, ty), live ? palette::kText : palette::kTextDim, ratio);
    const float nx = x0 + text_size(FontFace::large, ratio).x + std::round(0.9f * u);
    const float ny = ty + std::round(0.08f * large);
    draw_text(dl, FontFace::medium, ImVec2(nx, ny), live ? palette::kText : palette::kTextDim,
              name.empty() ? std::string("interval") : name);
    draw_text(dl, FontFace::body, ImVec2(nx, ny + medium + std::round(0.25f * u)), palette::kTextDim,
              "the interval between two voices, nearest in " + app.targets().title + "  (V: one voice)");
    const float right = x0 + w;
    if (!known) {
        const std::string idle = !app.engine_running()             ? "no input"
                                 : v.state == DuoState::one_series ? "one pitch"
                                                                   : "listening\xE2\x80\xA6";
        draw_text(dl, FontFace::medium, ImVec2(right - text_size(FontFace::medium, idle).x, y0 + 0.5f * (h - medium)),
                  palette::kTextDim, idle);
        return;
    }
    const Tuning t = tuning_of(v.pair.dev_cents, app.settings().in_tune_cents);
    const std::string word =
        live ? std::string(interval_word(v.pair.dev_cents, app.settings().in_tune_cents)) : quiet_word(v.state);
    const std::string num = (live ? "" : "last ") + signed_text(v.pair.dev_cents, 0);
    draw_verdict_readout(dl, right, ty, ny, t, live, word, num, live ? "cents, the interval" : "cents");
}

// ---------------------------------------------------------------------------
// [SECTION] Lane: the interval's deviation, the one marker
// ---------------------------------------------------------------------------

}  // namespace

void draw_duo_lane(AppState& app, ImDrawList* dl, float x0, float y0, float w, float band_h, const DuoLook& look) {
    LaneView lv;
    lv.in_tune_cents = look.in_tune_cents;
    lv.low_word = "narrow";
    lv.high_word = "wide";
    draw_lane(dl, x0, y0, w, band_h, lv);
    const DuoVerdict& v = app.duo();
    if (!v.known() || !look.show_verdict) return;
    const float u = ui_unit();
    const double dev = std::clamp(v.pair.dev_cents, -kLaneHalfCents, kLaneHalfCents);
    const float x = std::round(x0 + 0.5f * w + static_cast<float>(dev) * w / static_cast<float>(2.0 * kLaneHalfCents));
    const Tuning t = tuning_of(v.pair.dev_cents, look.in_tune_cents);
    const std::uint32_t col = v.current() ? tuning_colour(t) : palette::kTextDim;
    const float mid = std::round(y0 + 0.5f * band_h), r = std::round(0.32f * band_h);
    dl->AddRectFilled(ImVec2(x - 2, y0 - std::round(0.6f * u)), ImVec2(x + 2, y0 + band_h), col);
    if (v.current()) {
        draw_tuning_shape(dl, t, ImVec2(x, mid), r, col);
    } else {
        dl->AddCircle(ImVec2(x, mid), r, col, 24, 2.0f);
        draw_text_centred(dl, FontFace::body, x, y0 - std::round(1.6f * u), palette::kTextDim, "last");
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Voices: both pitches (secondary) and who should move
// ---------------------------------------------------------------------------

void draw_duo_voices(AppState& app, ImDrawList* dl, float x0, float y0, const DuoLook& look) {
    const float u = ui_unit();
    const DuoVerdict& v = app.duo();
    if (!look.show_verdict) return;
    if (v.state == DuoState::one_series) {
        // One series heard: say why, claim no interval.
        char buf[160];
        const pitch::NearestNote n = pitch::hz_to_note(v.one_f0_hz, app.settings().a4_hz);
        std::snprintf(buf, sizeof buf, "%s  (%s %s c, %.1f Hz)", std::string(blend_words(v.blend)).c_str(),
                      n.name.c_str(), signed_text(n.offset_cents, 0).c_str(), v.one_f0_hz);
        draw_text(dl, FontFace::bold, ImVec2(x0, y0), palette::kText, buf);
        return;
    }
    if (!v.known()) return;
    const bool live = v.current();
    const pitch::TwoVoiceFrame& f = v.pair;
    const bool drone = look.against_root && app.drone_sounding();
    const pitch::DuoAdvice a = pitch::advise_duo(f, app.targets(), drone ? app.root_hz() : 0.0, look.in_tune_cents);
    const pitch::DuoAdvice over_root =
        pitch::advise_duo(f, app.targets(), look.against_root ? app.root_hz() : 0.0, look.in_tune_cents);
    float x = x0;
    auto put = [&](FontFace face, std::uint32_t col, const std::string& s, float gap) {
        draw_text(dl, face, ImVec2(x, y0), col, s);
        x += text_size(face, s).x + gap;
    };
    const std::uint32_t strong = live ? palette::kText : palette::kTextDim;
    if (!live) put(FontFace::body, palette::kTextDim, "last:", 0.6f * u);
    auto voice = [&](const char* label, double hz, const pitch::DuoVoiceJudgement& j, std::uint32_t swatch) {
        dl->AddRectFilled(ImVec2(x, y0 + 0.3f * u), ImVec2(x + 0.7f * u, y0 + 0.9f * u), swatch);
        x += std::round(1.0f * u);
        const pitch::NearestNote n = pitch::hz_to_note(hz, app.settings().a4_hz);
        char buf[96];
        std::snprintf(buf, sizeof buf, "%s %s %s c  %.1f Hz", label, n.name.c_str(),
                      signed_text(n.offset_cents, 0).c_str(), hz);
        put(FontFace::bold, strong, buf, 0.5f * u);
        if (j.target_index >= 0 && j.target_index < static_cast<int>(app.targets().targets.size())) {
            // The voice's own nearest target in the screen's set (advise_duo's index is into that set).
            const pitch::Interval& iv = app.targets().targets[static_cast<std::size_t>(j.target_index)].interval;
            std::string ratio;
            try {
                ratio = pitch::shift_octaves(iv, j.target_octaves).str();
            } catch (const Error&) {
                ratio = iv.str();
            }
            std::snprintf(buf, sizeof buf, "%s %s c over the root", ratio.c_str(), signed_text(j.dev_cents, 0).c_str());
            put(FontFace::body, palette::kTextDim, buf, 1.6f * u);
        } else {
            x += std::round(1.1f * u);
        }
    };
    voice("lower", f.f_low_hz, over_root.low, kLowColour);
    voice("upper", f.f_high_hz, over_root.high, kHighColour);
    // Who should move: the verdict's advice, in the verdict's colour.
    const std::string m = move_words(a);
    if (!m.empty() && live) {
        const std::string why = a.against_root ? "  (each voice against the drone)" : "  (the lower voice leads)";
        const float y1 = y0 + std::round(1.35f * u);
        const Tuning t = tuning_of(f.dev_cents, look.in_tune_cents);
        draw_text(dl, FontFace::bold, ImVec2(x0, y1),
                  a.mover == pitch::DuoMover::none ? palette::kInTune : tuning_colour(t), m);
        draw_text(dl, FontFace::body, ImVec2(x0 + text_size(FontFace::bold, m).x, y1), palette::kTextDim, why);
    }
}

namespace {

// ---------------------------------------------------------------------------
// [SECTION] Trace: both voices against the interval's target line
// ---------------------------------------------------------------------------

void trace(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h, DuoScratch& s) {
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float px0 = x0 + std::round(0.6f * u), px1 = x0 + w - std::round(3.2f * u);
    draw_text(dl, FontFace::body, ImVec2(px0, y0 + std::round(0.35f * u)), palette::kTextDim,
              "Trace: the last 10 s, each voice against its target (yellow)");
    const float top = y0 + std::round(1.7f * u), bottom = y0 + h - std::round(0.6f * u);
    if (bottom - top < 5.0f * u || px1 - px0 < 4.0f * u) return;
    const DuoTrace& tr = app.duo_trace();
    const double now = tr.size() ? tr.at(tr.size() - 1).t_s : 0.0;
    const double root = app.root_hz();
    const float ppsec = (px1 - px0) / static_cast<float>(kTraceS);
    const float gap = std::round(1.4f * u), strip_h = std::floor(0.5f * (bottom - top - gap));
    // Two strips of +-kStripCents: above, the upper voice against its just place over the lower voice
    // (the interval's deviation); below, the lower voice against its nearest target over the root.
    constexpr double kStripCents = 30.0;
    for (int strip = 0; strip < 2; ++strip) {
        const float sy0 = strip == 0 ? top : top + strip_h + gap, sy1 = sy0 + strip_h;
        const float cy = std::round(0.5f * (sy0 + sy1));
        const float ppc = strip_h / static_cast<float>(2.0 * kStripCents);
        dl->AddRectFilled(ImVec2(px0, sy0), ImVec2(px1, sy1), palette::kPanelRaised);
        for (int sec = 0; sec <= static_cast<int>(kTraceS); sec += 2) {
            const float x = std::round(px1 - static_cast<float>(sec) * ppsec);
            dl->AddLine(ImVec2(x + 0.5f, sy0), ImVec2(x + 0.5f, sy1), palette::with_alpha(palette::kGrid, 90));
        }
        dl->AddRectFilled(ImVec2(px0, cy - 1), ImVec2(px1, cy + 2), palette::kCurrentTarget);
        for (int c : {-20, 20})
            draw_text(dl, FontFace::body, ImVec2(px1 + std::round(0.3f * u), cy - c * ppc - 0.6f * u),
                      palette::kTextDim, signed_text(c, 0));
        draw_text(dl, FontFace::body, ImVec2(px0 + std::round(0.3f * u), sy0 + std::round(0.1f * u)), palette::kTextDim,
                  strip == 0 ? "upper voice against the interval over the lower" : "lower voice against the root");
        if (tr.size() == 0) continue;
        dl->PushClipRect(ImVec2(px0, sy0), ImVec2(px1, sy1), true);
        const std::uint32_t col = strip == 0 ? kHighColour : kLowColour;
        const float thick = std::max(2.0f, std::round(0.12f * u));
        std::size_t n = 0;
        double prev_t = -1e9, prev_dev = NAN;
        auto flush = [&] {
            if (n >= 2) dl->AddPolyline(s.points.data(), static_cast<int>(n), col, ImDrawFlags_None, thick);
            n = 0;
        };
        for (std::size_t i = 0; i < tr.size(); ++i) {
            const pitch::TwoVoiceFrame& f = tr.at(i);
            const double age = now - f.t_s;
            if (age > kTraceS) continue;
            double dev = NAN;
            const bool sure = f.voices == 2 && f.confidence >= DuoVerdictConfig{}.sure_confidence;
            if (sure && strip == 0) dev = f.dev_cents;
            if (sure && strip == 1 && !app.targets().targets.empty())
                dev = pitch::nearest_target(app.targets(), 1200.0 * std::log2(f.f_low_hz / root), true).dev_cents;
            // One true reading: a frame is drawn when the frame before it was sure and within 10 c of it, as the
            // verdict resumes after two agreeing frames; a lone frame at a note start or bow change is not.
            const bool agrees = std::isfinite(dev) && std::isfinite(prev_dev) && std::fabs(dev - prev_dev) <= 10.0 &&
                                f.t_s - prev_t <= 0.05;
            prev_dev = dev;
            prev_t = f.t_s;
            if (!agrees) {
                flush();
                continue;
            }
            if (n == s.points.size()) flush();
            s.points[n++] = ImVec2(px1 - static_cast<float>(age) * ppsec, cy - static_cast<float>(dev) * ppc);
        }
        flush();
        dl->PopClipRect();
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Beat cue: the measured beat when the partials give one
// ---------------------------------------------------------------------------

void beat_cue(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float x = x0 + std::round(0.8f * u);
    float y = y0 + std::round(0.35f * u);
    const DuoVerdict& v = app.duo();
    const BeatPulse& p = app.pulse();
    const bool have = v.current() && p.band() != pitch::BeatBand::none;
    draw_text(dl, FontFace::body, ImVec2(x, y), palette::kTextDim,
              have && v.beat_measured() ? "Beating (measured)" : "Beating (predicted)");
    y += std::round(1.4f * u);
    const std::string value = have        ? beat_text(p.beat_hz())
                              : v.known() ? std::string(quiet_word(v.state))
                                          : "\xE2\x80\x93";
    draw_text(dl, FontFace::large, ImVec2(x, y), have ? palette::kText : palette::kTextDim, value);
    y += font_px(FontFace::large) + std::round(0.3f * u);
    if (have) {
        const pitch::TwoVoiceFrame& f = v.pair;
        char line[96];
        if (v.beat_measured() && std::isfinite(f.predicted_beat_hz))
            std::snprintf(line, sizeof line, "from the pitches: %s", beat_text(f.predicted_beat_hz).c_str());
        else
            std::snprintf(line, sizeof line, "not yet measured in the sound");
        draw_text(dl, FontFace::body, ImVec2(x, y), palette::kTextDim, fit_text(FontFace::body, line, w - 1.6f * u));
        if (f.partial_low > 0) {
            const std::string a = ordinal(f.partial_low) + " partial of the lower voice";
            const std::string b = "against the " + ordinal(f.partial_high) + " of the upper";
            draw_text(dl, FontFace::body, ImVec2(x, y + std::round(1.2f * u)), palette::kText,
                      fit_text(FontFace::body, a, w - 1.6f * u));
            draw_text(dl, FontFace::body, ImVec2(x, y + std::round(2.4f * u)), palette::kText,
                      fit_text(FontFace::body, b, w - 1.6f * u));
        }
    }
    y += std::round(3.9f * u);
    const float room = y0 + h - y - std::round(0.5f * u);
    if (room < 3.0f * u) return;
    const float vx0 = x, vx1 = x0 + w - std::round(0.8f * u);
    const float vy0 = y, vy1 = y + room - std::round(1.8f * u);
    if (vy1 - vy0 < 1.5f * u) return;
    dl->AddRectFilled(ImVec2(vx0, vy0), ImVec2(vx1, vy1), palette::kPanelRaised);
    BeatViewStyle style;
    style.envelope = palette::kPulse;
    style.tick = palette::kText;
    style.tick_h = std::round(0.5f * u);
    if (v.known()) draw_beat_view(dl, p, ImVec2(vx0, vy0), ImVec2(vx1, vy1), style);
    std::string caption;
    switch (have ? p.band() : pitch::BeatBand::none) {
        case pitch::BeatBand::none: caption = v.known() ? "no pair now" : "play a double stop"; break;
        case pitch::BeatBand::still: caption = "nearly pure: hold it"; break;
        case pitch::BeatBand::countable: caption = "countable: slower is closer"; break;
        case pitch::BeatBand::flutter: caption = "a flutter: slower is closer"; break;
        case pitch::BeatBand::rough: caption = "heard as roughness, not as beats"; break;
    }
    draw_text(dl, FontFace::body, ImVec2(x, vy1 + std::round(0.3f * u)), have ? palette::kText : palette::kTextDim,
              fit_text(FontFace::body, caption, w - 1.6f * u));
}

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] View
// ---------------------------------------------------------------------------

void draw_practice_duo(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h, DuoScratch& s) {
    const float u = ui_unit();
    float y = y0;
    const float header_h = font_px(FontFace::large) + std::round(0.4f * u);
    header(app, dl, x0, y, w, header_h);
    y += header_h + std::round(1.8f * u);
    const float band_h = std::round(std::max(2.6f * u, 0.1f * h));
    const float lane_margin = std::round(1.6f * u);
    const DuoLook look{app.settings().in_tune_cents, true};
    draw_duo_lane(app, dl, x0 + lane_margin, y, w - 2.0f * lane_margin, band_h, look);
    y += band_h + std::round(1.6f * u);
    draw_duo_voices(app, dl, x0 + lane_margin, y, look);
    y += std::round(3.0f * u);
    const float mid_h = y0 + h - y;
    if (mid_h > 3.0f * u) {
        const float cue_w = std::round(std::clamp(0.27f * w, 13.0f * u, 20.0f * u));
        const float gap = std::round(0.6f * u);
        trace(app, dl, x0, y, w - cue_w - gap, mid_h, s);
        beat_cue(app, dl, x0 + w - cue_w, y, cue_w, mid_h);
    }
}

}  // namespace beatless::ui
