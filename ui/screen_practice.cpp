// Practice — the screen a performer looks at while singing or playing.
//
//   ┌ target ratio and name ───────────────────── deviation, ▲/▼/● and a word ┐
//   │ the lane: ±50 cents around the target, the in-tune window, the marker   │
//   │ (instantaneous pitch) with a short fading trail, ◇ the vibrato centre   │
//   │ nearest equal-tempered note · confidence · frequency                     │
//   ├ the trace: the last 10 s in cents above the root, ─┬ the beat cue: rate, │
//   │ a line and a ratio label for every target nearby    │ partial pair, pulse │
//   ├ drone controls · target set and choice ──────────────────────────────────┤
//
// The lane maps cents to pixels linearly: the band spans exactly -50 .. +50
// cents, so x = centre + dev_cents * width / 100 (the snapshot tests find the
// band's edges in the PNG and check the marker against this). Deviations
// beyond the band pin the marker to its edge with an outward arrow.
//
// Index: [layout] [header] [lane] [trace] [beat cue] [controls] [screen]
#include "pitch/error.h"
#include "pitch/notes.h"
#include "pitch/text.h"
#include "ui/commands.h"
#include "ui/draw_kit.h"
#include "ui/lane.h"
#include "ui/palette.h"
#include "ui/screen.h"
#include "ui/target_files.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <string>
#include <vector>

namespace beatless::ui {

namespace {

constexpr ImGuiWindowFlags kPanelFlags = ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove | ImGuiWindowFlags_NoSavedSettings |
                                         ImGuiWindowFlags_NoBringToFrontOnFocus | ImGuiWindowFlags_NoScrollWithMouse;
constexpr double kTraceS = 10.0;           // the trace shows the last 10 s
constexpr double kTraceHalfCents = 75.0;   // ... over ±75 cents around the target at least,
constexpr double kTraceMarginCents = 10.0; // ... and this beyond the highest and lowest pitch sung,
constexpr double kTraceMaxHalfCents = 600.0;  // ... up to ±600 cents

ImVec4 v4(std::uint32_t c) { return ImGui::ColorConvertU32ToFloat4(c); }

std::uint32_t mix(std::uint32_t a, std::uint32_t b, double t) {
    const ImVec4 x = v4(a), y = v4(b);
    const float f = static_cast<float>(std::clamp(t, 0.0, 1.0));
    return ImGui::ColorConvertFloat4ToU32(ImVec4(x.x + (y.x - x.x) * f, x.y + (y.y - x.y) * f, x.z + (y.z - x.z) * f, 1.0f));
}


std::string beat_text(double hz) {
    char buf[32];
    if (hz < 9.95) std::snprintf(buf, sizeof buf, "%.1f Hz", std::round(hz * 10.0) / 10.0);
    else std::snprintf(buf, sizeof buf, "%.0f Hz", std::round(hz));
    return buf;
}

constexpr KeyHelp kPracticeKeys[] = {
    {"Marker", "your pitch now; its head: up sharp, down flat, disc in tune"},
    {"Diamond", "below the lane: the centre of your vibrato"},
    {"Yellow line", "in the trace: the current target"},
};

class PracticeScreen final : public Screen {
public:
    PracticeScreen() : points_(4096) {
        range_.reserve(4096);  // 10 s at a 5 ms hop is 2000 readings
        std::snprintf(root_buf_, sizeof root_buf_, "A2");
    }
    ScreenId id() const override { return ScreenId::practice; }
    std::span<const KeyHelp> keys() const override { return kPracticeKeys; }
    void build(AppState& app, const ScreenArea& area, double dt_s) override;

private:
    void header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void lane(AppState& app, ImDrawList* dl, float x0, float y0, float w, float band_h);
    void info_line(AppState& app, ImDrawList* dl, float x0, float y0, float w);
    void trace(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void beat_cue(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void controls(AppState& app);

    std::vector<ImVec2> points_;   // trace polyline scratch, sized once
    std::vector<double> range_;    // the trace's recent pitches, for its range; reserved once
    struct Label {
        float y;          // the line's row
        std::string text;
        bool current;
        float placed = 0; // the label's row after spreading
    };
    std::vector<Label> labels_;
    char root_buf_[32];
    double trace_centre_cents_ = NAN;  // follows the current target
};

// ---------------------------------------------------------------------------
// [header]
// ---------------------------------------------------------------------------

void PracticeScreen::header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const bool live = app.has_current();
    const pitch::Reading& r = app.current();
    const bool fixed = app.settings().choice == TargetChoice::fixed;
    // Left: the target's ratio, large, and its name.
    std::string ratio, name;
    if (live) {
        ratio = app.target_ratio_text(r);
        name = app.target_name_text(r);
    } else if (fixed || app.trace().size() == 0) {
        const pitch::Target& t = app.targets().targets[static_cast<std::size_t>(app.fixed_index())];
        ratio = t.interval.str();
        name = t.name;
    } else {
        ratio = app.target_ratio_text(r);
        name = app.target_name_text(r);
    }
    if (ratio.empty()) ratio = "\xE2\x80\x93";
    const float large = font_px(FontFace::large);
    const float ty = y0 + std::round(0.5f * (h - large));
    draw_text(dl, FontFace::large, ImVec2(x0, ty), live ? palette::kText : palette::kTextDim, ratio);
    const float nx = x0 + text_size(FontFace::large, ratio).x + std::round(0.9f * u);
    const float medium = font_px(FontFace::medium);
    const float ny = ty + std::round(0.08f * large);
    draw_text(dl, FontFace::medium, ImVec2(nx, ny), live ? palette::kText : palette::kTextDim, name.empty() ? std::string("target") : name);
    std::string sub = fixed ? "fixed target  \xE2\x86\x90 \xE2\x86\x92 to change,  N for nearest" : "nearest target in " + app.targets().title;
    draw_text(dl, FontFace::body, ImVec2(nx, ny + medium + std::round(0.25f * u)), palette::kTextDim, sub);

    // Right: the deviation in cents, with the state's shape and word.
    const float right = x0 + w;
    if (!live) {
        const std::string idle = app.engine_running() ? "listening\xE2\x80\xA6" : "no input";
        draw_text(dl, FontFace::medium, ImVec2(right - text_size(FontFace::medium, idle).x, y0 + 0.5f * (h - medium)), palette::kTextDim, idle);
        return;
    }
    const double dev = shown_dev_cents(r);
    const Tuning t = tuning_of(dev, app.settings().in_tune_cents);
    const std::uint32_t col = tuning_colour(t);
    const std::string word = std::string(tuning_word(t));
    const std::string num = signed_text(dev, 0);
    const std::string unit = "cents";
    const float word_w = std::max(text_size(FontFace::medium, word).x, text_size(FontFace::body, unit).x);
    const float shape_r = std::round(0.42f * medium);
    const float word_x = right - word_w;
    draw_text(dl, FontFace::medium, ImVec2(word_x, ny), col, word);
    draw_text(dl, FontFace::body, ImVec2(word_x, ny + medium + std::round(0.25f * u)), palette::kTextDim, unit);
    const float shape_x = word_x - std::round(0.7f * u) - shape_r;
    draw_tuning_shape(dl, t, ImVec2(shape_x, ny + 0.55f * medium), shape_r, col);
    const float num_w = text_size(FontFace::large, num).x;
    draw_text(dl, FontFace::large, ImVec2(shape_x - shape_r - std::round(0.6f * u) - num_w, ty), col, num);
}

// ---------------------------------------------------------------------------
// [lane]
// ---------------------------------------------------------------------------

void PracticeScreen::lane(AppState& app, ImDrawList* dl, float x0, float y0, float w, float band_h) {
    LaneView v;
    v.in_tune_cents = app.settings().in_tune_cents;
    v.now = app.has_current() ? &app.current() : nullptr;
    v.trail = &app.trace();
    draw_lane(dl, x0, y0, w, band_h, v);
}

void PracticeScreen::info_line(AppState& app, ImDrawList* dl, float x0, float y0, float w) {
    const float u = ui_unit();
    (void)w;
    if (!app.has_current()) return;
    const pitch::Reading& r = app.current();
    const pitch::NearestNote n = pitch::hz_to_note(r.f0_hz, app.settings().a4_hz);
    char buf[160];
    float x = x0;
    auto put = [&](FontFace f, std::uint32_t col, const std::string& s, float gap) {
        draw_text(dl, f, ImVec2(x, y0), col, s);
        x += text_size(f, s).x + gap;
    };
    put(FontFace::body, palette::kTextDim, "equal temperament", 0.4f * u);
    std::snprintf(buf, sizeof buf, "%s %s c", n.name.c_str(), signed_text(n.offset_cents, 0).c_str());
    put(FontFace::bold, palette::kText, buf, 1.5f * u);
    put(FontFace::body, palette::kTextDim, "confidence", 0.4f * u);
    std::snprintf(buf, sizeof buf, "%.0f %%", 100.0 * r.confidence);
    put(FontFace::bold, r.confidence >= 0.8 ? palette::kText : palette::kTextDim, buf, 1.5f * u);
    std::snprintf(buf, sizeof buf, "%.1f Hz", r.f0_hz);
    put(FontFace::bold, palette::kText, buf, 1.5f * u);
    if (std::isfinite(r.steadiness_cents)) {
        put(FontFace::body, palette::kTextDim, "spread", 0.4f * u);
        std::snprintf(buf, sizeof buf, "%.0f c", r.steadiness_cents);
        put(FontFace::bold, palette::kText, buf, 1.5f * u);
    }
}

// ---------------------------------------------------------------------------
// [trace]
// ---------------------------------------------------------------------------

void PracticeScreen::trace(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float label_w = std::round(6.0f * u);
    const float px0 = x0 + std::round(0.6f * u), px1 = x0 + w - label_w;
    const float py0 = y0 + std::round(1.7f * u), py1 = y0 + h - std::round(0.6f * u);
    draw_text(dl, FontFace::body, ImVec2(px0, y0 + std::round(0.35f * u)), palette::kTextDim, "Trace: the last 10 s, cents above the root");
    if (py1 - py0 < 2.0f * u || px1 - px0 < 4.0f * u) return;

    if (app.has_current()) trace_centre_cents_ = app.current().target_cents;
    if (!std::isfinite(trace_centre_cents_)) {
        const pitch::Target& t = app.targets().targets[static_cast<std::size_t>(app.fixed_index())];
        trace_centre_cents_ = t.interval.cents();
    }
    // ±75 cents around the target, widened (up to ±kTraceMaxHalfCents) to
    // hold whatever was sung in the last 10 s: a performer far off still
    // sees where they are.
    const TraceStore& tr = app.trace();
    const double now = tr.size() ? tr.newest()->t_s : 0.0;
    // The extremes are the 1st and 99th percentiles, so a stray reading
    // (an octave slip) does not squeeze the target lines together.
    double lo = trace_centre_cents_ - kTraceHalfCents, hi = trace_centre_cents_ + kTraceHalfCents;
    range_.clear();
    for (std::size_t i = 0; i < tr.size() && range_.size() < range_.capacity(); ++i) {
        const pitch::Reading& r = tr.at(i);
        if (now - r.t_s <= kTraceS && r.voiced() && std::isfinite(r.cents_above_root)) range_.push_back(r.cents_above_root);
    }
    if (range_.size() >= 20) {
        const auto at = [&](double q) {
            const auto k = static_cast<std::ptrdiff_t>(q * static_cast<double>(range_.size() - 1));
            std::nth_element(range_.begin(), range_.begin() + k, range_.end());
            return range_[static_cast<std::size_t>(k)];
        };
        lo = std::min(lo, at(0.01) - kTraceMarginCents);
        hi = std::max(hi, at(0.99) + kTraceMarginCents);
    }
    lo = std::max(lo, trace_centre_cents_ - kTraceMaxHalfCents);
    hi = std::min(hi, trace_centre_cents_ + kTraceMaxHalfCents);
    const float ppc = (py1 - py0) / static_cast<float>(hi - lo);
    auto y_of = [&](double cents) { return py1 - static_cast<float>(cents - lo) * ppc; };

    // Seconds: a faint line every 2 s.
    const float ppsec = (px1 - px0) / static_cast<float>(kTraceS);
    for (int s = 0; s <= static_cast<int>(kTraceS); s += 2) {
        const float x = std::round(px1 - static_cast<float>(s) * ppsec);
        dl->AddLine(ImVec2(x + 0.5f, py0), ImVec2(x + 0.5f, py1), palette::with_alpha(palette::kGrid, 90));
    }

    // Target lines in every octave that falls in the range, labelled by ratio.
    labels_.clear();
    const int cur = app.has_current() ? app.target_index_of(app.current()) : (app.settings().choice == TargetChoice::fixed ? app.fixed_index() : -1);
    const int cur_oct = app.has_current() ? app.current().target_octaves : 0;
    const auto& targets = app.targets().targets;
    for (std::size_t i = 0; i < targets.size(); ++i) {
        const double c0 = targets[i].interval.cents();
        const int k_lo = static_cast<int>(std::ceil((lo - c0) / 1200.0)), k_hi = static_cast<int>(std::floor((hi - c0) / 1200.0));
        for (int k = k_lo; k <= k_hi; ++k) {
            const double c = c0 + 1200.0 * k;
            if (std::any_of(labels_.begin(), labels_.end(), [&](const Label& l) { return std::fabs(l.y - std::round(y_of(c))) < 0.5f; }) &&
                !(static_cast<int>(i) == cur && k == cur_oct))
                continue;  // 1/1 an octave up is 2/1: one line, one label
            const bool is_cur = static_cast<int>(i) == cur && k == cur_oct;
            const float y = std::round(y_of(c));
            if (is_cur) dl->AddRectFilled(ImVec2(px0, y - 1), ImVec2(px1, y + 2), palette::kCurrentTarget);
            else dl->AddRectFilled(ImVec2(px0, y), ImVec2(px1, y + 1), palette::kOtherTarget);
            std::string text;
            try {
                text = pitch::shift_octaves(targets[i].interval, k).str();
            } catch (const Error&) {
                text = targets[i].interval.str();
            }
            if (is_cur)  // the current target replaces a twin drawn before it
                labels_.erase(std::remove_if(labels_.begin(), labels_.end(), [&](const Label& l) { return std::fabs(l.y - y) < 0.5f; }), labels_.end());
            labels_.push_back({y, std::move(text), is_cur});
        }
    }
    // Labels in the gutter, pushed apart so none overlaps (targets can be two
    // cents apart), each joined to its line by a short leader.
    std::sort(labels_.begin(), labels_.end(), [](const Label& a, const Label& b) { return a.y < b.y; });
    const float lh = std::round(u * 1.1f);
    for (std::size_t i = 0; i < labels_.size(); ++i) {
        labels_[i].placed = std::max(labels_[i].y, i ? labels_[i - 1].placed + lh : py0 - 0.5f * u);
    }
    for (std::size_t i = labels_.size(); i-- > 0;) {
        const float limit = i + 1 < labels_.size() ? labels_[i + 1].placed - lh : py1 + 0.5f * u;
        labels_[i].placed = std::min(labels_[i].placed, limit);
    }
    const float lead = std::round(0.9f * u);
    for (const Label& l : labels_) {
        const std::uint32_t col = l.current ? palette::kCurrentTarget : palette::kOtherTarget;
        dl->AddLine(ImVec2(px1, l.y + 0.5f), ImVec2(px1 + lead, l.placed + 0.5f), col, 1.0f);
        draw_text(dl, l.current ? FontFace::bold : FontFace::body, ImVec2(px1 + lead + std::round(0.25f * u), l.placed - 0.55f * u),
                  l.current ? palette::kCurrentTarget : palette::kTextDim, l.text);
    }

    // The pitch: one polyline per voiced stretch, at most one point per pixel column.
    dl->PushClipRect(ImVec2(px0, py0), ImVec2(px1, py1), true);
    const float thick = std::max(2.0f, std::round(0.12f * u));
    std::size_t n = 0;
    float last_x = -1e9f;
    double prev_t = -1e9, prev_c = NAN;
    auto flush = [&] {
        if (n >= 2) dl->AddPolyline(points_.data(), static_cast<int>(n), palette::kTraceLine, ImDrawFlags_None, thick);
        n = 0;
        last_x = -1e9f;
    };
    for (std::size_t i = 0; i < tr.size(); ++i) {
        const pitch::Reading& r = tr.at(i);
        const double age = now - r.t_s;
        if (age > kTraceS) continue;
        if (!r.voiced() || !std::isfinite(r.cents_above_root)) {
            flush();
            continue;
        }
        if (r.t_s - prev_t > 0.03 || std::fabs(r.cents_above_root - prev_c) > 60.0) flush();
        prev_t = r.t_s;
        prev_c = r.cents_above_root;
        const float x = px1 - static_cast<float>(age) * ppsec;
        const float y = y_of(r.cents_above_root);
        if (x - last_x < 1.0f && n > 0) {
            points_[n - 1] = ImVec2(x, y);
            continue;
        }
        if (n == points_.size()) flush();
        points_[n++] = ImVec2(x, y);
        last_x = x;
    }
    flush();
    if (app.has_current()) {
        const float y = y_of(app.current().cents_above_root);
        dl->AddCircleFilled(ImVec2(px1 - 1, y), std::round(0.3f * u), tuning_colour(tuning_of(shown_dev_cents(app.current()), app.settings().in_tune_cents)), 16);
    }
    dl->PopClipRect();
}

// ---------------------------------------------------------------------------
// [beat cue]
// ---------------------------------------------------------------------------

void PracticeScreen::beat_cue(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float x = x0 + std::round(0.8f * u);
    float y = y0 + std::round(0.35f * u);
    draw_text(dl, FontFace::body, ImVec2(x, y), palette::kTextDim, "Beat rate");
    y += std::round(1.4f * u);
    const BeatPulse& p = app.pulse();
    const pitch::Reading& r = app.current();
    const bool have = app.has_current() && p.cue() != BeatCue::none;
    const std::string value = have ? beat_text(p.beat_hz()) : std::string("\xE2\x80\x93");
    draw_text(dl, FontFace::large, ImVec2(x, y), have ? palette::kText : palette::kTextDim, value);
    y += font_px(FontFace::large) + std::round(0.3f * u);
    if (have) {
        const bool other = heard_pair_differs(r);
        const int pr = other ? r.heard_partial_root : r.beat_partial_root;
        const int pv = other ? r.heard_partial_voice : r.beat_partial_voice;
        const std::string a = ordinal(pr) + " partial of the root";
        const std::string b = "against the " + ordinal(pv) + " of the voice";
        draw_text(dl, FontFace::body, ImVec2(x, y), palette::kText, a);
        draw_text(dl, FontFace::body, ImVec2(x, y + std::round(1.2f * u)), palette::kText, b);
        if (other) {
            // The target's own pair (e.g. 729th against 512th) is above
            // hearing: say what this nearby pair does when the note is right.
            char line[96];
            std::snprintf(line, sizeof line, "in tune it beats %s", beat_text(r.heard_beat_at_target_hz).c_str());
            draw_text(dl, FontFace::body, ImVec2(x, y + std::round(2.4f * u)), palette::kTextDim, line);
            y += std::round(1.2f * u);
        }
    }
    y += std::round(2.8f * u);

    // The pulse: a disc that brightens and dims once per beat, with two
    // lines beside it saying what it shows.
    const float room = y0 + h - y - std::round(0.5f * u);
    if (room < 1.6f * u) return;
    const BeatCue cue = have ? p.cue() : BeatCue::none;
    std::string caption1, caption2;
    switch (cue) {
        case BeatCue::none: caption1 = "no beat to show", caption2 = "sing or play a note"; break;
        case BeatCue::still: caption1 = "still: nearly pure", caption2 = "hold it there"; break;
        case BeatCue::pulse:
            caption1 = "pulses once per beat";
            caption2 = heard_pair_differs(r) ? "match the in-tune rate" : "slower is closer";
            break;
        case BeatCue::fast: caption1 = "too fast to follow", caption2 = "listen for roughness"; break;
    }
    const float caption_w = std::max(text_size(FontFace::body, caption1).x, text_size(FontFace::body, caption2).x);
    const float rad = std::round(std::clamp(std::min({0.45f * room, 0.2f * w, 0.5f * (w - caption_w - 2.6f * u)}), 0.8f * u, 3.2f * u));
    const ImVec2 c(std::round(x + rad), std::round(y + 0.5f * room));
    const float ring = std::max(2.0f, std::round(0.12f * u));
    switch (cue) {
        case BeatCue::none:
            dl->AddCircle(c, rad, palette::kGrid, 48, ring);
            break;
        case BeatCue::pulse:
        case BeatCue::still:
            dl->AddCircleFilled(c, rad, mix(palette::kPanel, palette::kPulse, p.brightness()), 48);
            dl->AddCircle(c, rad, palette::kPulse, 48, ring);
            break;
        case BeatCue::fast: {
            // Steady: a ring with a zig-zag across, no flicker.
            dl->AddCircle(c, rad, palette::kPulse, 48, ring);
            ImVec2 zz[9];
            for (int i = 0; i < 9; ++i)
                zz[i] = ImVec2(c.x - 0.7f * rad + static_cast<float>(i) * 0.175f * rad, c.y + ((i % 2) ? -0.25f : 0.25f) * rad);
            dl->AddPolyline(zz, 9, palette::kPulse, ImDrawFlags_None, ring);
            break;
        }
    }
    const float tx = c.x + rad + std::round(0.8f * u);
    draw_text(dl, FontFace::body, ImVec2(tx, c.y - 1.1f * u), palette::kText, caption1);
    draw_text(dl, FontFace::body, ImVec2(tx, c.y + 0.1f * u), palette::kTextDim, caption2);
}

// ---------------------------------------------------------------------------
// [controls]
// ---------------------------------------------------------------------------

void PracticeScreen::controls(AppState& app) {
    const float u = ui_unit();
    const Settings& s = app.settings();
    // Row 1: the drone.
    const bool on = app.drone_on();
    ImGui::PushStyleColor(ImGuiCol_Button, v4(on ? palette::kAccent : palette::kPanelRaised));
    if (ImGui::Button(on ? "Stop drone" : "Start drone", ImVec2(std::round(7.5f * u), 0))) app.toggle_drone();
    ImGui::PopStyleColor();
    ImGui::SameLine(0, std::round(1.2f * u));
    ImGui::AlignTextToFramePadding();
    ImGui::TextColored(v4(palette::kTextDim), "Root");
    ImGui::SameLine();
    if (ImGui::Button("\xE2\x88\x92##root")) app.step_root(-1);
    ImGui::SameLine();
    if (!ImGui::IsAnyItemActive() || !ImGui::GetIO().WantTextInput) std::snprintf(root_buf_, sizeof root_buf_, "%s", s.root.c_str());
    ImGui::SetNextItemWidth(std::round(3.6f * u));
    if (ImGui::InputText("##root", root_buf_, sizeof root_buf_, ImGuiInputTextFlags_EnterReturnsTrue)) app.set_root_text(root_buf_);
    ImGui::SameLine();
    if (ImGui::Button("+##root")) app.step_root(+1);
    ImGui::SameLine();
    ImGui::TextColored(v4(palette::kTextDim), "%.2f Hz", app.root_hz());
    ImGui::SameLine(0, std::round(1.2f * u));
    ImGui::SetNextItemWidth(std::round(5.5f * u));
    if (ImGui::BeginCombo("##timbre", std::string(audio::timbre_name(s.timbre)).c_str())) {
        for (audio::Timbre t : audio::all_timbres())
            if (ImGui::Selectable(std::string(audio::timbre_name(t)).c_str(), t == s.timbre)) app.set_timbre(t);
        ImGui::EndCombo();
    }
    ImGui::SameLine(0, std::round(1.2f * u));
    ImGui::TextColored(v4(palette::kTextDim), "Level");
    ImGui::SameLine();
    float level = static_cast<float>(s.level_dbfs);
    ImGui::SetNextItemWidth(std::round(8.5f * u));
    if (ImGui::SliderFloat("##level", &level, static_cast<float>(audio::kDroneMinLevelDbfs), static_cast<float>(audio::kDroneMaxLevelDbfs), "%.0f dBFS"))
        app.set_drone_level(std::round(level));
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("Drone level (RMS). The limiter holds peaks at or below %.0f dBFS.", audio::kDroneCeilingDbfs);
    ImGui::SameLine(0, std::round(1.2f * u));
    bool fifth = s.fifth, octave = s.octave;
    if (ImGui::Checkbox("fifth", &fifth)) app.set_fifth(fifth);
    ImGui::SameLine();
    if (ImGui::Checkbox("octave", &octave)) app.set_octave(octave);

    // Row 2: targets and the reference.
    ImGui::AlignTextToFramePadding();
    ImGui::TextColored(v4(palette::kTextDim), "Targets");
    ImGui::SameLine();
    ImGui::SetNextItemWidth(std::round(8.5f * u));
    if (ImGui::BeginCombo("##set", app.targets().title.empty() ? s.target_set.c_str() : app.targets().title.c_str())) {
        for (const std::string& name : builtin_names("targets")) {
            if (name.rfind("hold-", 0) == 0 || name.rfind("ear-", 0) == 0) continue;  // drill material, not practice sets
            if (ImGui::Selectable(name.c_str(), name == s.target_set)) app.set_target_set(name);
        }
        ImGui::EndCombo();
    }
    ImGui::SameLine(0, std::round(1.2f * u));
    if (ImGui::RadioButton("nearest", s.choice == TargetChoice::nearest)) app.set_choice(TargetChoice::nearest);
    ImGui::SameLine();
    if (ImGui::RadioButton("fixed", s.choice == TargetChoice::fixed)) app.set_choice(TargetChoice::fixed);
    ImGui::SameLine();
    if (ImGui::ArrowButton("##prev", ImGuiDir_Left)) app.step_target(-1);
    ImGui::SameLine();
    const auto& ts = app.targets().targets;
    const pitch::Target& fixed = ts[static_cast<std::size_t>(app.fixed_index())];
    // In nearest mode the box shows the target followed now; choosing one fixes it.
    const int shown_index = s.choice == TargetChoice::nearest && app.has_current() ? app.target_index_of(app.current()) : app.fixed_index();
    const std::string shown = shown_index >= 0 ? ts[static_cast<std::size_t>(shown_index)].interval.str() : fixed.interval.str();
    ImGui::SetNextItemWidth(std::round(6.0f * u));
    if (ImGui::BeginCombo("##target", shown.c_str())) {
        for (std::size_t i = 0; i < ts.size(); ++i) {
            const std::string label = ts[i].interval.str() + (ts[i].name.empty() ? "" : "  " + ts[i].name);
            if (ImGui::Selectable(label.c_str(), static_cast<int>(i) == shown_index)) {
                app.set_choice(TargetChoice::fixed);
                app.step_target(static_cast<int>(i) - app.fixed_index());
            }
        }
        ImGui::EndCombo();
    }
    ImGui::SameLine();
    if (ImGui::ArrowButton("##next", ImGuiDir_Right)) app.step_target(+1);
    ImGui::SameLine(0, std::round(1.2f * u));
    ImGui::TextColored(v4(palette::kTextDim), "A4");
    ImGui::SameLine();
    float a4 = static_cast<float>(s.a4_hz);
    ImGui::SetNextItemWidth(std::round(5.0f * u));
    if (ImGui::DragFloat("##a4", &a4, 0.1f, 400.0f, 480.0f, "%.1f Hz")) app.set_a4(std::round(a4 * 10.0f) / 10.0);
    ImGui::SameLine(0, std::round(1.2f * u));
    if (ImGui::Button("Reference")) app.sound_reference();
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("Sounds the current target once above the drone (R)");
}

// ---------------------------------------------------------------------------
// [screen]
// ---------------------------------------------------------------------------

void PracticeScreen::build(AppState& app, const ScreenArea& area, double dt_s) {
    (void)dt_s;
    const float u = ui_unit();
    const float W = area.size.x, H = area.size.y;
    ImGui::SetNextWindowPos(area.pos);
    ImGui::SetNextWindowSize(area.size);
    ImGui::PushStyleVar(ImGuiStyleVar_WindowPadding, ImVec2(0, 0));
    ImGui::Begin("##practice", nullptr, kPanelFlags);
    ImDrawList* dl = ImGui::GetWindowDrawList();

    const float pad = std::round(1.0f * u);
    const float x0 = area.pos.x + pad, inner_w = W - 2.0f * pad;
    float y = area.pos.y + std::round(0.6f * u);
    const float header_h = font_px(FontFace::large) + std::round(0.4f * u);
    header(app, dl, x0, y, inner_w, header_h);
    y += header_h + std::round(1.4f * u);  // room for the marker's head
    const float band_h = std::round(std::max(2.6f * u, 0.1f * H));
    const float lane_margin = std::round(1.6f * u);
    lane(app, dl, x0 + lane_margin, y, inner_w - 2.0f * lane_margin, band_h);
    y += band_h + std::round(1.3f * u);   // tick labels
    y += std::round(1.6f * u);            // the centre track
    info_line(app, dl, x0 + lane_margin, y, inner_w);
    y += std::round(1.6f * u);

    const float frame_h = ImGui::GetFrameHeight();
    const float controls_h = 2.0f * frame_h + ImGui::GetStyle().ItemSpacing.y + 2.0f * std::round(0.5f * u);
    const float mid_h = area.pos.y + H - controls_h - y - std::round(0.4f * u);
    if (mid_h > 3.0f * u) {
        const float cue_w = std::round(std::clamp(0.27f * inner_w, 13.0f * u, 20.0f * u));
        const float gap = std::round(0.6f * u);
        trace(app, dl, x0, y, inner_w - cue_w - gap, mid_h);
        beat_cue(app, dl, x0 + inner_w - cue_w, y, cue_w, mid_h);
    }

    ImGui::SetCursorScreenPos(ImVec2(x0, area.pos.y + H - controls_h + std::round(0.5f * u)));
    ImGui::BeginGroup();
    controls(app);
    ImGui::EndGroup();
    ImGui::End();
    ImGui::PopStyleVar();
}

}  // namespace

std::unique_ptr<Screen> make_practice_screen() { return std::make_unique<PracticeScreen>(); }

}  // namespace beatless::ui
