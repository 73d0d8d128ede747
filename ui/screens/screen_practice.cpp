// Practice — the screen a performer looks at while singing or playing.
//
//   ┌ target ratio and name ────────────────────── the verdict, ▲/▼/● and a word ┐
//   │ the lane: ±50 cents around the target, the in-tune window, the marker   │
//   │ at the verdict, the instantaneous pitch as a trail and a "now" tick     │
//   │ the verdict's equal-tempered note · frequency · confidence · spread      │
//   ├ the trace: the last 10 s in cents above the root, ─┬ the beat view:     │
//   │ a line and a ratio label for every target nearby    │ rate, pair, envelope│
//
// One verdict (ui/session/verdict.h): the vibrato centre once a cycle is known, the
// instantaneous pitch before; the number, word, colour, lane marker and note
// all show it. Silence and low confidence show as "last ..." in dim text
// within 100 ms.
//   ├ drone controls · target set and choice ──────────────────────────────────┤
//
// The lane maps cents to pixels linearly: the band spans exactly -50 .. +50
// cents, so x = centre + dev_cents * width / 100 (the snapshot tests find the
// band's edges in the PNG and check the marker against this). Deviations
// beyond the band pin the marker to its edge with an outward arrow.
//
// Index: [layout] [header] [lane] [trace] [beat cue] [controls] [screen]
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/spelling.h"
#include "ui/screens/beat_view.h"
#include "ui/screens/lane.h"
#include "ui/screens/palette.h"
#include "ui/screens/practice_duo.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"
#include "ui/session/target_files.h"
#include "ui/session/wording.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <string>
#include <vector>

namespace beatless::ui {

namespace {

constexpr double kTraceS = 10.0;              // the trace shows the last 10 s
constexpr double kTraceHalfCents = 75.0;      // ... over ±75 cents around the target at least,
constexpr double kTraceMarginCents = 10.0;    // ... and this beyond the highest and lowest pitch sung,
constexpr double kTraceMaxHalfCents = 600.0;  // ... up to ±600 cents

ImVec4 v4(std::uint32_t c) { return ImGui::ColorConvertU32ToFloat4(c); }

std::string beat_text(double hz) {
    char buf[32];
    if (hz < 9.95)
        std::snprintf(buf, sizeof buf, "%.1f Hz", std::round(hz * 10.0) / 10.0);
    else
        std::snprintf(buf, sizeof buf, "%.0f Hz", std::round(hz));
    return buf;
}

constexpr KeyHelp kPracticeKeys[] = {
    {"Marker",
     "the verdict: your vibrato's centre once a cycle is heard, your pitch before; head up sharp, down flat, disc in "
     "tune"},
    {"Small triangle", "below the lane: your pitch now, while the marker shows the centre"},
    {"Envelope", "right: the beat of the two partials that meet; wider lobes, slower beats"},
    {"Yellow line", "in the trace: the current target"},
    {"V", "two voices (a double stop, a duet): the interval is the verdict, the beat the measured one"},
};

// The verdict's note, spelled over the root as typed (7/4 over C is Bb);
// the equal-tempered name when the root text cannot be spelled from.
pitch::NoteAboveRoot note_of(const AppState& app, double f0_hz) {
    try {
        return pitch::spell_hz_above_root(app.settings().root, f0_hz, app.settings().a4_hz);
    } catch (const Error&) {
        const pitch::NearestNote n = pitch::hz_to_note(f0_hz, app.settings().a4_hz);
        pitch::NoteAboveRoot out;
        out.name = n.name;
        out.offset_cents = n.offset_cents;
        return out;
    }
}

const char* source_text(const Verdict& v) { return v.source == VerdictSource::centre ? "vibrato centre" : "pitch now"; }

const char* quiet_word(const Verdict& v) {
    switch (v.state) {
        case VerdictState::uncertain: return "unsure";
        case VerdictState::unpitched: return "no pitch";
        default: return "silent";
    }
}

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

    std::vector<ImVec2> points_;  // trace polyline scratch, sized once
    DuoScratch duo_;              // the two-voice view's scratch
    std::vector<double> range_;   // the trace's recent pitches, for its range; reserved once
    struct Label {
        float y;  // the line's row
        std::string text;
        bool current;
        float placed = 0;  // the label's row after spreading
    };
    std::vector<Label> labels_;
    char root_buf_[32];
    double trace_centre_cents_ = NAN;  // follows the current target
};

// ---------------------------------------------------------------------------
// [SECTION] Header
// ---------------------------------------------------------------------------

void PracticeScreen::header(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const Verdict& v = app.verdict();
    const bool known = v.known();
    const bool live = v.current();
    const bool fixed = app.settings().choice == TargetChoice::fixed;
    // Left: the target's ratio, large, and its name.
    std::string ratio, name;
    if (known) {
        ratio = app.target_ratio_text(v.reading);
        name = app.target_name_text(v.reading);
    } else {
        const pitch::Target& t = app.targets().targets[static_cast<std::size_t>(app.fixed_index())];
        ratio = t.interval.str();
        name = t.name;
    }
    if (ratio.empty()) ratio = "\xE2\x80\x93";
    const float large = font_px(FontFace::large);
    const float ty = y0 + std::round(0.5f * (h - large));
    draw_text(dl, FontFace::large, ImVec2(x0, ty), live ? palette::kText : palette::kTextDim, ratio);
    const float nx = x0 + text_size(FontFace::large, ratio).x + std::round(0.9f * u);
    const float medium = font_px(FontFace::medium);
    const float ny = ty + std::round(0.08f * large);
    draw_text(dl, FontFace::medium, ImVec2(nx, ny), live ? palette::kText : palette::kTextDim,
              name.empty() ? std::string("target") : name);
    std::string sub = fixed ? "fixed target  \xE2\x86\x90 \xE2\x86\x92 to change,  N for nearest"
                            : "nearest target in " + app.targets().title;
    draw_text(dl, FontFace::body, ImVec2(nx, ny + medium + std::round(0.25f * u)), palette::kTextDim, sub);

    // Right: the verdict in cents, with the state's shape and word; when it
    // is not current, the last value in dim text and why.
    const float right = x0 + w;
    if (!known) {
        const std::string idle = !app.engine_running()                ? "no input"
                                 : v.state == VerdictState::unpitched ? "no pitch"
                                                                      : "listening\xE2\x80\xA6";
        draw_text(dl, FontFace::medium, ImVec2(right - text_size(FontFace::medium, idle).x, y0 + 0.5f * (h - medium)),
                  palette::kTextDim, idle);
        return;
    }
    const Tuning t = tuning_of(v.dev_cents, app.settings().in_tune_cents);
    const std::string word = live ? std::string(tuning_word(t)) : std::string(quiet_word(v));
    const std::string num = (live ? "" : "last ") + signed_text(v.dev_cents, 0);
    const std::string unit = live ? std::string("cents, ") + source_text(v) : std::string("cents");
    draw_verdict_readout(dl, right, ty, ny, t, live, word, num, unit);
}

// ---------------------------------------------------------------------------
// [SECTION] Lane
// ---------------------------------------------------------------------------

void PracticeScreen::lane(AppState& app, ImDrawList* dl, float x0, float y0, float w, float band_h) {
    LaneView v;
    v.in_tune_cents = app.settings().in_tune_cents;
    v.verdict = &app.verdict();
    v.trail = &app.trace();
    draw_lane(dl, x0, y0, w, band_h, v);
}

void PracticeScreen::info_line(AppState& app, ImDrawList* dl, float x0, float y0, float w) {
    const float u = ui_unit();
    (void)w;
    const Verdict& v = app.verdict();
    if (v.state == VerdictState::unpitched) {
        // Sound without a pitch the tracker follows: most often a note below its floor.
        char hint[160];
        std::snprintf(hint, sizeof hint,
                      "sound without a pitch: below the lowest note (%.0f Hz)? set Settings \xE2\x86\x92 Lowest note",
                      app.settings().lowest_hz);
        draw_text(dl, FontFace::body, ImVec2(x0, y0), palette::kWarning, hint);
        return;
    }
    if (!v.known() || !(v.f0_hz > 0.0)) return;
    const bool live = v.current();
    const std::uint32_t strong = live ? palette::kText : palette::kTextDim;
    // The same pitch as the verdict: its equal-tempered note and frequency.
    const pitch::NoteAboveRoot n = note_of(app, v.f0_hz);
    char buf[160];
    float x = x0;
    auto put = [&](FontFace f, std::uint32_t col, const std::string& s, float gap) {
        draw_text(dl, f, ImVec2(x, y0), col, s);
        x += text_size(f, s).x + gap;
    };
    if (!live) put(FontFace::body, palette::kTextDim, "last:", 0.6f * u);
    put(FontFace::body, palette::kTextDim, source_text(v), 1.0f * u);
    std::snprintf(buf, sizeof buf, "%s %s c", n.name.c_str(), signed_text(n.offset_cents, 0).c_str());
    put(FontFace::body, palette::kTextDim, "equal temperament", 0.4f * u);
    put(FontFace::bold, strong, buf, 1.5f * u);
    std::snprintf(buf, sizeof buf, "%.1f Hz", v.f0_hz);
    put(FontFace::bold, strong, buf, 1.5f * u);
    put(FontFace::body, palette::kTextDim, "confidence", 0.4f * u);
    std::snprintf(buf, sizeof buf, "%.0f %%", 100.0 * v.reading.confidence);
    put(FontFace::bold, live && v.reading.confidence >= 0.8 ? palette::kText : palette::kTextDim, buf, 1.5f * u);
    if (std::isfinite(v.reading.steadiness_cents)) {
        put(FontFace::body, palette::kTextDim, "spread", 0.4f * u);
        std::snprintf(buf, sizeof buf, "%.0f c", v.reading.steadiness_cents);
        put(FontFace::bold, strong, buf, 1.5f * u);
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Trace
// ---------------------------------------------------------------------------

void PracticeScreen::trace(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float label_w = std::round(6.0f * u);
    const float px0 = x0 + std::round(0.6f * u), px1 = x0 + w - label_w;
    const float py0 = y0 + std::round(1.7f * u), py1 = y0 + h - std::round(0.6f * u);
    draw_text(dl, FontFace::body, ImVec2(px0, y0 + std::round(0.35f * u)), palette::kTextDim,
              "Trace: the last 10 s, cents above the root");
    if (py1 - py0 < 2.0f * u || px1 - px0 < 4.0f * u) return;

    if (app.verdict().known()) trace_centre_cents_ = app.current().target_cents;
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
        if (now - r.t_s <= kTraceS && r.voiced() && std::isfinite(r.cents_above_root))
            range_.push_back(r.cents_above_root);
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
    const int cur = app.verdict().known() ? app.target_index_of(app.current())
                                          : (app.settings().choice == TargetChoice::fixed ? app.fixed_index() : -1);
    const int cur_oct = app.verdict().known() ? app.current().target_octaves : 0;
    const auto& targets = app.targets().targets;
    for (std::size_t i = 0; i < targets.size(); ++i) {
        const double c0 = targets[i].interval.cents();
        const int k_lo = static_cast<int>(std::ceil((lo - c0) / 1200.0)),
                  k_hi = static_cast<int>(std::floor((hi - c0) / 1200.0));
        for (int k = k_lo; k <= k_hi; ++k) {
            const double c = c0 + 1200.0 * k;
            if (std::any_of(labels_.begin(), labels_.end(),
                            [&](const Label& l) { return std::fabs(l.y - std::round(y_of(c))) < 0.5f; }) &&
                !(static_cast<int>(i) == cur && k == cur_oct))
                continue;  // 1/1 an octave up is 2/1: one line, one label
            const bool is_cur = static_cast<int>(i) == cur && k == cur_oct;
            const float y = std::round(y_of(c));
            if (is_cur)
                dl->AddRectFilled(ImVec2(px0, y - 1), ImVec2(px1, y + 2), palette::kCurrentTarget);
            else
                dl->AddRectFilled(ImVec2(px0, y), ImVec2(px1, y + 1), palette::kOtherTarget);
            std::string text;
            try {
                text = pitch::shift_octaves(targets[i].interval, k).str();
            } catch (const Error&) {
                text = targets[i].interval.str();
            }
            if (is_cur)  // the current target replaces a twin drawn before it
                labels_.erase(std::remove_if(labels_.begin(), labels_.end(),
                                             [&](const Label& l) { return std::fabs(l.y - y) < 0.5f; }),
                              labels_.end());
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
        draw_text(dl, l.current ? FontFace::bold : FontFace::body,
                  ImVec2(px1 + lead + std::round(0.25f * u), l.placed - 0.55f * u),
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
    if (app.has_current()) {  // the verdict, where the line ends
        const Verdict& v = app.verdict();
        const float y = y_of(v.cents_above_root);
        dl->AddCircleFilled(ImVec2(px1 - 1, y), std::round(0.3f * u),
                            tuning_colour(tuning_of(v.dev_cents, app.settings().in_tune_cents)), 16);
    }
    dl->PopClipRect();
}

// ---------------------------------------------------------------------------
// [SECTION] Beat cue
// ---------------------------------------------------------------------------

void PracticeScreen::beat_cue(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanel, std::round(0.25f * u));
    const float x = x0 + std::round(0.8f * u);
    float y = y0 + std::round(0.35f * u);
    const bool drone = app.drone_sounding();
    draw_text(dl, FontFace::body, ImVec2(x, y), palette::kTextDim,
              drone ? "Beat rate" : "Beat rate (predicted: drone off)");
    y += std::round(1.4f * u);
    const BeatPulse& p = app.pulse();
    const Verdict& v = app.verdict();
    const pitch::Reading& r = v.reading;
    const bool have = v.current() && p.band() != pitch::BeatBand::none;
    const std::string value = have        ? beat_text(p.beat_hz())
                              : v.known() ? std::string(quiet_word(v))
                                          : std::string("\xE2\x80\x93");
    draw_text(dl, FontFace::large, ImVec2(x, y), have ? palette::kText : palette::kTextDim, value);
    y += font_px(FontFace::large) + std::round(0.3f * u);
    if (have) {
        const bool other = heard_pair_differs(r);
        const int pr = r.heard_partial_root, pv = r.heard_partial_voice;
        const std::string a = ordinal(pr) + " partial of the root";
        const std::string b = "against the " + ordinal(pv) + " of the voice";
        draw_text(dl, FontFace::body, ImVec2(x, y), palette::kText, a);
        draw_text(dl, FontFace::body, ImVec2(x, y + std::round(1.2f * u)), palette::kText, b);
        if (other && r.heard_beat_at_target_hz > 0.05) {
            // The target's own pair lies out of hearing: this nearby pair
            // beats even when the note is right; say at what rate.
            char line[96];
            std::snprintf(line, sizeof line, "in tune it beats %s", beat_text(r.heard_beat_at_target_hz).c_str());
            draw_text(dl, FontFace::body, ImVec2(x, y + std::round(2.4f * u)), palette::kTextDim, line);
            y += std::round(1.2f * u);
        }
    }
    y += std::round(2.8f * u);

    // The envelope of the two partials' sum, scrolling right to left over
    // the last few seconds: the lobes are the beats, wider as the interval
    // becomes pure; a mark under each null measures one beat.
    const float room = y0 + h - y - std::round(0.5f * u);
    if (room < 3.0f * u) return;
    const pitch::BeatBand band = have ? p.band() : pitch::BeatBand::none;
    std::string caption, advice;
    switch (band) {
        case pitch::BeatBand::none:
            caption = v.state == VerdictState::uncertain   ? "no sure pitch now"
                      : v.state == VerdictState::unpitched ? "no pitch to beat"
                      : v.known()                          ? "no sound now"
                                                           : "sing or play a note";
            break;
        case pitch::BeatBand::still: caption = "nearly pure", advice = "hold it there"; break;
        case pitch::BeatBand::countable:
            caption = "slow enough to count";
            advice = heard_pair_differs(r) && r.heard_beat_at_target_hz > 0.05 ? "match the in-tune rate"
                                                                               : "slower is closer";
            break;
        case pitch::BeatBand::flutter:
            // Where the heard pair is not the target's own, it flutters even
            // when the note is right: the rate cannot steer, the cents do.
            caption = "too fast to count";
            advice = heard_pair_differs(r) && r.heard_beat_at_target_hz > 0.05 ? "judge it by the cents"
                                                                               : "flutter: move to the target";
            break;
        case pitch::BeatBand::rough:
            caption = drone ? "heard as roughness" : "would be heard as roughness", advice = "not as beats";
            break;
    }
    if (have && (band == pitch::BeatBand::countable || band == pitch::BeatBand::flutter)) {
        char period[48];
        std::snprintf(period, sizeof period, "%sone beat %.2f s", advice.empty() ? "" : " \xC2\xB7 ",
                      1.0 / p.beat_hz());
        if (text_size(FontFace::body, advice + period).x <= w - 1.6f * u) advice += period;
    }
    const float cap_h = std::round((advice.empty() ? 1.3f : 2.5f) * u);
    const float vx0 = x, vx1 = x0 + w - std::round(0.8f * u);
    const float vy0 = y, vy1 = y + room - cap_h - std::round(0.9f * u);
    if (vy1 - vy0 < 1.5f * u || vx1 - vx0 < 4.0f * u) return;
    dl->AddRectFilled(ImVec2(vx0, vy0), ImVec2(vx1, vy1), palette::kPanelRaised);
    const float cy = std::round(0.5f * (vy0 + vy1));
    dl->AddLine(ImVec2(vx0, cy + 0.5f), ImVec2(vx1, cy + 0.5f), palette::kGrid);
    BeatViewStyle style;
    style.span_s = 4.0;
    style.envelope = band == pitch::BeatBand::rough ? palette::with_alpha(palette::kPulse, 120) : palette::kPulse;
    style.tick = palette::kText;
    style.tick_h = std::round(0.5f * u);
    if (v.known()) draw_beat_view(dl, p, ImVec2(vx0, vy0), ImVec2(vx1, vy1), style);
    const float cy0 = vy1 + std::round(0.3f * u);
    draw_text(dl, FontFace::body, ImVec2(x, cy0), have ? palette::kText : palette::kTextDim,
              fit_text(FontFace::body, caption, w - 1.6f * u));
    if (!advice.empty())
        draw_text(dl, FontFace::body, ImVec2(x, cy0 + std::round(1.2f * u)), palette::kTextDim,
                  fit_text(FontFace::body, advice, w - 1.6f * u));
}

// ---------------------------------------------------------------------------
// [SECTION] Controls
// ---------------------------------------------------------------------------

void PracticeScreen::controls(AppState& app) {
    const float u = ui_unit();
    const Settings& s = app.settings();
    const float gap = std::round(0.8f * u);  // between groups of controls
    // Row 1: the drone.
    const bool on = app.drone_on();
    ImGui::PushStyleColor(ImGuiCol_Button, v4(on ? palette::kAccent : palette::kPanelRaised));
    if (ImGui::Button(on ? "Stop drone" : "Start drone", ImVec2(std::round(7.5f * u), 0))) app.toggle_drone();
    ImGui::PopStyleColor();
    ImGui::SameLine(0, gap);
    ImGui::AlignTextToFramePadding();
    ImGui::TextColored(v4(palette::kTextDim), "Root");
    ImGui::SameLine();
    if (ImGui::Button("\xE2\x88\x92##root")) app.step_root(-1);
    ImGui::SameLine();
    if (!ImGui::IsAnyItemActive() || !ImGui::GetIO().WantTextInput)
        std::snprintf(root_buf_, sizeof root_buf_, "%s", s.root.c_str());
    ImGui::SetNextItemWidth(std::round(3.6f * u));
    if (ImGui::InputText("##root", root_buf_, sizeof root_buf_, ImGuiInputTextFlags_EnterReturnsTrue))
        app.set_root_text(root_buf_);
    ImGui::SameLine();
    if (ImGui::Button("+##root")) app.step_root(+1);
    ImGui::SameLine();
    ImGui::TextColored(v4(palette::kTextDim), "%.2f Hz", app.root_hz());
    ImGui::SameLine(0, gap);
    ImGui::SetNextItemWidth(std::round(5.5f * u));
    if (ImGui::BeginCombo("##timbre", std::string(audio::timbre_name(s.timbre)).c_str())) {
        for (audio::Timbre t : audio::all_timbres())
            if (ImGui::Selectable(std::string(audio::timbre_name(t)).c_str(), t == s.timbre)) app.set_timbre(t);
        ImGui::EndCombo();
    }
    ImGui::SameLine(0, gap);
    ImGui::TextColored(v4(palette::kTextDim), "Level");
    ImGui::SameLine();
    float level = static_cast<float>(s.level_dbfs);
    ImGui::SetNextItemWidth(std::round(5.5f * u));
    if (ImGui::SliderFloat("##level", &level, static_cast<float>(audio::kDroneMinLevelDbfs),
                           static_cast<float>(audio::kDroneMaxLevelDbfs), ""))
        app.set_drone_level(std::round(level));
    const bool level_hovered = ImGui::IsItemHovered();
    ImGui::SameLine();
    ImGui::Text("%.0f dBFS", std::round(level));
    if (level_hovered)
        ImGui::SetTooltip("Drone level (RMS). The limiter holds peaks at or below %.0f dBFS.",
                          audio::kDroneCeilingDbfs);
    ImGui::SameLine(0, gap);
    bool fifth = s.fifth, octave = s.octave;
    if (ImGui::Checkbox("fifth", &fifth)) app.set_fifth(fifth);
    ImGui::SameLine();
    if (ImGui::Checkbox("octave", &octave)) app.set_octave(octave);

    // Row 2: targets and the reference.
    ImGui::AlignTextToFramePadding();
    ImGui::TextColored(v4(palette::kTextDim), "Targets");
    ImGui::SameLine();
    const std::string set_title = app.targets().title.empty() ? s.target_set : app.targets().title;
    ImGui::SetNextItemWidth(std::max(
        std::round(8.5f * u),
        ImGui::CalcTextSize(set_title.c_str()).x + ImGui::GetFrameHeight() + 2.0f * ImGui::GetStyle().FramePadding.x));
    if (ImGui::BeginCombo("##set", set_title.c_str())) {
        for (const std::string& name : builtin_names("targets")) {
            if (name.rfind("hold-", 0) == 0 || name.rfind("ear-", 0) == 0)
                continue;  // drill material, not practice sets
            if (ImGui::Selectable(name.c_str(), name == s.target_set)) app.set_target_set(name);
        }
        // A chord is a target set too: its voices over the lowest.
        ImGui::Separator();
        ImGui::TextColored(v4(palette::kTextFaint), "chords (the voices over the lowest)");
        for (const std::string& name : builtin_names("chord"))
            if (ImGui::Selectable(name.c_str(), name == s.target_set)) app.set_target_set(name);
        ImGui::EndCombo();
    }
    ImGui::SameLine(0, gap);
    if (ImGui::RadioButton("nearest", s.choice == TargetChoice::nearest)) app.set_choice(TargetChoice::nearest);
    ImGui::SameLine();
    if (ImGui::RadioButton("fixed", s.choice == TargetChoice::fixed)) app.set_choice(TargetChoice::fixed);
    ImGui::SameLine();
    if (ImGui::ArrowButton("##prev", ImGuiDir_Left)) app.step_target(-1);
    ImGui::SameLine();
    const auto& ts = app.targets().targets;
    const pitch::Target& fixed = ts[static_cast<std::size_t>(app.fixed_index())];
    // In nearest mode the box shows the target followed now; choosing one fixes it.
    // Two voices: the interval's target, as the view's header names it.
    pitch::Reading duo_target;
    const bool duo_known = app.two_voices() && app.duo().known();
    if (duo_known) {
        duo_target.target_index = app.duo().pair.target_index;
        duo_target.target_octaves = app.duo().pair.target_octaves;
    }
    const pitch::Reading& cur = duo_known ? duo_target : app.current();
    const bool known_now = app.two_voices() ? duo_known : app.verdict().known();
    const int shown_index =
        s.choice == TargetChoice::nearest && known_now ? app.target_index_of(cur) : app.fixed_index();
    // ... as the header names it (an octave up: 14/5, not 7/5).
    const std::string shown = s.choice == TargetChoice::nearest && known_now ? app.target_ratio_text(cur)
                              : shown_index >= 0 ? ts[static_cast<std::size_t>(shown_index)].interval.str()
                                                 : fixed.interval.str();
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
    ImGui::SameLine(0, gap);
    ImGui::TextColored(v4(palette::kTextDim), "A4");
    ImGui::SameLine();
    float a4 = static_cast<float>(s.a4_hz);
    ImGui::SetNextItemWidth(std::round(5.0f * u));
    if (ImGui::DragFloat("##a4", &a4, 0.1f, 400.0f, 480.0f, "%.1f Hz")) app.set_a4(std::round(a4 * 10.0f) / 10.0);
    ImGui::SameLine(0, gap);
    bool two = app.two_voices();
    if (ImGui::Checkbox("two voices", &two)) app.set_two_voices(two);
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("A double stop or a duet in one microphone: the interval (V)");
    ImGui::SameLine(0, gap);
    if (ImGui::Button("Reference")) app.sound_reference();
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("Sounds the current target once above the drone (R)");
}

// ---------------------------------------------------------------------------
// [SECTION] Screen
// ---------------------------------------------------------------------------

void PracticeScreen::build(AppState& app, const ScreenArea& area, double dt_s) {
    (void)dt_s;
    const float u = ui_unit();
    const float W = area.size.x, H = area.size.y;
    ImDrawList* dl = begin_screen_panel("##practice", area);

    const float pad = std::round(1.0f * u);
    const float x0 = area.pos.x + pad, inner_w = W - 2.0f * pad;
    float y = area.pos.y + std::round(0.6f * u);
    const float frame_h = ImGui::GetFrameHeight();
    const float controls_h = 2.0f * frame_h + ImGui::GetStyle().ItemSpacing.y + 2.0f * std::round(0.5f * u);
    if (app.two_voices()) {  // a double stop or a duet: the interval is the verdict (practice_duo.h)
        draw_practice_duo(app, dl, x0, y, inner_w, area.pos.y + H - controls_h - y - std::round(0.4f * u), duo_);
    } else {
        const float header_h = font_px(FontFace::large) + std::round(0.4f * u);
        header(app, dl, x0, y, inner_w, header_h);
        y += header_h + std::round(1.4f * u);  // room for the marker's head
        const float band_h = std::round(std::max(2.6f * u, 0.1f * H));
        const float lane_margin = std::round(1.6f * u);
        lane(app, dl, x0 + lane_margin, y, inner_w - 2.0f * lane_margin, band_h);
        y += band_h + std::round(1.3f * u);  // tick labels
        y += std::round(1.6f * u);           // the centre track
        info_line(app, dl, x0 + lane_margin, y, inner_w);
        y += std::round(1.6f * u);

        const float mid_h = area.pos.y + H - controls_h - y - std::round(0.4f * u);
        if (mid_h > 3.0f * u) {
            const float cue_w = std::round(std::clamp(0.27f * inner_w, 13.0f * u, 20.0f * u));
            const float gap = std::round(0.6f * u);
            trace(app, dl, x0, y, inner_w - cue_w - gap, mid_h);
            beat_cue(app, dl, x0 + inner_w - cue_w, y, cue_w, mid_h);
        }
    }

    ImGui::SetCursorScreenPos(ImVec2(x0, area.pos.y + H - controls_h + std::round(0.5f * u)));
    ImGui::BeginGroup();
    controls(app);
    ImGui::EndGroup();
    end_screen_panel();
}

}  // namespace

std::unique_ptr<Screen> make_practice_screen() { return std::make_unique<PracticeScreen>(); }

}  // namespace beatless::ui
