// Ensemble — the screen a director reads while a group tunes a chord.
//
//   ┌ chord title, terms, root ─────────────────── reference: [Drone] [Bass] [Best fit] ┐
//   │ one strip per player, side by side, in the order they are listed:                  │
//   │   name · ratio · channel; a vertical lane ±30 cents (up = sharp) with the         │
//   │   centre's bar and a short trail; the deviation large, ▲ sharp / ▼ flat / ● in     │
//   │   tune in shape and word, and which way to move ("lower 8 c")                      │
//   │ between neighbouring strips: the partials that meet and their beat rate, pulsing   │
//   ├ the chord chart: ratio, Hz, note, cents from ET ──┬ chord and players (editable) ──┤
//
// The lane maps cents to pixels linearly: y = middle - dev_cents * height / 60,
// so the band spans exactly -30 .. +30 cents (the snapshot test reads the bar
// back from the PNG). The deviation shown is the vibrato centre's under the
// chosen reference (pitch/ensemble.h); the trail is the instantaneous pitch.
//
// Index: [strip] [beats] [chart] [editor] [header] [screen]
#include "pitch/ensemble.h"
#include "pitch/error.h"
#include "pitch/notes.h"
#include "pitch/text.h"
#include "ui/beat_pulse.h"
#include "ui/beat_view.h"
#include "ui/draw_kit.h"
#include "ui/ensemble_plan.h"
#include "ui/ensemble_session.h"
#include "ui/palette.h"
#include "ui/screen.h"
#include "ui/target_files.h"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>  // key codes only

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <string>

namespace beatless::ui {

namespace {

constexpr ImGuiWindowFlags kPanelFlags = ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove | ImGuiWindowFlags_NoSavedSettings |
                                         ImGuiWindowFlags_NoBringToFrontOnFocus | ImGuiWindowFlags_NoScrollWithMouse;
constexpr double kLaneHalfCents = 30.0;  // the lane spans ±30 cents

ImVec4 v4(std::uint32_t c) { return ImGui::ColorConvertU32ToFloat4(c); }


constexpr pitch::ChordReference kRefs[] = {pitch::ChordReference::fixed_root, pitch::ChordReference::sounding_bass,
                                           pitch::ChordReference::best_fit};

constexpr KeyHelp kEnsembleKeys[] = {
    {"1 / 2 / 3", "reference: drone root / sounding bass / best-fit root"},
    {"Bar", "in a player's lane: their vibrato centre; up is sharp"},
    {"Lower / raise", "under the number: which way and how far to move"},
};

// The ratio the player sings: the chord voice moved by their octaves.
std::string sung_ratio(const pitch::Ratio& r, int octaves) {
    std::int64_t num = r.num, den = r.den;
    for (int k = 0; k < octaves && num < (std::int64_t{1} << 40); ++k) (den % 2 == 0) ? den /= 2 : num *= 2;
    for (int k = 0; k > octaves && den < (std::int64_t{1} << 40); --k) (num % 2 == 0) ? num /= 2 : den *= 2;
    return std::to_string(num) + "/" + std::to_string(den);
}

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
        const audio::EnsembleStatus st = session_.status();
        v.overflows = st.ring_overflow_events + st.device_input_overflows + st.device_output_underflows;
        v.latency_s = session_.engine_running() ? st.latency_s : 0.0;
        return true;
    }
    void left(AppState& app) override { session_.leave(app); }  // the group's engine stops; the app's gets the devices back

private:
    void header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void strip(AppState& app, ImDrawList* dl, std::size_t i, float x0, float y0, float w, float h);
    void beat_row(ImDrawList* dl, const std::vector<float>& xs, float y0, float h, double dt_s);
    void chart(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void editor(AppState& app, float x0, float y0, float w, float h);
    void input_combo(AppState& app);

    EnsembleSession session_;
    std::array<BeatPulse, pitch::kMaxPlayers> pulses_;
    char chord_buf_[96];
    char name_buf_[pitch::kMaxPlayers][40];
    bool bufs_from_settings_ = false;
    std::vector<ImVec2> trail_;   // the lane's trail, reused every frame
    DevicePicker inputs_;
};

// ---------------------------------------------------------------------------
// [strip]
// ---------------------------------------------------------------------------

void EnsembleScreen::strip(AppState& app, ImDrawList* dl, std::size_t i, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const pitch::Player& pl = session_.players()[i];
    const pitch::ChordReference ref = app.settings().ensemble.reference;
    const bool live = session_.has_current();
    const pitch::EnsembleReading& r = session_.current();
    const pitch::PlayerReading& p = r.p[i];
    const double tol = app.settings().in_tune_cents;
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float pad = std::round(0.5f * u);
    dl->PushClipRect(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), true);

    // Name, then ratio and channel.
    const FontFace name_face = text_size(FontFace::medium, pl.name).x <= w - 2.0f * pad ? FontFace::medium : FontFace::bold;
    draw_text(dl, name_face, ImVec2(x0 + pad, y0 + pad), palette::kText, pl.name);
    float y = y0 + pad + font_px(name_face) + std::round(0.15f * u);
    const pitch::Ratio vr = session_.chord().chord.voice_ratio(pl.voice);
    const int oct = live ? p.octaves : 0;
    const std::string sub = sung_ratio(vr, oct) + "   ch " + std::to_string(pl.channel + 1);
    draw_text(dl, FontFace::bold, ImVec2(x0 + pad, y), palette::kYellow, sung_ratio(vr, oct));
    draw_text(dl, FontFace::body, ImVec2(x0 + pad + text_size(FontFace::bold, sung_ratio(vr, oct)).x + std::round(0.6f * u), y),
              palette::kTextDim, "ch " + std::to_string(pl.channel + 1));
    (void)sub;
    y += u + std::round(0.6f * u);

    // The lane: vertical, ±30 cents, up is sharp.
    // Narrow strips (many players) keep the lane slim and the words smaller.
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
        dl->AddRectFilled(ImVec2(lx0, ty - (c == 0 ? 1.0f : 0.0f)), ImVec2(lx0 + len, ty + 1.0f), c == 0 ? palette::kTextDim : palette::kGrid);
    }
    if (!narrow) {
        draw_text_centred(dl, FontFace::body, 0.5f * (lx0 + lx1), ly0 + std::round(0.15f * u), palette::kTextDim, "+30");
        draw_text_centred(dl, FontFace::body, 0.5f * (lx0 + lx1), ly1 - u - std::round(0.2f * u), palette::kTextDim, "\xE2\x88\x92" "30");
    }

    const float tx = lx1 + std::round((narrow ? 0.5f : 0.7f) * u);  // the text block
    const float text_w = x0 + w - pad - tx;
    const FontFace big = text_w >= 5.0f * u ? FontFace::large : FontFace::medium;
    const FontFace word_face = narrow ? FontFace::bold : FontFace::medium;
    const float by = ly0 + std::round(0.2f * u);
    auto problem = [&](const std::string& word, const std::string& what) {
        draw_warning_sign(dl, ImVec2(tx + 0.6f * u, by + 0.7f * u), 0.6f * u, palette::kWarning);
        draw_text(dl, FontFace::bold, ImVec2(tx + 1.5f * u, by + 0.15f * u), palette::kWarning, word);
        draw_text(dl, FontFace::body, ImVec2(tx, by + 1.6f * u), palette::kText, what);
    };
    const double dev = live ? r.dev(i, ref) : NAN;
    if (!live || p.state == pitch::PlayerState::resting || (p.state == pitch::PlayerState::sounding && !std::isfinite(dev))) {
        draw_text(dl, big, ImVec2(tx, by), palette::kTextFaint, "\xE2\x80\x93");
        draw_text(dl, FontFace::medium, ImVec2(tx, by + font_px(big) + std::round(0.2f * u)), palette::kTextDim,
                  session_.engine_running() ? "resting" : "no input");
        dl->PopClipRect();
        return;
    }
    if (p.state == pitch::PlayerState::silent) {
        problem("SILENT", "no sound on ch " + std::to_string(pl.channel + 1));
        draw_text(dl, FontFace::body, ImVec2(tx, by + 2.8f * u), palette::kTextDim, "check mic and cable");
        dl->PopClipRect();
        return;
    }
    if (p.state == pitch::PlayerState::copy) {
        const auto& other = session_.players()[static_cast<std::size_t>(std::max(0, p.copy_of))];
        problem("SAME VOICE", "as " + other.name + " (ch " + std::to_string(other.channel + 1) + ")");
        draw_text(dl, FontFace::body, ImVec2(tx, by + 2.8f * u), palette::kTextDim, "mic hears the neighbour");
        dl->PopClipRect();
        return;
    }

    // The trail: the last half second of instantaneous pitch, moving left with age.
    const Tuning t = tuning_of(dev, tol);
    const std::uint32_t col = p.state == pitch::PlayerState::off_voice ? palette::kTextDim : tuning_colour(t);
    // (a faint line, newest at the right edge of the lane)
    const auto recent = session_.recent();
    trail_.clear();
    for (const pitch::EnsembleReading& q : recent) {
        const double age = r.t_s - q.t_s;
        const double d = q.dev(i, ref, false);
        const bool ok = age >= 0.0 && age <= EnsembleSession::kRecentS && q.p[i].state == pitch::PlayerState::sounding && std::isfinite(d);
        if (ok) {
            const float qx = lx1 - std::round(0.3f * u) - static_cast<float>(age / EnsembleSession::kRecentS) * (lane_w - 0.6f * u);
            trail_.push_back(ImVec2(qx, y_of(std::clamp(d, -kLaneHalfCents, kLaneHalfCents))));
        }
        if ((!ok || &q == &recent.back()) && trail_.size() > 1) {
            dl->AddPolyline(trail_.data(), static_cast<int>(trail_.size()), palette::with_alpha(col, 110), ImDrawFlags_None, 2.0f);
            trail_.clear();
        }
        if (!ok) trail_.clear();
    }
    // The centre's bar across the lane, pinned at the ends with an arrow beyond.
    const bool out = std::fabs(dev) > kLaneHalfCents;
    const float my = std::round(y_of(std::clamp(dev, -kLaneHalfCents, kLaneHalfCents)));
    const float bh = std::max(4.0f, std::round(0.22f * u));
    dl->AddRectFilled(ImVec2(lx0 - std::round(0.2f * u), my - std::floor(0.5f * bh)), ImVec2(lx1 + std::round(0.2f * u), my - std::floor(0.5f * bh) + bh), col);
    if (out) {
        const float dir = dev > 0 ? -1.0f : 1.0f;  // up on screen for sharp
        const float cx = 0.5f * (lx0 + lx1);
        dl->AddTriangleFilled(ImVec2(cx, my + dir * 1.4f * u), ImVec2(cx - 0.6f * u, my + dir * 0.4f * u), ImVec2(cx + 0.6f * u, my + dir * 0.4f * u), col);
    }

    // The number, the state in shape and word, and the move.
    const std::string num = signed_text(dev, 0);
    draw_text(dl, big, ImVec2(tx, by), col, num);
    draw_text(dl, FontFace::body, ImVec2(tx + text_size(big, num).x + std::round(0.3f * u), by + font_px(big) - u - std::round(0.3f * u)),
              palette::kTextDim, "c");
    float wy = by + font_px(big) + std::round(0.3f * u);
    if (p.state == pitch::PlayerState::off_voice) {
        draw_text(dl, FontFace::bold, ImVec2(tx, wy), palette::kWarning, "OTHER NOTE");
        draw_text(dl, FontFace::body, ImVec2(tx, wy + 1.3f * u), palette::kTextDim, "not near " + sung_ratio(vr, oct));
        dl->PopClipRect();
        return;
    }
    const float sr = std::round(0.42f * font_px(word_face));
    if (narrow) {  // the shape after the number, the word on a line of its own
        const float nx = tx + text_size(big, num).x + text_size(FontFace::body, "c").x + std::round(0.9f * u) + sr;
        draw_tuning_shape(dl, t, ImVec2(nx, by + 0.55f * font_px(big)), sr, col);
        draw_text(dl, word_face, ImVec2(tx, wy), col, std::string(tuning_word(t)));
    } else {
        draw_tuning_shape(dl, t, ImVec2(tx + sr, wy + 0.55f * font_px(word_face)), sr, col);
        draw_text(dl, word_face, ImVec2(tx + 2.0f * sr + std::round(0.3f * u), wy), col, std::string(tuning_word(t)));
    }
    wy += font_px(word_face) + std::round(0.3f * u);
    const long amount = std::lround(std::fabs(dev));
    const std::string move = t == Tuning::in_tune ? "hold" : (t == Tuning::sharp ? "lower " : "raise ") + std::to_string(amount) + (narrow ? "" : " c");
    draw_text(dl, narrow ? FontFace::body : FontFace::bold, ImVec2(tx, wy), palette::kText, move);
    wy += u + std::round(0.5f * u);
    // Level and the pitch in Hz, small.
    char buf[48];
    std::snprintf(buf, sizeof buf, "%.1f Hz", p.centre_f0_hz);
    draw_text(dl, FontFace::body, ImVec2(tx, wy), palette::kTextDim, buf);
    dl->PopClipRect();
}

// ---------------------------------------------------------------------------
// [beats]
// ---------------------------------------------------------------------------

void EnsembleScreen::beat_row(ImDrawList* dl, const std::vector<float>& xs, float y0, float h, double dt_s) {
    const float u = ui_unit();
    const auto& ps = session_.players();
    const bool live = session_.has_current();
    const pitch::EnsembleReading& r = session_.current();
    for (std::size_t i = 0; i + 1 < ps.size(); ++i) {
        const pitch::PairBeat pb = live ? r.pair(i, i + 1) : pitch::PairBeat{};
        const double hz = pb.beat_hz;
        pulses_[i].update(hz, dt_s);
        const float cx = xs[i];
        const float rad = std::round(0.45f * u);
        const ImVec2 c(cx - std::round(2.6f * u), std::round(y0 + 0.5f * h));
        // A small beat view: the last two seconds of the pair's envelope.
        BeatViewStyle style;
        style.span_s = 2.0;
        style.background = palette::kPanelRaised;
        style.envelope = palette::kPulse;
        draw_beat_view(dl, pulses_[i], ImVec2(c.x - rad, c.y - rad), ImVec2(c.x + rad, c.y + rad), style);
        std::string top = live && pb.partial_a > 0 ? std::to_string(pb.partial_a) + ":" + std::to_string(pb.partial_b) : std::string("\xE2\x80\x93");
        char rate[32];
        if (std::isfinite(hz)) std::snprintf(rate, sizeof rate, hz < 9.95 ? "%.1f Hz" : "%.0f Hz", hz);
        else std::snprintf(rate, sizeof rate, "no beat");
        const float lx = c.x + rad + std::round(0.4f * u);
        draw_text(dl, FontFace::bold, ImVec2(lx, y0 + std::round(0.1f * u)), palette::kText, top);
        draw_text(dl, FontFace::body, ImVec2(lx, y0 + std::round(1.2f * u)), std::isfinite(hz) ? palette::kText : palette::kTextDim, rate);
    }
}

// ---------------------------------------------------------------------------
// [chart]
// ---------------------------------------------------------------------------

void EnsembleScreen::chart(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float pad = std::round(0.5f * u);
    const float row = std::round(1.3f * u);
    char b1[96], b2[96];
    std::snprintf(b1, sizeof b1, "%s on %s = %.2f Hz", session_.chord().chord.terms_text().c_str(), app.settings().root.c_str(), session_.root_hz());
    draw_text(dl, FontFace::bold, ImVec2(x0 + pad, y0 + pad), palette::kText, b1);
    // The root the chosen reference gives, against the drone.
    const pitch::ChordReference ref = app.settings().ensemble.reference;
    const double root = session_.has_current() ? session_.current().root_hz[pitch::reference_index(ref)] : NAN;
    const double off = 1200.0 * std::log2(root / session_.root_hz());
    if (ref == pitch::ChordReference::fixed_root) std::snprintf(b2, sizeof b2, "measured against the drone root");
    else if (std::isfinite(off))
        std::snprintf(b2, sizeof b2, "%s root %.2f Hz, %s c from the drone", ref == pitch::ChordReference::best_fit ? "best-fit" : "bass's",
                      root, signed_text(off, 1).c_str());
    else std::snprintf(b2, sizeof b2, "%s: waiting for the players", std::string(pitch::reference_title(ref)).c_str());
    draw_text(dl, FontFace::body, ImVec2(x0 + pad, y0 + pad + row), palette::kTextDim, b2);
    const float cols[] = {0.0f, 3.2f, 7.6f, 10.4f, 14.8f};  // in units: ratio, Hz, note, from ET, sung by
    float y = y0 + pad + 2.0f * row + std::round(0.2f * u);
    const char* heads[] = {"ratio", "Hz", "note", "from ET", "sung by"};
    for (int k = 0; k < 5; ++k) draw_text(dl, FontFace::body, ImVec2(x0 + pad + cols[k] * u, y), palette::kTextDim, heads[k]);
    y += row;
    const pitch::ChordChart& ch = session_.chart();
    const auto& ps = session_.players();
    dl->PushClipRect(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), true);
    for (std::size_t v = ch.voices.size(); v-- > 0;) {  // highest first, as a score reads
        if (y + row > y0 + h) break;
        const auto& vc = ch.voices[v];
        char hz[32], et[32];
        std::snprintf(hz, sizeof hz, "%.2f", vc.freq_hz);
        std::snprintf(et, sizeof et, "%s c", signed_text(vc.note.offset_cents, 1).c_str());
        std::string who;
        for (const auto& p : ps)
            if (p.voice == v) who += (who.empty() ? "" : ", ") + p.name;
        draw_text(dl, FontFace::bold, ImVec2(x0 + pad + cols[0] * u, y), palette::kYellow, vc.ratio.str());
        draw_text(dl, FontFace::mono, ImVec2(x0 + pad + cols[1] * u, y), palette::kText, hz);
        draw_text(dl, FontFace::body, ImVec2(x0 + pad + cols[2] * u, y), palette::kText, vc.note.name);
        draw_text(dl, FontFace::mono, ImVec2(x0 + pad + cols[3] * u, y), palette::kText, et);
        draw_text(dl, FontFace::body, ImVec2(x0 + pad + cols[4] * u, y), who.empty() ? palette::kTextFaint : palette::kText, who.empty() ? "nobody" : who);
        y += row;
    }
    dl->PopClipRect();
}

// ---------------------------------------------------------------------------
// [editor]
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
    if (inputs_.combo(app, "##ensemble_input", es.input_device, shown, true, true, e.input_device)) session_.apply(app, e);
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
            std::snprintf(name_buf_[i], sizeof name_buf_[i], "%s", i < session_.players().size() ? session_.players()[i].name.c_str() : "");
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
                const std::string label = "voice " + std::to_string(v + 1) + ": " + session_.chord().chord.voice_ratio(v).str();
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
// [header]
// ---------------------------------------------------------------------------

void EnsembleScreen::header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const ChordFile& c = session_.chord();
    const std::string title = c.title.empty() ? "Chord " + c.chord.terms_text() : c.title;
    const float ty = y0 + std::round(0.5f * (h - font_px(FontFace::medium)));
    draw_text(dl, FontFace::medium, ImVec2(x0, ty), palette::kText, title);
    float x = x0 + text_size(FontFace::medium, title).x + std::round(0.8f * u);
    // The reference selector: three buttons; the chosen one filled, bold, with a disc.
    const pitch::ChordReference cur = app.settings().ensemble.reference;
    const float bw = std::round(8.4f * u), bh = std::round(1.9f * u), gap = std::round(0.3f * u);
    float bx = x0 + w - 3.0f * bw - 2.0f * gap;
    const float against_x = bx - text_size(FontFace::body, "against").x - std::round(0.5f * u);
    draw_text(dl, FontFace::body, ImVec2(against_x, y0 + 0.5f * (h - u)), palette::kTextDim, "against");
    char buf[96];
    std::snprintf(buf, sizeof buf, "%s on %s = %.2f Hz", c.chord.terms_text().c_str(), app.settings().root.c_str(), session_.root_hz());
    if (!c.title.empty() && x + text_size(FontFace::body, buf).x < against_x - u)
        draw_text(dl, FontFace::body, ImVec2(x, ty + std::round(0.3f * u)), palette::kTextDim, buf);
    for (pitch::ChordReference r : kRefs) {
        const bool on = r == cur;
        const ImVec2 at(bx, std::round(y0 + 0.5f * (h - bh)));
        ImGui::SetCursorScreenPos(at);
        ImGui::PushStyleColor(ImGuiCol_Button, v4(on ? palette::kAccent : palette::kPanelRaised));
        ImGui::PushFont(font_of(on ? FontFace::bold : FontFace::body));
        const std::string label = std::string(on ? "   " : "") + std::string(pitch::reference_title(r)) + "##ref";
        if (ImGui::Button(label.c_str(), ImVec2(bw, bh))) session_.set_reference(app, r);
        ImGui::PopFont();
        ImGui::PopStyleColor();
        if (on) dl->AddCircleFilled(ImVec2(at.x + std::round(0.75f * u), at.y + 0.5f * bh), std::round(0.28f * u), palette::kText, 16);
        bx += bw + gap;
    }
}

// ---------------------------------------------------------------------------
// [screen]
// ---------------------------------------------------------------------------

void EnsembleScreen::build(AppState& app, const ScreenArea& area, double dt_s) {
    session_.update(app, dt_s);
    if (!ImGui::GetIO().WantTextInput) {
        if (ImGui::IsKeyPressed(GLFW_KEY_1, false)) session_.set_reference(app, pitch::ChordReference::fixed_root);
        if (ImGui::IsKeyPressed(GLFW_KEY_2, false)) session_.set_reference(app, pitch::ChordReference::sounding_bass);
        if (ImGui::IsKeyPressed(GLFW_KEY_3, false)) session_.set_reference(app, pitch::ChordReference::best_fit);
    }
    const float u = ui_unit();
    const float W = area.size.x, H = area.size.y;
    ImGui::SetNextWindowPos(area.pos);
    ImGui::SetNextWindowSize(area.size);
    ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, ImVec2(0, 0));
    ImGui::Begin("##ensemble", nullptr, kPanelFlags);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const float pad = std::round(0.8f * u);
    const float x0 = area.pos.x + pad, inner_w = W - 2.0f * pad;
    float y = area.pos.y + std::round(0.4f * u);
    if (!session_.ready()) {
        draw_text(dl, FontFace::medium, ImVec2(x0, y + u), palette::kTextDim, "No chord: choose one below");
        editor(app, x0, y + 4.0f * u, inner_w, H - 5.0f * u);
        ImGui::End();
        ImGui::PopStyleVar();
        return;
    }
    const float header_h = std::round(2.4f * u);
    header(app, dl, x0, y, inner_w, header_h);
    y += header_h + std::round(0.4f * u);

    const float bottom_h = std::round(std::clamp(0.34f * H, 8.5f * u, 13.0f * u));
    const float beats_h = std::round(2.5f * u);
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
    beat_row(dl, bounds, y + std::round(0.2f * u), beats_h, dt_s);
    y += beats_h + std::round(0.4f * u);
    const float chart_w = std::round(std::min(0.5f * inner_w, 22.0f * u));
    chart(app, dl, x0, y, chart_w, bottom_h);
    editor(app, x0 + chart_w + gap, y, inner_w - chart_w - gap, bottom_h);
    ImGui::End();
    ImGui::PopStyleVar();
}

}  // namespace

std::unique_ptr<Screen> make_ensemble_screen() { return std::make_unique<EnsembleScreen>(); }

}  // namespace beatless::ui
