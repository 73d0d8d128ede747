// Ensemble — the screen a director reads while a group tunes a chord.
//
//   ┌ chord title, terms, root ─────────────────── reference: [Drone] [Bass] [Best fit] ┐
//   │ one card per player, side by side, in the order they are listed:                   │
//   │   name · the voice's ratio as the table writes it, the octave sung, channel; a     │
//   │   vertical lane ±30 cents (up = sharp) with the                                     │
//   │   centre's bar and a short trail; the deviation large, ▲ sharp / ▼ flat / ● in     │
//   │   tune in shape and word, and which way to move ("lower 8 c")                      │
//   │ between neighbouring cards: the partials that meet and their beat rate; a legend   │
//   ├ the chord chart: every voice, top first ──────────┬ chord and players (editable) ──┤
//
// The lane maps cents to pixels linearly: y = middle - dev_cents * height / 60,
// so the band spans exactly -30 .. +30 cents (the snapshot test reads the bar
// back from the PNG). The deviation shown is the vibrato centre's under the
// chosen reference (pitch/measure/ensemble_analyzer.h); the trail is the instantaneous pitch.
// One reading, one verdict: a card's bar, number, word, shape and colour
// show that centre; silence or no reading for 0.1 s clears it ("last: ...").
// Every text drawn is recorded in the view (ui/screens/screen_ensemble.h).
//
// Index: [text] [strip] [beats] [chart] [editor] [header] [screen]
#include "ui/screens/screen_ensemble.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/measure/ensemble_analyzer.h"
#include "pitch/theory/notes.h"
#include "ui/screens/beat_view.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"
#include "ui/session/beat_pulse.h"
#include "ui/session/ensemble_plan.h"
#include "ui/session/ensemble_session.h"
#include "ui/session/target_files.h"
#include "ui/session/wording.h"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>  // key codes only

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <initializer_list>
#include <string>

namespace beatless::ui {

namespace {

constexpr double kLaneHalfCents = 30.0;  // the lane spans ±30 cents

ImVec4 v4(std::uint32_t c) { return ImGui::ColorConvertU32ToFloat4(c); }

constexpr pitch::ChordReference kRefs[] = {pitch::ChordReference::fixed_root, pitch::ChordReference::sounding_bass,
                                           pitch::ChordReference::best_fit};

constexpr KeyHelp kEnsembleKeys[] = {
    {"1 / 2 / 3", "reference: drone root / sounding bass / best-fit root"},
    {"Bar", "in a player's lane: their vibrato centre; up is sharp"},
    {"Lower / raise", "under the number: which way and how far to move"},
};

class EnsembleScreen final : public Screen {
public:
    EnsembleScreen() {
        trail_.reserve(256);
        chord_buf_[0] = '\0';
        for (auto& b : name_buf_) b[0] = '\0';
    }
    ScreenId id() const override { return ScreenId::ensemble; }
    std::span<const KeyHelp> keys() const override { return kEnsembleKeys; }
    void build(AppState& app, const ScreenArea& area, double dt_s) override;
    bool status(const AppState&, StatusView& v) const override {
        // The group's own input: the loudest microphone's level, any
        // channel clipping, the ensemble engine's overflows and latency.
        v.input = session_.input_text();
        if (session_.has_current()) {
            const pitch::EnsembleReading& r = session_.current();
            for (int i = 0; i < r.players; ++i) {
                v.level_dbfs = std::max(v.level_dbfs, r.p[static_cast<std::size_t>(i)].level_dbfs);
                v.clipped = v.clipped || r.p[static_cast<std::size_t>(i)].clipped;
            }
        }
        const audio::EngineStatus st = session_.status();
        v.overflows = st.ring_overflow_events + st.device_input_overflows + st.device_output_underflows;
        v.latency_s = session_.engine_running() ? st.latency_s : 0.0;
        v.input_lost = input_lost(st, session_.engine_running());
        return true;
    }
    void left(AppState& app) override {
        session_.leave(app);
    }  // the group's engine stops; the app's gets the devices back

private:
    void header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void put(ImDrawList* dl, FontFace face, ImVec2 pos, std::uint32_t colour, std::string_view text,
             const ViewBox& panel);
    float put_wrapped(ImDrawList* dl, FontFace face, ImVec2 pos, std::uint32_t colour, std::string_view text,
                      float max_w, const ViewBox& panel);
    void strip(AppState& app, ImDrawList* dl, std::size_t i, float x0, float y0, float w, float h);
    void beat_row(ImDrawList* dl, const std::vector<float>& xs, float x0, float y0, float w, float h, double dt_s);
    void chart(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void editor(AppState& app, float x0, float y0, float w, float h);
    void input_combo(AppState& app);

    EnsembleSession session_;
    std::array<BeatPulse, pitch::kMaxPlayers> pulses_;
    char chord_buf_[96];
    char name_buf_[pitch::kMaxPlayers][40];
    bool bufs_from_settings_ = false;
    std::vector<ImVec2> trail_;  // the lane's trail, reused every frame
    DevicePicker inputs_;
    std::array<double, pitch::kMaxPlayers> last_dev_{};  // each card's last verdict, for "last: ..."
    std::array<bool, pitch::kMaxPlayers> has_last_{};
    std::array<int, pitch::kMaxPlayers> octaves_{};  // the octave each player last sang in (cards and table)

public:
    EnsembleView view_;  // what the last frame showed (ensemble_view())
};

// ---------------------------------------------------------------------------
// [SECTION] Text
// ---------------------------------------------------------------------------

// Draws and records a piece of text (the view's boxes are what the tests check).
void EnsembleScreen::put(ImDrawList* dl, FontFace face, ImVec2 pos, std::uint32_t colour, std::string_view text,
                         const ViewBox& panel) {
    draw_text(dl, face, pos, colour, text);
    const ImVec2 sz = text_size(face, text);
    const float x = std::round(pos.x), y = std::round(pos.y);
    view_.texts.push_back({std::string(text), ViewBox{x, y, x + sz.x, y + sz.y}, panel});
}

// Words wrapped to max_w pixels, one line under another; returns the y under the last line.
float EnsembleScreen::put_wrapped(ImDrawList* dl, FontFace face, ImVec2 pos, std::uint32_t colour,
                                  std::string_view text, float max_w, const ViewBox& panel) {
    float y = pos.y;
    for (const std::string& line : wrap_lines(face, text, max_w)) {
        if (y + font_px(face) > panel.y1) break;  // no line half under the panel's edge
        put(dl, face, ImVec2(pos.x, y), colour, line, panel);
        y += font_px(face) + 1.0f;
    }
    return y;
}

// The first face in `faces` whose rendering of text fits max_w; the last otherwise.
FontFace fitting_face(std::initializer_list<FontFace> faces, std::string_view text, float max_w) {
    for (FontFace f : faces)
        if (text_size(f, text).x <= max_w) return f;
    return *(faces.end() - 1);
}

// "+1 oct", "−2 oct"; empty for the table's own octave.
std::string octave_text(int octaves) {
    if (octaves == 0) return {};
    return (octaves > 0 ? std::string("+") : std::string("\xE2\x88\x92")) + std::to_string(std::abs(octaves)) + " oct";
}

// ---------------------------------------------------------------------------
// [SECTION] Strip
// ---------------------------------------------------------------------------

void EnsembleScreen::strip(AppState& app, ImDrawList* dl, std::size_t i, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const pitch::Player& pl = session_.players()[i];
    const pitch::ChordReference ref = app.settings().ensemble.reference;
    const bool live = session_.has_current();
    const pitch::EnsembleReading& r = session_.current();
    const pitch::PlayerReading& p = r.p[i];
    const double tol = app.settings().in_tune_cents;
    const ViewBox panel{x0, y0, x0 + w, y0 + h};
    EnsembleCardView& cv = view_.cards[i];
    cv = EnsembleCardView{};
    cv.box = panel;
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float pad = std::round(0.5f * u);
    const float inner = w - 2.0f * pad;
    dl->PushClipRect(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), true);

    // The name, in one face on every card, cut with an ellipsis when long.
    cv.name = fit_text(FontFace::medium, pl.name, inner);
    put(dl, FontFace::medium, ImVec2(x0 + pad, y0 + pad), palette::kText, cv.name, panel);
    float y = y0 + pad + font_px(FontFace::medium) + std::round(0.15f * u);

    // The voice's ratio as the table writes it, the octave it is sung in and
    // the channel, flowing onto a second line when the card is narrow.
    const pitch::Ratio vr = session_.chord().chord.voice_ratio(pl.voice);
    cv.ratio = vr.str();
    cv.octaves = octaves_[i];
    struct Item {
        std::string text;
        FontFace face;
        std::uint32_t colour;
    };
    const Item items[] = {{cv.ratio, FontFace::bold, palette::kYellow},
                          {octave_text(cv.octaves), FontFace::body, palette::kText},
                          {"ch " + std::to_string(pl.channel + 1), FontFace::body, palette::kTextDim}};
    const float line_h = font_px(FontFace::bold) + std::round(0.1f * u);
    // The lines this takes with an octave shown, so every card's lane starts
    // at the same height whether or not its player sings in another octave.
    int lines = 1;
    {
        float fx = x0 + pad;
        for (const Item& it : items) {
            const float iw =
                text_size(it.face, it.text.empty() && &it == &items[1] ? std::string("+1 oct") : it.text).x;
            if (fx > x0 + pad && fx + iw > x0 + pad + inner) {
                fx = x0 + pad;
                ++lines;
            }
            fx += iw + std::round(0.5f * u);
        }
    }
    const float items_y = y;
    float x = x0 + pad;
    for (const Item& it : items) {
        if (it.text.empty()) continue;
        const float iw = text_size(it.face, it.text).x;
        if (x > x0 + pad && x + iw > x0 + pad + inner) {
            x = x0 + pad;
            y += line_h;
        }
        const float dy =
            it.face == FontFace::bold ? 0.0f : std::round(0.5f * (font_px(FontFace::bold) - font_px(it.face)));
        put(dl, it.face, ImVec2(x, y + dy), it.colour, fit_text(it.face, it.text, inner), panel);
        x += iw + std::round(0.5f * u);
    }
    y = items_y + static_cast<float>(lines) * line_h + std::round(0.35f * u);

    // The lane: vertical, ±30 cents, up is sharp.
    // Narrow strips (many players) keep the lane slim.
    const bool narrow = w < 10.0f * u;
    const float lane_w = narrow ? std::round(1.1f * u) : std::round(std::clamp(0.3f * w, 2.0f * u, 3.4f * u));
    const float lx0 = x0 + pad, lx1 = lx0 + lane_w;
    const float ly0 = std::round(y), ly1 = std::round(y0 + h - pad);
    const float mid = std::round(0.5f * (ly0 + ly1));
    const float ppc = (ly1 - ly0) / static_cast<float>(2.0 * kLaneHalfCents);
    auto y_of = [&](double dev) { return mid - static_cast<float>(dev) * ppc; };
    dl->AddRectFilled(ImVec2(lx0, ly0), ImVec2(lx1, ly1), palette::kPanelRaised);
    dl->AddRectFilled(ImVec2(lx0, std::round(y_of(tol))), ImVec2(lx1, std::round(y_of(-tol))), palette::kInTuneZone);
    for (int c = -30; c <= 30; c += 10) {
        const float ty = std::round(y_of(c));
        const float len = c == 0 ? lane_w : std::round(0.3f * lane_w);
        dl->AddRectFilled(ImVec2(lx0, ty - (c == 0 ? 1.0f : 0.0f)), ImVec2(lx0 + len, ty + 1.0f),
                          c == 0 ? palette::kTextDim : palette::kGrid);
    }
    if (!narrow) {
        const char* top = "+30";
        const char* bottom =
            "\xE2\x88\x92"
            "30";
        put(dl, FontFace::body,
            ImVec2(std::round(0.5f * (lx0 + lx1) - 0.5f * text_size(FontFace::body, top).x),
                   ly0 + std::round(0.15f * u)),
            palette::kTextDim, top, panel);
        put(dl, FontFace::body,
            ImVec2(std::round(0.5f * (lx0 + lx1) - 0.5f * text_size(FontFace::body, bottom).x),
                   ly1 - u - std::round(0.2f * u)),
            palette::kTextDim, bottom, panel);
    }

    const float tx = lx1 + std::round((narrow ? 0.5f : 0.7f) * u);  // the text block
    const float text_w = x0 + w - pad - tx;
    const float by = ly0 + std::round(0.2f * u);
    // The number's face: the largest in which any two-digit number fits the
    // width, and the height with the lines under it (the same on every card
    // and in every state); a wider number (far off) takes a smaller face.
    const float unit_gap = std::round(0.3f * u);
    const float unit_w = text_size(FontFace::body, "c").x + unit_gap;
    const float below_h =
        font_px(FontFace::medium) + font_px(FontFace::bold) + font_px(FontFace::body) + std::round(1.0f * u);
    FontFace big = FontFace::bold;
    for (FontFace f : {FontFace::large, FontFace::medium})
        if (text_size(f,
                      "\xE2\x88\x92"
                      "88")
                    .x <= text_w - unit_w &&
            by + font_px(f) + below_h <= ly1) {
            big = f;
            break;
        }
    const double dev = live ? r.dev(i, ref) : NAN;
    if (p.state == pitch::PlayerState::sounding && std::isfinite(dev) && live) {
        last_dev_[i] = dev;
        has_last_[i] = true;
    }
    auto problem = [&](CardState state, const std::string& word, const std::string& what, const std::string& hint) {
        cv.state = state;
        cv.word = word;
        cv.colour = palette::kWarning;
        draw_warning_sign(dl, ImVec2(tx + 0.6f * u, by + 0.7f * u), 0.6f * u, palette::kWarning);
        const FontFace wf = fitting_face({FontFace::bold, FontFace::body}, word, text_w - 1.5f * u);
        put(dl, wf, ImVec2(tx + 1.5f * u, by + 0.15f * u), palette::kWarning, fit_text(wf, word, text_w - 1.5f * u),
            panel);
        const float ny =
            put_wrapped(dl, FontFace::body, ImVec2(tx, by + 1.6f * u), palette::kText, what, text_w, panel);
        put_wrapped(dl, FontFace::body, ImVec2(tx, ny + std::round(0.2f * u)), palette::kTextDim, hint, text_w, panel);
        dl->PopClipRect();
    };
    if (!live || p.state == pitch::PlayerState::resting ||
        (p.state == pitch::PlayerState::sounding && !std::isfinite(dev))) {
        // Silence, or no reading this tenth of a second: no verdict, only "last: ...".
        cv.state = session_.engine_running() ? CardState::resting : CardState::no_input;
        cv.word = session_.engine_running() ? "resting" : "no input";
        cv.colour = palette::kTextDim;
        cv.number = "\xE2\x80\x93";
        put(dl, big, ImVec2(tx, by), palette::kTextFaint, cv.number, panel);
        const FontFace wf = fitting_face({FontFace::medium, FontFace::bold, FontFace::body}, cv.word, text_w);
        const float wy = by + font_px(big) + std::round(0.2f * u);
        put(dl, wf, ImVec2(tx, wy), palette::kTextDim, cv.word, panel);
        if (has_last_[i]) {
            const std::string value = signed_text(last_dev_[i], 0) + " c";
            cv.last = "last: " + value;
            const float ly = wy + font_px(wf) + std::round(0.3f * u);
            if (text_size(FontFace::body, cv.last).x <= text_w)
                put(dl, FontFace::body, ImVec2(tx, ly), palette::kTextFaint, cv.last, panel);
            else if (ly + 2.0f * font_px(FontFace::body) + 1.0f <=
                     y0 + h) {  // "last:" over the value, never the unit alone
                put(dl, FontFace::body, ImVec2(tx, ly), palette::kTextFaint, "last:", panel);
                put(dl, FontFace::body, ImVec2(tx, ly + font_px(FontFace::body) + 1.0f), palette::kTextFaint,
                    fit_text(FontFace::body, value, text_w), panel);
            }
        }
        dl->PopClipRect();
        return;
    }
    if (p.state == pitch::PlayerState::silent) {
        problem(CardState::silent, "SILENT", "no sound on ch " + std::to_string(pl.channel + 1), "check mic and cable");
        return;
    }
    if (p.state == pitch::PlayerState::copy) {
        const auto& other = session_.players()[static_cast<std::size_t>(std::max(0, p.copy_of))];
        problem(CardState::copy, "SAME VOICE", "as " + other.name + " (ch " + std::to_string(other.channel + 1) + ")",
                "mic hears the neighbour");
        return;
    }

    // The trail: the last half second of instantaneous pitch, moving left with age.
    const Tuning t = tuning_of(dev, tol);
    const bool other_note = p.state == pitch::PlayerState::off_voice;
    const std::uint32_t col = other_note ? palette::kTextDim : tuning_colour(t);
    const auto recent = session_.recent();
    trail_.clear();
    // The trail stays off the lane's "+30" and "-30" labels.
    const float label_h = narrow ? 0.0f : std::round(0.15f * u) + font_px(FontFace::body);
    dl->PushClipRect(ImVec2(lx0, ly0 + label_h), ImVec2(lx1, ly1 - label_h - std::round(0.05f * u)), true);
    for (const pitch::EnsembleReading& q : recent) {
        const double age = r.t_s - q.t_s;
        const double d = q.dev(i, ref, false);
        const bool ok = age >= 0.0 && age <= EnsembleSession::kRecentS &&
                        q.p[i].state == pitch::PlayerState::sounding && std::isfinite(d);
        if (ok) {
            const float qx =
                lx1 - std::round(0.3f * u) - static_cast<float>(age / EnsembleSession::kRecentS) * (lane_w - 0.6f * u);
            trail_.push_back(ImVec2(qx, y_of(std::clamp(d, -kLaneHalfCents, kLaneHalfCents))));
        }
        if ((!ok || &q == &recent.back()) && trail_.size() > 1) {
            dl->AddPolyline(trail_.data(), static_cast<int>(trail_.size()), palette::with_alpha(col, 110),
                            ImDrawFlags_None, 2.0f);
            trail_.clear();
        }
        if (!ok) trail_.clear();
    }
    dl->PopClipRect();
    // The centre's bar across the lane, pinned at the ends with an arrow beyond.
    const bool out = std::fabs(dev) > kLaneHalfCents;
    const float my = std::round(y_of(std::clamp(dev, -kLaneHalfCents, kLaneHalfCents)));
    const float bh = std::max(4.0f, std::round(0.22f * u));
    dl->AddRectFilled(ImVec2(lx0 - std::round(0.2f * u), my - std::floor(0.5f * bh)),
                      ImVec2(lx1 + std::round(0.2f * u), my - std::floor(0.5f * bh) + bh), col);
    if (out) {
        const float dir = dev > 0 ? -1.0f : 1.0f;  // up on screen for sharp
        const float cx = 0.5f * (lx0 + lx1);
        dl->AddTriangleFilled(ImVec2(cx, my + dir * 1.4f * u), ImVec2(cx - 0.6f * u, my + dir * 0.4f * u),
                              ImVec2(cx + 0.6f * u, my + dir * 0.4f * u), col);
    }

    // The number with its unit, the state in shape and word, and the move.
    cv.dev_cents = dev;
    cv.number = signed_text(dev, 0);
    cv.colour = col;
    if (text_size(big, cv.number).x > text_w - unit_w)
        big = fitting_face({FontFace::medium, FontFace::bold, FontFace::body}, cv.number, text_w - unit_w);
    put(dl, big, ImVec2(tx, by), col, cv.number, panel);
    put(dl, FontFace::body,
        ImVec2(tx + text_size(big, cv.number).x + unit_gap,
               by + font_px(big) - font_px(FontFace::body) - std::round(0.1f * font_px(big))),
        palette::kTextDim, "c", panel);
    float wy = by + font_px(big) + std::round(0.3f * u);
    if (other_note) {
        cv.state = CardState::other_note;
        cv.word = "other note";
        const std::string word = "OTHER NOTE";
        const FontFace wf = fitting_face({FontFace::bold, FontFace::body}, word, text_w);
        put(dl, wf, ImVec2(tx, wy), palette::kWarning, fit_text(wf, word, text_w), panel);
        wy += font_px(wf) + std::round(0.2f * u);
        const std::string what =
            p.near_voice >= 0
                ? "near " + session_.chord().chord.voice_ratio(static_cast<std::size_t>(p.near_voice)).str() +
                      ", assigned " + cv.ratio
                : "not near " + cv.ratio;
        put_wrapped(dl, FontFace::body, ImVec2(tx, wy), palette::kTextDim, what, text_w, panel);
        dl->PopClipRect();
        return;
    }
    cv.state = CardState::sounding;
    cv.word = std::string(tuning_word(t));
    // The shape before the word when both fit on a line; else the shape after the number.
    const FontFace inline_face = fitting_face({FontFace::medium, FontFace::bold}, cv.word, text_w);
    const float sr_inline = std::round(0.42f * font_px(inline_face));
    const bool shape_inline = text_size(inline_face, cv.word).x + 2.0f * sr_inline + std::round(0.3f * u) <= text_w;
    if (shape_inline) {
        draw_tuning_shape(dl, t, ImVec2(tx + sr_inline, wy + 0.55f * font_px(inline_face)), sr_inline, col);
        put(dl, inline_face, ImVec2(tx + 2.0f * sr_inline + std::round(0.3f * u), wy), col, cv.word, panel);
        wy += font_px(inline_face) + std::round(0.3f * u);
    } else {
        const FontFace wf = fitting_face({FontFace::bold, FontFace::body}, cv.word, text_w);
        const float sr = std::round(0.42f * font_px(FontFace::bold));
        const float nx = tx + text_size(big, cv.number).x + unit_w + std::round(0.4f * u) + sr;
        if (nx + sr <= x0 + w - pad)
            draw_tuning_shape(dl, t, ImVec2(nx, by + 0.55f * font_px(big)), sr, col);
        else
            draw_tuning_shape(dl, t, ImVec2(tx + text_w - sr, wy + font_px(wf) + std::round(0.3f * u) + sr), sr, col);
        put(dl, wf, ImVec2(tx, wy), col, fit_text(wf, cv.word, text_w), panel);
        wy += font_px(wf) + std::round(0.3f * u);
    }
    const long amount = std::lround(std::fabs(dev));
    const std::string move =
        t == Tuning::in_tune ? "hold" : (t == Tuning::sharp ? "lower " : "raise ") + std::to_string(amount) + " c";
    const FontFace mf = fitting_face({FontFace::bold, FontFace::body}, move, text_w);
    put(dl, mf, ImVec2(tx, wy), palette::kText, fit_text(mf, move, text_w), panel);
    wy += font_px(mf) + std::round(0.4f * u);
    // The pitch in Hz, small (secondary).
    char buf[48];
    std::snprintf(buf, sizeof buf, "%.1f Hz", p.centre_f0_hz);
    if (text_size(FontFace::body, buf).x > text_w) std::snprintf(buf, sizeof buf, "%.0f Hz", p.centre_f0_hz);
    if (wy + font_px(FontFace::body) <= y0 + h - pad)
        put(dl, FontFace::body, ImVec2(tx, wy), palette::kTextDim, fit_text(FontFace::body, buf, text_w), panel);
    dl->PopClipRect();
}

// ---------------------------------------------------------------------------
// [SECTION] Beats
// ---------------------------------------------------------------------------

// The beat icon: the last two seconds of the pair's envelope (ui/screens/beat_view.h).
void draw_beat_icon(ImDrawList* dl, const BeatPulse& p, ImVec2 p0, ImVec2 p1) {
    BeatViewStyle style;
    style.span_s = 2.0;
    style.background = palette::kPanelRaised;
    style.envelope = palette::kPulse;
    draw_beat_view(dl, p, p0, p1, style);
}

void EnsembleScreen::beat_row(ImDrawList* dl, const std::vector<float>& xs, float x0, float y0, float w, float h,
                              double dt_s) {
    const float u = ui_unit();
    const ViewBox panel{x0, y0, x0 + w, y0 + h};
    const auto& ps = session_.players();
    const bool live = session_.has_current();
    const pitch::EnsembleReading& r = session_.current();
    const float rad = std::round(0.45f * u);
    const float icons_h = std::round(2.4f * u);
    for (std::size_t i = 0; i + 1 < ps.size(); ++i) {
        const pitch::PairBeat pb = live ? r.pair(i, i + 1) : pitch::PairBeat{};
        const double hz = pb.beat_hz;
        pulses_[i].update(hz, dt_s);
        std::string top = live && pb.partial_a > 0 ? std::to_string(pb.partial_a) + ":" + std::to_string(pb.partial_b)
                                                   : std::string("\xE2\x80\x93");
        char rate[32];
        if (std::isfinite(hz))
            std::snprintf(rate, sizeof rate, hz < 9.95 ? "%.1f Hz" : "%.0f Hz", hz);
        else
            std::snprintf(rate, sizeof rate, "no beat");
        // Icon and words centred on the boundary between the two cards.
        const float label_w = std::max(text_size(FontFace::bold, top).x, text_size(FontFace::body, rate).x);
        const float icon_w = std::round(3.4f * u);
        const float group_w = icon_w + std::round(0.3f * u) + label_w;
        const float gx = std::round(xs[i] - 0.5f * group_w);
        const float cy = std::round(y0 + 0.5f * icons_h);
        draw_beat_icon(dl, pulses_[i], ImVec2(gx, cy - 1.9f * rad), ImVec2(gx + icon_w, cy + 1.9f * rad));
        const float lx = gx + icon_w + std::round(0.3f * u);
        put(dl, FontFace::bold, ImVec2(lx, y0 + std::round(0.05f * u)), palette::kText, top, panel);
        put(dl, FontFace::body, ImVec2(lx, y0 + std::round(0.05f * u) + font_px(FontFace::bold)),
            std::isfinite(hz) ? palette::kText : palette::kTextDim, rate, panel);
    }
    // The legend: what the icons between the cards say.
    view_.legend = ps.size() > 1;
    if (!view_.legend) return;
    const float ly = y0 + icons_h + std::round(0.1f * u);
    const std::string legend =
        "between cards: the partials that meet, their beat rate, and the beat drawn as it sounds (wider lobes: slower)";
    put(dl, FontFace::body, ImVec2(x0, ly), palette::kTextDim, fit_text(FontFace::body, legend, w), panel);
}

// ---------------------------------------------------------------------------
// [SECTION] Chart
// ---------------------------------------------------------------------------

void EnsembleScreen::chart(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const ViewBox panel{x0, y0, x0 + w, y0 + h};
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float pad = std::round(0.5f * u);
    const float inner = w - 2.0f * pad;
    const float row = std::round(1.3f * u);
    char b1[96], b2[96];
    std::snprintf(b1, sizeof b1, "%s on %s = %.2f Hz", session_.chord().chord.terms_text().c_str(),
                  app.settings().root.c_str(), session_.root_hz());
    dl->PushClipRect(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), true);
    const pitch::ChordChart& ch = session_.chart();
    const auto nv = static_cast<int>(ch.voices.size());
    const float min_row = font_px(FontFace::bold) + 1.0f;
    const float heads_h = font_px(FontFace::body) + std::round(0.2f * u);
    const float titles_h =
        font_px(FontFace::bold) + std::round(0.1f * u) + font_px(FontFace::body) + std::round(0.3f * u);
    // When every row cannot fit under the two title lines, the rows come
    // first: the header already names the chord and the reference.
    const bool titles = h - 2.0f * pad - heads_h - titles_h >= static_cast<float>(nv) * min_row;
    float y = y0 + pad;
    if (titles) {
        put(dl, FontFace::bold, ImVec2(x0 + pad, y0 + pad), palette::kText, fit_text(FontFace::bold, b1, inner), panel);
        // The root the chosen reference gives, against the drone.
        const pitch::ChordReference ref = app.settings().ensemble.reference;
        const double root = session_.has_current() ? session_.current().root_hz[pitch::reference_index(ref)] : NAN;
        const double off = 1200.0 * std::log2(root / session_.root_hz());
        if (ref == pitch::ChordReference::fixed_root)
            std::snprintf(b2, sizeof b2, "measured against the drone root");
        else if (std::isfinite(off))
            std::snprintf(b2, sizeof b2, "%s root %.2f Hz, %s c from the drone",
                          ref == pitch::ChordReference::best_fit ? "best-fit" : "bass's", root,
                          signed_text(off, 1).c_str());
        else
            std::snprintf(b2, sizeof b2, "%s: waiting for the players", std::string(reference_title(ref)).c_str());
        y = y0 + pad + font_px(FontFace::bold) + std::round(0.1f * u);
        put(dl, FontFace::body, ImVec2(x0 + pad, y), palette::kTextDim, fit_text(FontFace::body, b2, inner), panel);
        y += font_px(FontFace::body) + std::round(0.3f * u);
    }
    // Columns in units: ratio, Hz, note, from ET, sung by.
    const float cols[] = {0.0f, 3.2f, 6.8f, 9.4f, 13.6f};
    const char* heads[] = {"ratio", "Hz", "note", "from ET", "sung by"};
    for (int k = 0; k < 5; ++k)
        put(dl, FontFace::body, ImVec2(x0 + pad + cols[k] * u, y), palette::kTextDim, heads[k], panel);
    y += heads_h;
    // Every voice gets a row: rows close up to the font's height when many;
    // if even that is too tall, the lowest rows are summed up as "+N more".
    const auto& ps = session_.players();
    const float bottom = y0 + h - pad;
    float step = std::min(row, (bottom - y) / static_cast<float>(std::max(1, nv)));
    int shown = nv;
    if (step < min_row) {
        step = min_row;
        shown = std::max(0, static_cast<int>((bottom - y) / step) - 1);
    }
    view_.rows.clear();
    view_.rows_hidden = nv - shown;
    for (int k = 0; k < shown; ++k) {
        const std::size_t v = static_cast<std::size_t>(nv - 1 - k);  // highest first, as a score reads
        const auto& vc = ch.voices[v];
        char hz[32], et[32];
        std::snprintf(hz, sizeof hz, "%.2f", vc.freq_hz);
        std::snprintf(et, sizeof et, "%s c", signed_text(vc.note.offset_cents, 1).c_str());
        std::string who;
        for (std::size_t i = 0; i < ps.size(); ++i)
            if (ps[i].voice == v) {
                const std::string oct = octave_text(octaves_[i]);
                who += (who.empty() ? "" : ", ") + ps[i].name + (oct.empty() ? "" : " " + oct);
            }
        EnsembleRowView rv{vc.ratio.str(), vc.note.name, who.empty() ? "nobody" : who};
        put(dl, FontFace::bold, ImVec2(x0 + pad + cols[0] * u, y), palette::kYellow, rv.ratio, panel);
        put(dl, FontFace::mono, ImVec2(x0 + pad + cols[1] * u, y), palette::kText, hz, panel);
        put(dl, FontFace::body, ImVec2(x0 + pad + cols[2] * u, y), palette::kText, rv.note, panel);
        put(dl, FontFace::mono, ImVec2(x0 + pad + cols[3] * u, y), palette::kText, et, panel);
        put(dl, FontFace::body, ImVec2(x0 + pad + cols[4] * u, y), who.empty() ? palette::kTextFaint : palette::kText,
            fit_text(FontFace::body, rv.who, inner - cols[4] * u), panel);
        view_.rows.push_back(std::move(rv));
        y += step;
    }
    if (view_.rows_hidden > 0) {
        std::string rest;
        for (int k = shown; k < nv; ++k)
            rest += (k > shown ? ", " : "") + ch.voices[static_cast<std::size_t>(nv - 1 - k)].ratio.str();
        put(dl, FontFace::body, ImVec2(x0 + pad, y), palette::kTextDim,
            fit_text(FontFace::body, "+" + std::to_string(view_.rows_hidden) + " more below: " + rest, inner), panel);
    }
    dl->PopClipRect();
}

// ---------------------------------------------------------------------------
// [SECTION] Editor
// ---------------------------------------------------------------------------

// The multi-channel input: every device with inputs, with its channel count
// (a group of four needs four); the demo ensemble stands in with --demo.
void EnsembleScreen::input_combo(AppState& app) {
    const float u = ui_unit();
    ImGui::AlignTextToFramePadding();
    ImGui::TextColored(v4(palette::kTextDim), "Input");
    ImGui::SameLine();
    if (app.options().demo || app.options().no_input) {
        ImGui::TextUnformatted(session_.input_text().c_str());
        return;
    }
    const EnsembleSettings& es = app.settings().ensemble;
    const std::string shown = es.input_device.empty() ? "system default: " + session_.input_text() : es.input_device;
    ImGui::SetNextItemWidth(std::round(14.0f * u));
    EnsembleSettings e = es;
    if (inputs_.combo(app, "##ensemble_input", es.input_device, shown, true, true, e.input_device))
        session_.apply(app, e);
}

void EnsembleScreen::editor(AppState& app, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    ImGui::SetCursorScreenPos(ImVec2(x0, y0));
    ImGui::PushStyleColor(ImGuiCol_ChildBg, v4(palette::kPanel));
    ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, ImVec2(std::round(0.5f * u), std::round(0.4f * u)));
    ImGui::BeginChild("##ensemble_editor", ImVec2(w, h), false, ImGuiWindowFlags_AlwaysUseWindowPadding);
    const EnsembleSettings es = app.settings().ensemble;
    const bool typing = ImGui::GetIO().WantTextInput;
    if (!bufs_from_settings_ || !typing) {
        std::snprintf(chord_buf_, sizeof chord_buf_, "%s", es.chord.c_str());
        for (std::size_t i = 0; i < pitch::kMaxPlayers; ++i)
            std::snprintf(name_buf_[i], sizeof name_buf_[i], "%s",
                          i < session_.players().size() ? session_.players()[i].name.c_str() : "");
        bufs_from_settings_ = true;
    }
    ImGui::AlignTextToFramePadding();
    ImGui::TextColored(v4(palette::kTextDim), "Chord");
    ImGui::SameLine();
    ImGui::SetNextItemWidth(std::round(8.0f * u));
    if (ImGui::InputText("##chord", chord_buf_, sizeof chord_buf_, ImGuiInputTextFlags_EnterReturnsTrue)) {
        EnsembleSettings e = es;
        e.chord = pitch::trim(chord_buf_).empty() ? es.chord : std::string(pitch::trim(chord_buf_));
        session_.apply(app, e);
    }
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("4:5:6:7, \"1/1 5/4 3/2\" or a built-in chord; Enter applies");
    ImGui::SameLine();
    ImGui::SetNextItemWidth(std::round(7.0f * u));
    if (ImGui::BeginCombo("##chords", "built-in")) {
        for (const std::string& n : builtin_names("chord"))
            if (ImGui::Selectable(n.c_str(), n == es.chord)) {
                EnsembleSettings e = es;
                e.chord = n;
                session_.apply(app, e);
            }
        ImGui::EndCombo();
    }
    ImGui::SameLine();
    ImGui::TextColored(v4(palette::kTextDim), "root %s", app.settings().root.c_str());
    input_combo(app);
    ImGui::TextColored(v4(palette::kTextDim), "Names listed top voice first (S, A, T, B); voice of each:");

    // One row per player: name, voice, channel.
    const auto& ps = session_.players();
    const std::size_t nv = session_.chord().chord.size();
    std::vector<pitch::Player> edited = ps;
    bool changed = false;
    for (std::size_t i = 0; i < ps.size(); ++i) {
        ImGui::PushID(static_cast<int>(i));
        ImGui::SetNextItemWidth(std::round(6.5f * u));
        if (ImGui::InputText("##name", name_buf_[i], sizeof name_buf_[i], ImGuiInputTextFlags_EnterReturnsTrue)) {
            const std::string n(pitch::trim(name_buf_[i]));
            if (!n.empty() && n.find(',') == std::string::npos) {
                edited[i].name = n;
                changed = true;
            }
        }
        ImGui::SameLine();
        ImGui::SetNextItemWidth(std::round(4.2f * u));
        const std::string cur = session_.chord().chord.voice_ratio(ps[i].voice).str();
        if (ImGui::BeginCombo("##voice", cur.c_str())) {
            for (std::size_t v = 0; v < nv; ++v) {
                const std::string label =
                    "voice " + std::to_string(v + 1) + ": " + session_.chord().chord.voice_ratio(v).str();
                if (ImGui::Selectable(label.c_str(), v == ps[i].voice)) {
                    edited[i].voice = v;
                    changed = true;
                }
            }
            ImGui::EndCombo();
        }
        ImGui::SameLine();
        int ch = ps[i].channel + 1;
        ImGui::SetNextItemWidth(std::round(4.5f * u));
        if (ImGui::InputInt("ch##ch", &ch, 1, 1) && ch >= 1 && ch <= 64) {
            edited[i].channel = ch - 1;
            changed = true;
        }
        ImGui::PopID();
    }
    if (ImGui::Button("+ player") && ps.size() < pitch::kMaxPlayers) {
        int top = 0;
        for (const auto& p : ps) top = std::max(top, p.channel + 1);
        edited.push_back({"Player " + std::to_string(ps.size() + 1), std::min(ps.size(), nv - 1), top});
        changed = true;
    }
    ImGui::SameLine();
    if (ImGui::Button("\xE2\x88\x92 player") && ps.size() > 1) {
        edited.pop_back();
        changed = true;
    }
    if (changed) {
        const PlanLists l = lists_of(edited);
        EnsembleSettings e = es;
        e.channels = l.channels;
        e.names = l.names;
        e.voices = l.voices;
        session_.apply(app, e);
        bufs_from_settings_ = false;
    }
    ImGui::EndChild();
    ImGui::PopStyleVar();
    ImGui::PopStyleColor();
}

// ---------------------------------------------------------------------------
// [SECTION] Header
// ---------------------------------------------------------------------------

void EnsembleScreen::header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const ChordFile& c = session_.chord();
    const std::string title = c.title.empty() ? "Chord " + c.chord.terms_text() : c.title;
    const ViewBox panel{x0, y0, x0 + w, y0 + h};
    const float ty = y0 + std::round(0.5f * (h - font_px(FontFace::medium)));
    // The reference selector: three buttons; the chosen one filled, bold, with a disc.
    const pitch::ChordReference cur = app.settings().ensemble.reference;
    const float bw = std::round(8.4f * u), bh = std::round(1.9f * u), gap = std::round(0.3f * u);
    float bx = x0 + w - 3.0f * bw - 2.0f * gap;
    const float against_x = bx - text_size(FontFace::body, "against").x - std::round(0.5f * u);
    put(dl, FontFace::body, ImVec2(against_x, y0 + 0.5f * (h - u)), palette::kTextDim, "against", panel);
    const std::string shown_title = fit_text(FontFace::medium, title, against_x - x0 - u);
    put(dl, FontFace::medium, ImVec2(x0, ty), palette::kText, shown_title, panel);
    float x = x0 + text_size(FontFace::medium, shown_title).x + std::round(0.8f * u);
    char buf[96];
    std::snprintf(buf, sizeof buf, "%s on %s = %.2f Hz", c.chord.terms_text().c_str(), app.settings().root.c_str(),
                  session_.root_hz());
    if (!c.title.empty() && x + text_size(FontFace::body, buf).x < against_x - u)
        put(dl, FontFace::body, ImVec2(x, ty + std::round(0.3f * u)), palette::kTextDim, buf, panel);
    for (pitch::ChordReference r : kRefs) {
        const bool on = r == cur;
        const ImVec2 at(bx, std::round(y0 + 0.5f * (h - bh)));
        ImGui::SetCursorScreenPos(at);
        ImGui::PushStyleColor(ImGuiCol_Button, v4(on ? palette::kAccent : palette::kPanelRaised));
        ImGui::PushFont(font_of(on ? FontFace::bold : FontFace::body));
        const std::string label = std::string(on ? "   " : "") + std::string(reference_title(r)) + "##ref";
        if (ImGui::Button(label.c_str(), ImVec2(bw, bh))) session_.set_reference(app, r);
        ImGui::PopFont();
        ImGui::PopStyleColor();
        if (on)
            dl->AddCircleFilled(ImVec2(at.x + std::round(0.75f * u), at.y + 0.5f * bh), std::round(0.28f * u),
                                palette::kText, 16);
        bx += bw + gap;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Screen
// ---------------------------------------------------------------------------

void EnsembleScreen::build(AppState& app, const ScreenArea& area, double dt_s) {
    session_.update(app, dt_s);
    view_.texts.clear();
    view_.rows.clear();
    view_.rows_hidden = 0;
    view_.legend = false;
    view_.cards.assign(session_.ready() ? session_.players().size() : 0, EnsembleCardView{});
    if (session_.has_current())
        for (std::size_t i = 0; i < view_.cards.size(); ++i)
            if (session_.current().p[i].state == pitch::PlayerState::sounding)
                octaves_[i] = session_.current().p[i].octaves;
    if (!ImGui::GetIO().WantTextInput) {
        if (ImGui::IsKeyPressed(GLFW_KEY_1, false)) session_.set_reference(app, pitch::ChordReference::fixed_root);
        if (ImGui::IsKeyPressed(GLFW_KEY_2, false)) session_.set_reference(app, pitch::ChordReference::sounding_bass);
        if (ImGui::IsKeyPressed(GLFW_KEY_3, false)) session_.set_reference(app, pitch::ChordReference::best_fit);
    }
    const float u = ui_unit();
    const float W = area.size.x, H = area.size.y;
    ImDrawList* dl = begin_screen_panel("##ensemble", area);
    const float pad = std::round(0.8f * u);
    const float x0 = area.pos.x + pad, inner_w = W - 2.0f * pad;
    float y = area.pos.y + std::round(0.4f * u);
    if (!session_.ready()) {
        draw_text(dl, FontFace::medium, ImVec2(x0, y + u), palette::kTextDim, "No chord: choose one below");
        editor(app, x0, y + 4.0f * u, inner_w, H - 5.0f * u);
        end_screen_panel();
        return;
    }
    const float header_h = std::round(2.4f * u);
    header(app, dl, x0, y, inner_w, header_h);
    y += header_h + std::round(0.4f * u);

    // The chart and editor; taller when the chord has many voices, so the
    // table can give each its row (it says "+N more" when it cannot).
    const float voices = static_cast<float>(session_.chart().voices.size());
    const float table_h = 4.6f * u + voices * (font_px(FontFace::bold) + 1.0f);
    const float beats_h = std::round(2.5f * u) + std::round(1.3f * u);  // icons, then the legend
    const float base_h = std::clamp(0.34f * H, 8.5f * u, 13.0f * u);
    const float spare_h = area.pos.y + H - y - beats_h - std::round(0.8f * u) - 14.0f * u;  // the cards keep 14 units
    const float bottom_h = std::round(std::max(base_h, std::min({table_h, 0.42f * H, spare_h})));
    const float strips_h = area.pos.y + H - y - bottom_h - beats_h - std::round(0.8f * u);
    const std::size_t n = session_.players().size();
    const float gap = std::round(0.4f * u);
    const float sw = std::floor((inner_w - gap * static_cast<float>(n - 1)) / static_cast<float>(n));
    std::vector<float> bounds;
    for (std::size_t i = 0; i < n; ++i) {
        const float sx = x0 + static_cast<float>(i) * (sw + gap);
        strip(app, dl, i, sx, y, sw, strips_h);
        if (i + 1 < n) bounds.push_back(std::round(sx + sw + 0.5f * gap));
    }
    y += strips_h;
    beat_row(dl, bounds, x0, y + std::round(0.2f * u), inner_w, beats_h - std::round(0.2f * u), dt_s);
    y += beats_h + std::round(0.4f * u);
    const float chart_w = std::round(std::min(0.5f * inner_w, 22.0f * u));
    chart(app, dl, x0, y, chart_w, bottom_h);
    editor(app, x0 + chart_w + gap, y, inner_w - chart_w - gap, bottom_h);
    end_screen_panel();
}

}  // namespace

std::unique_ptr<Screen> make_ensemble_screen() { return std::make_unique<EnsembleScreen>(); }

const EnsembleView* ensemble_view(const Screen& screen) {
    const auto* e = dynamic_cast<const EnsembleScreen*>(&screen);
    return e ? &e->view_ : nullptr;
}

}  // namespace beatless::ui
