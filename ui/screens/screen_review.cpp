// Review — the takes, newest first, and one of them opened: its pitch trace against the target lines, zoomed and
// scrolled in time, each held note marked with its deviation against the target it is judged by (meant, nearest, or
// none between targets), the selected note's detail (spread, settle time, the audible pair's beat rate) with its
// pitch and its exact target sounded by the reference voice, and the per-target summary.
// Method: the analysis is `analyze`'s (ui/session/take_analysis.h, review_take); words from ui/session/take_words.h.
// Thread: the UI thread. Allocates: yes (on opening a take; drawing reuses its buffers).
//
// Index: [state] the screen's members; [keys] keys and mouse; [list] the takes; [plot] trace and marks;
// [detail] the selected note and the summary; [build] layout.
#include "ui/screens/screen_review.h"

#include "pitch/base/text.h"
#include "ui/render/imgui_host.h"
#include "ui/screens/palette.h"
#include "ui/screens/take_report.h"
#include "ui/screens/widgets.h"
#include "ui/session/review_worker.h"
#include "ui/session/safe_file.h"
#include "ui/session/take_analysis.h"
#include "ui/session/take_clip.h"
#include "ui/session/take_export.h"
#include "ui/session/take_file.h"
#include "ui/session/take_words.h"
#include "ui/session/wording.h"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>  // key codes only

#include <algorithm>
#include <climits>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace beatless::ui {

namespace {

// ---------------------------------------------------------------------------
// [SECTION] State
// ---------------------------------------------------------------------------

constexpr KeyHelp kReviewKeys[] = {
    {"\xE2\x86\x91 \xE2\x86\x93 Enter", "choose a take, open it"},
    {"\xE2\x86\x90 / \xE2\x86\x92", "previous / next note"},
    {"+ / - or wheel", "zoom in / out in time"},
    {"PgUp / PgDn", "scroll in time"},
    {"Home", "the whole take"},
    {"L / D / B", "hear the recorded note: alone / with its drone / then its target"},
    {"S", "stop what is heard"},
    {"T / P", "sound the note's target / its pitch"},
};

constexpr double kMinSpanS = 0.5;  // the closest zoom
constexpr const char* kDefaultSet = "7-limit";

// "2026-12-03 16:15" from the take's name (its start, local time), else the file name.
std::string take_when(const TakeInfo& t) {
    std::string s = t.audio_path.stem().string();
    if (s.size() >= 17 && s[10] == '_') return s.substr(0, 10) + " " + s.substr(11, 2) + ":" + s.substr(13, 2);
    return s;
}

// What the screen needs of a take reviewed as one voice (its notes) or two (its intervals), alike.
int item_count(const ReviewedTake& t) {
    return static_cast<int>(t.voices == 2 ? t.duo.dyads.size() : t.analysis.notes.size());
}
struct ItemSpan {
    double start_s, end_s;
};
ItemSpan item_span(const ReviewedTake& t, int i) {
    const auto k = static_cast<std::size_t>(i);
    if (t.voices == 2) return {t.duo.dyads[k].start_s, t.duo.dyads[k].end_s};
    return {t.analysis.notes[k].start_s, t.analysis.notes[k].end_s};
}
double take_dur_s(const ReviewedTake& t) { return (t.voices == 2 ? t.duo.info : t.analysis.info).dur_s(); }
const std::vector<pitch::TargetSummary>& take_summary(const ReviewedTake& t) {
    return t.voices == 2 ? t.duo.summary : t.analysis.summary;
}

class ReviewScreen final : public Screen {
public:
    ScreenId id() const override { return ScreenId::review; }
    void build(AppState& app, const ScreenArea& area, double dt_s) override;
    std::span<const KeyHelp> keys() const override { return kReviewKeys; }

    const ReviewView& view() const { return view_; }
    void select(int note, double span_s);
    void export_report(AppState& app);

private:
    void list_takes_now();
    void open(AppState& app, const std::string& path);
    void take_opened(AppState& app);
    std::string default_set_ = kDefaultSet;  // the settings' set, for takes without a sidecar
    void handle_keys(AppState& app);
    void show_whole();
    void follow_selected();
    void draw_list(AppState& app, ImDrawList* dl, float x, float y, float w, float h);
    void draw_summary(ImDrawList* dl, float x, float y, float w, float h);
    double in_tune_cents_ = 5.0;  // the settings' in-tune width, for colours
    void draw_plot(AppState& app, ImDrawList* dl, float x, float y, float w, float h);
    void draw_duo(AppState& app, ImDrawList* dl);  // two voices: both traces and the intervals' marks
    void draw_hidden(ImDrawList* dl, const std::vector<pitch::PartialVoice>& list, double ref_hz, double root_hz,
                     bool intervals);  // voices hidden on a drone partial, outlined
    void draw_trace(ImDrawList* dl, const pitch::DecimatedTrace& trace, std::uint32_t colour);
    void draw_time_axis(ImDrawList* dl);
    void draw_mark(ImDrawList* dl, const ReviewMarkView& m, float y_lo, float y_hi);
    float draw_item_heading(ImDrawList* dl, float x, float y);
    float draw_duo_detail(AppState& app, ImDrawList* dl, float x, float y, float w);
    float draw_note_detail(AppState& app, ImDrawList* dl, float x, float y, float w);
    int voices_asked_ = 0;  // 0: as the take was recorded; 1 or 2: as chosen on the screen
    void draw_detail(AppState& app, ImDrawList* dl, float x, float y, float w, float h);
    void sound(AppState& app, bool target);
    void hear(AppState& app, ClipKind kind);
    void rename(AppState& app, const std::string& stem);
    char rename_buf_[96] = "";
    std::string target_text(int index, int octaves) const;

    bool started_ = false;
    bool wait_ = false;  // simulated time (snapshots, tests): wait for the worker, for a true picture
    std::unique_ptr<ReviewWorker> worker_;  // opens takes and summarises the list off this thread
    std::string opening_;                   // the take being opened ("" when none)
    std::optional<int> select_when_open_;   // a note to select once it is open (--note)
    double span_when_open_ = 0.0;
    std::vector<TakeInfo> takes_;
    int list_sel_ = 0;
    std::optional<ReviewedTake> take_;
    double t0_s_ = 0.0, span_s_ = 10.0;
    int selected_ = -1;
    ReviewView view_;
    bool confirm_delete_ = false;
};

// A target in the octave it was matched at, named as `analyze` names it ("3/2 +1oct"; "5/2" between two voices).
std::string ReviewScreen::target_text(int index, int octaves) const {
    if (!take_) return "";
    return target_words_at(take_->set, index, octaves, take_->voices == 2);
}

namespace {
// "1 note", "3 notes"; a two-voice take counts its held intervals.
std::string count_words(std::size_t n, bool two_voices) {
    const char* noun = two_voices ? " interval" : " note";
    return std::to_string(n) + noun + (n == 1 ? "" : "s");
}
}  // namespace

void ReviewScreen::list_takes_now() {
    std::vector<std::string> problems;
    try {
        takes_ = list_takes(takes_dir(), &problems);
    } catch (const std::exception&) {
        takes_.clear();
    }
    std::vector<std::string> paths;
    for (const TakeInfo& t : takes_) paths.push_back(t.audio_path.string());
    if (worker_) worker_->summarise(paths, default_set_);
    if (wait_ && worker_) worker_->wait_idle();
    list_sel_ = std::clamp(list_sel_, 0, std::max(0, static_cast<int>(takes_.size()) - 1));
}

// Asks the worker to open the take; it shows when ready (take_opened). In simulated time the frame waits for it.
void ReviewScreen::open(AppState& app, const std::string& path) {
    opening_ = path;
    worker_->open(path, default_set_, voices_asked_);
    if (wait_) {
        worker_->wait_idle();
        take_opened(app);
    }
}

void ReviewScreen::take_opened(AppState& app) {
    std::optional<ReviewedTake> t = worker_->opened();
    if (!t) return;
    take_ = std::move(t);
    opening_.clear();
    selected_ = item_count(*take_) == 0 ? -1 : 0;
    confirm_delete_ = false;
    show_whole();
    if (!take_->error.empty()) app.post(take_->error, true);
    if (select_when_open_) {
        select(*select_when_open_, span_when_open_);
        select_when_open_.reset();
    }
}

void ReviewScreen::show_whole() {
    t0_s_ = 0.0;
    span_s_ = take_ && take_->error.empty() ? std::max(kMinSpanS, take_dur_s(*take_)) : 10.0;
}

void ReviewScreen::follow_selected() {
    if (!take_ || selected_ < 0) return;
    const ItemSpan n = item_span(*take_, selected_);
    if (n.start_s < t0_s_ || n.end_s > t0_s_ + span_s_)
        t0_s_ = std::max(0.0, 0.5 * (n.start_s + n.end_s) - 0.5 * span_s_);
}

void ReviewScreen::select(int note, double span_s) {
    if (!take_) return;
    const int count = item_count(*take_);
    selected_ = note >= 0 && note < count ? note : -1;
    if (span_s > 0.0) span_s_ = std::max(kMinSpanS, span_s);
    if (selected_ >= 0) {
        const ItemSpan n = item_span(*take_, selected_);
        t0_s_ = std::max(0.0, 0.5 * (n.start_s + n.end_s) - 0.5 * span_s_);
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Keys
// ---------------------------------------------------------------------------

void ReviewScreen::sound(AppState& app, bool target) {
    if (!take_ || selected_ < 0) return;
    double hz = 0.0;
    if (take_->voices == 2) {  // the upper voice: its target over the lower one, or as sung
        const auto& d = take_->duo.dyads[static_cast<std::size_t>(selected_)];
        hz = target ? d.f_low_hz * std::exp2(d.target_cents / 1200.0) : d.f_high_hz;
    } else {
        const auto& n = take_->analysis.notes[static_cast<std::size_t>(selected_)];
        hz = target ? take_->analysis.root_hz * std::exp2(n.target_cents / 1200.0) : n.centre_f0_hz;
    }
    if (!std::isfinite(hz)) return;
    if (!app.sound_tone(hz, 2.0))
        app.post(app.caution_needed() ? "confirm the hearing caution first" : "no output device to sound it on");
}

// The recorded note itself (ui/session/take_clip.h) through the engine's output, the live drone hushed meanwhile.
void ReviewScreen::hear(AppState& app, ClipKind kind) {
    if (!take_ || selected_ < 0) return;
    try {
        const NoteClip c = make_note_clip(*take_, static_cast<std::size_t>(selected_), kind);
        if (!app.play_clip(c.samples, c.rate_hz))
            app.post(app.caution_needed() ? "confirm the hearing caution first" : "no output device to play it on");
        else
            app.post("playing " + std::string(clip_kind_words(kind)) +
                     (c.drone_regenerated ? " (regenerated from the take's settings)"
                      : c.drone_recorded  ? " (as the microphone heard it)"
                                          : ""));
    } catch (const std::exception& e) {
        app.post(e.what(), true);
    }
}

// Beside the take: the printable page `analyze --report` draws (NAME.report.png) and what `analyze --format csv`
// and `--format json` print (NAME.csv, NAME.json), for one voice or two as the take is read, each written safely
// (ui/session/safe_file.h).
void ReviewScreen::export_report(AppState& app) {
    if (!take_ || !take_->error.empty()) return;
    const bool duo = take_->voices == 2;
    std::filesystem::path p(take_->path);
    ReportData d =
        duo ? two_voice_report_data(take_->set, take_->duo) : one_voice_report_data(take_->set, take_->analysis);
    d.title = take_->title;
    const std::string meant = take_->expect.empty() ? "" : "   \u00b7   meant: " + take_->expect;
    d.subtitle = duo ? "two voices   \u00b7   targets: " + take_->set.title + meant
                     : "root " + pitch::format_trimmed(take_->analysis.root_hz, 3) +
                           " Hz   \u00b7   targets: " + take_->set.title + meant;
    try {
        write_report(std::filesystem::path(p).replace_extension(".report.png").string(), d);
        write_file_safely(std::filesystem::path(p).replace_extension(".csv"),
                          duo ? two_voice_csv(take_->set, take_->duo) : one_voice_csv(take_->set, take_->analysis));
        write_file_safely(std::filesystem::path(p).replace_extension(".json"),
                          (duo ? two_voice_json(take_->path, take_->set, take_->duo)
                               : one_voice_json(take_->path, take_->set, take_->analysis)) +
                              "\n");
        app.post("report, CSV and JSON written beside " + take_->title);
    } catch (const std::exception& e) {
        app.post(e.what(), true);
    }
}

// Renames the take's sound file and its sidecar together; a name with a folder in it, or one already taken, is
// refused with a message.
void ReviewScreen::rename(AppState& app, const std::string& typed) {
    if (!take_) return;
    const std::string stem(pitch::trim(typed));
    if (stem.empty() || stem.find('/') != std::string::npos || stem == "." || stem == "..") {
        app.post("rename: " + pitch::quote(typed) + " is not a file name", true);
        return;
    }
    namespace fs = std::filesystem;
    const fs::path from(take_->path);
    const fs::path to = from.parent_path() / (stem + from.extension().string());
    std::error_code ec;
    if (fs::exists(to, ec) || fs::exists(take_sidecar_path(to), ec)) {
        app.post("rename: " + to.string() + " already exists", true);
        return;
    }
    const bool has_sidecar = fs::exists(take_sidecar_path(from), ec);
    fs::rename(from, to, ec);
    if (!ec && has_sidecar) fs::rename(take_sidecar_path(from), take_sidecar_path(to), ec);
    if (ec) {
        app.post("rename: " + from.string() + ": " + ec.message(), true);
        return;
    }
    worker_->forget(take_->path);
    take_->path = to.string();
    take_->title = to.filename().string();
    worker_->put(*take_);
    rename_buf_[0] = '\0';
    list_takes_now();
    app.post("renamed to " + take_->title);
}

void ReviewScreen::handle_keys(AppState& app) {
    if (ImGui::GetIO().WantTextInput) return;
    const int count = take_ ? item_count(*take_) : 0;
    if (ImGui::IsKeyPressed(GLFW_KEY_RIGHT, true) && count > 0) {
        selected_ = std::min(count - 1, selected_ + 1);
        follow_selected();
    }
    if (ImGui::IsKeyPressed(GLFW_KEY_LEFT, true) && count > 0) {
        selected_ = std::max(0, selected_ - 1);
        follow_selected();
    }
    auto zoom = [&](double by, double at_s) {
        const double dur = take_ ? std::max(kMinSpanS, take_dur_s(*take_)) : 10.0;
        const double span = std::clamp(span_s_ * by, kMinSpanS, dur);
        t0_s_ = std::clamp(at_s - (at_s - t0_s_) * span / span_s_, 0.0, std::max(0.0, dur - span));
        span_s_ = span;
    };
    const double mid = t0_s_ + 0.5 * span_s_;
    if (ImGui::IsKeyPressed(GLFW_KEY_EQUAL, true) || ImGui::IsKeyPressed(GLFW_KEY_KP_ADD, true)) zoom(0.5, mid);
    if (ImGui::IsKeyPressed(GLFW_KEY_MINUS, true) || ImGui::IsKeyPressed(GLFW_KEY_KP_SUBTRACT, true)) zoom(2.0, mid);
    if (ImGui::IsKeyPressed(GLFW_KEY_PAGE_DOWN, true)) t0_s_ += 0.5 * span_s_;
    if (ImGui::IsKeyPressed(GLFW_KEY_PAGE_UP, true)) t0_s_ = std::max(0.0, t0_s_ - 0.5 * span_s_);
    if (ImGui::IsKeyPressed(GLFW_KEY_HOME, false)) show_whole();
    if (take_ && take_->error.empty()) {
        const double dur = std::max(kMinSpanS, take_dur_s(*take_));
        t0_s_ = std::clamp(t0_s_, 0.0, std::max(0.0, dur - span_s_));
    }
    if (ImGui::IsKeyPressed(GLFW_KEY_DOWN, true) && !takes_.empty())
        list_sel_ = std::min(static_cast<int>(takes_.size()) - 1, list_sel_ + 1);
    if (ImGui::IsKeyPressed(GLFW_KEY_UP, true)) list_sel_ = std::max(0, list_sel_ - 1);
    if ((ImGui::IsKeyPressed(GLFW_KEY_ENTER, false) || ImGui::IsKeyPressed(GLFW_KEY_KP_ENTER, false)) &&
        list_sel_ < static_cast<int>(takes_.size()))
        open(app, takes_[static_cast<std::size_t>(list_sel_)].audio_path.string());
    if (ImGui::IsKeyPressed(GLFW_KEY_T, false)) sound(app, true);
    if (ImGui::IsKeyPressed(GLFW_KEY_P, false)) sound(app, false);
    if (ImGui::IsKeyPressed(GLFW_KEY_L, false)) hear(app, ClipKind::note);
    if (ImGui::IsKeyPressed(GLFW_KEY_D, false)) hear(app, ClipKind::with_drone);
    if (ImGui::IsKeyPressed(GLFW_KEY_B, false)) hear(app, ClipKind::then_target);
    if (ImGui::IsKeyPressed(GLFW_KEY_S, false)) app.stop_clip();
    // The wheel over the plot zooms about the time under the pointer.
    const ImVec2 m = ImGui::GetIO().MousePos;
    const float wheel = ImGui::GetIO().MouseWheel;
    if (wheel != 0.0f && view_.open && m.x >= view_.plot_x0 && m.x <= view_.plot_x1 && m.y >= view_.plot_y0 &&
        m.y <= view_.plot_y1) {
        const double at =
            view_.t0_s + (m.x - view_.plot_x0) / (view_.plot_x1 - view_.plot_x0) * (view_.t1_s - view_.t0_s);
        zoom(std::pow(0.8, static_cast<double>(wheel)), at);
    }
}

// ---------------------------------------------------------------------------
// [SECTION] List
// ---------------------------------------------------------------------------

void ReviewScreen::draw_list(AppState& app, ImDrawList* dl, float x, float y, float w, float h) {
    const float u = ui_unit();
    draw_panel(dl, x, y, w, h);
    const float pad = std::round(0.6f * u);
    draw_text(dl, FontFace::medium, ImVec2(x + pad, y + pad), palette::kText, "Takes");
    float ry = y + pad + std::round(1.9f * u);
    view_.takes.clear();
    if (takes_.empty()) {
        draw_text(dl, FontFace::body, ImVec2(x + pad, ry), palette::kTextDim, "No takes yet.");
        draw_text(dl, FontFace::body, ImVec2(x + pad, ry + 1.4f * u), palette::kTextDim,
                  fit_text(FontFace::body, "Record one while practising.", w - 2 * pad));
        return;
    }
    const float row_h = std::round(3.8f * u);
    const int fit = std::max(1, static_cast<int>((y + h - pad - ry) / row_h));
    const int first = std::clamp(list_sel_ - fit + 1, 0, std::max(0, static_cast<int>(takes_.size()) - fit));
    for (int i = first; i < static_cast<int>(takes_.size()) && i < first + fit; ++i) {
        const TakeInfo& t = takes_[static_cast<std::size_t>(i)];
        const std::string path = t.audio_path.string();
        const bool opened = take_ && take_->path == path;
        const ImVec2 a(x + 0.5f * pad, ry), b(x + w - 0.5f * pad, ry + row_h - 2.0f);
        if (i == list_sel_) dl->AddRectFilled(a, b, palette::kPanelRaised, std::round(0.2f * u));
        if (opened) dl->AddRect(a, b, palette::kAccent, std::round(0.2f * u), 0, 2.0f);
        ImGui::SetCursorScreenPos(a);
        ImGui::PushID(i);
        if (ImGui::InvisibleButton("take", ImVec2(b.x - a.x, b.y - a.y))) {
            list_sel_ = i;
            open(app, path);
        }
        ImGui::PopID();
        const ListedSummary row = worker_->summary(path);
        const std::string line2 =
            duration_words(t.duration_s.value_or(NAN)) + "   " + (t.targets.empty() ? "-" : t.targets);
        std::string line3 = "reading\u2026";
        if (row.state == ListedSummary::State::known) {
            line3 = count_words(row.summary.notes, t.voices == 2);
            if (std::isfinite(row.summary.mean_dev_cents))
                line3 += ", mean " + signed_text(row.summary.mean_dev_cents, 1) + " c";
        } else if (row.state == ListedSummary::State::unreadable) {
            line3 = "cannot be read";
        }
        const std::string line1 = take_when(t) + (t.complete ? "" : "  (cut short)");
        draw_text(dl, FontFace::bold, ImVec2(a.x + pad, a.y + 0.15f * u), palette::kText,
                  fit_text(FontFace::bold, line1, w - 3 * pad));
        draw_text(dl, FontFace::body, ImVec2(a.x + pad, a.y + 1.3f * u), palette::kTextDim,
                  fit_text(FontFace::body, line2, w - 3 * pad));
        draw_text(dl, FontFace::body, ImVec2(a.x + pad, a.y + 2.5f * u), palette::kTextDim,
                  fit_text(FontFace::body, line3, w - 3 * pad));
        view_.takes.push_back(line1 + " | " + line2 + " | " + line3);
        ry += row_h;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Plot
// ---------------------------------------------------------------------------

void ReviewScreen::draw_trace(ImDrawList* dl, const pitch::DecimatedTrace& trace, std::uint32_t colour) {
    const ReviewView& v = view_;
    // The trace: bucket means joined, broken at gaps. Where several buckets share a pixel column (a long take
    // seen whole), the column's lowest and highest means are joined instead, so the lines drawn never exceed the
    // plot's width in pixels and every excursion still shows.
    bool pen = false;
    ImVec2 last;
    int col = INT_MIN;
    float col_lo = 0.0f, col_hi = 0.0f;
    auto flush = [&] {
        if (col == INT_MIN) return;
        const float cx = static_cast<float>(col) + 0.5f;
        if (col_hi - col_lo >= 1.0f) dl->AddLine(ImVec2(cx, col_lo), ImVec2(cx, col_hi), colour, 1.5f);
        const ImVec2 q(cx, 0.5f * (col_lo + col_hi));
        if (pen) dl->AddLine(last, q, colour, 1.5f);
        last = q;
        pen = true;
        col = INT_MIN;
    };
    for (std::size_t i = 0; i < trace.size(); ++i) {
        const pitch::TracePoint& p = trace[i];
        if (p.t_s < v.t0_s - trace.bucket_s() || p.t_s > v.t1_s + trace.bucket_s() || p.frames == 0) {
            flush();
            pen = false;
            continue;
        }
        const float px = v.x_of(p.t_s), py = v.y_of(p.mean_cents);
        const int c = static_cast<int>(std::floor(px));
        if (c != col) {
            flush();
            col = c;
            col_lo = col_hi = py;
        } else {
            col_lo = std::min(col_lo, py);
            col_hi = std::max(col_hi, py);
        }
    }
    flush();
}

// A note's (or an interval's) bar in its colour, framed when selected, its deviation above it; a click between y_lo
// and y_hi (pixels) selects it.
void ReviewScreen::draw_mark(ImDrawList* dl, const ReviewMarkView& m, float y_lo, float y_hi) {
    const float u = ui_unit();
    const ReviewView& v = view_;
    const float r = std::round(0.22f * u);
    dl->AddRectFilled(ImVec2(m.x0, m.y - r), ImVec2(m.x1, m.y + r), m.colour);
    if (m.note == selected_)
        dl->AddRect(ImVec2(m.x0 - 3, m.y - r - 3), ImVec2(m.x1 + 3, m.y + r + 3), palette::kCurrentTarget, 0, 0, 2.0f);
    const std::string label = std::isfinite(m.dev_cents) ? signed_text(m.dev_cents, 1)
                              : m.unsure                 ? "unsure"
                                                         : "between";
    const ImVec2 ls = text_size(FontFace::bold, label);
    if (ls.x < m.x1 - m.x0 + 2.0f * u) {
        const float cx = std::round(std::clamp(0.5f * (m.x0 + m.x1), v.plot_x0 + 0.5f * ls.x + 4.0f,
                                               v.plot_x1 - 0.5f * ls.x - 4.0f)),
                    above = std::round(m.y - r - 0.35f * u - ls.y),
                    // A mark near the plot's top edge carries its deviation under the bar instead of half cut off.
            ly = above >= v.plot_y0 + 2.0f ? above : std::round(m.y + r + 0.35f * u);
        dl->AddRectFilled(ImVec2(cx - 0.5f * ls.x - 4, ly - 1), ImVec2(cx + 0.5f * ls.x + 4, ly + ls.y + 1),
                          palette::with_alpha(palette::kPanel, 225), 3.0f);
        draw_text_centred(dl, FontFace::bold, cx, ly, m.colour, label);
    }
    if (ImGui::IsMouseClicked(0)) {
        const ImVec2 mp = ImGui::GetIO().MousePos;
        if (mp.x >= m.x0 && mp.x <= m.x1 && mp.y >= y_lo - 0.8f * u && mp.y <= y_hi + 0.8f * u) selected_ = m.note;
    }
    view_.marks.push_back(m);
}

void ReviewScreen::draw_time_axis(ImDrawList* dl) {
    const float u = ui_unit();
    const ReviewView& v = view_;
    // The time axis: a tick per second or per a round step.
    const double steps[] = {0.1, 0.2, 0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300};
    double step = steps[0];
    for (const double s : steps)
        if (span_s_ / s <= 10.0) {
            step = s;
            break;
        }
    for (double t = std::ceil(v.t0_s / step) * step; t <= v.t1_s + 1e-9; t += step) {
        const float tx = std::round(v.x_of(t));
        dl->AddLine(ImVec2(tx, v.plot_y1), ImVec2(tx, v.plot_y1 + 0.3f * u), palette::kGrid, 1.0f);
        draw_text_centred(dl, FontFace::body, tx, v.plot_y1 + 0.35f * u, palette::kTextDim,
                          pitch::format_trimmed(t, step < 1.0 ? 1 : 0) + " s");
    }
}

// Two voices: octave lines of the reference, both voices' traces (the lower dimmer), and each held interval: a bar
// at each voice, the upper one in its tuning colour with the interval's deviation above it, and the target (the
// upper note the interval meant over the lower) as a line across it.
// Voices the drone removal hid on a drone partial: an outline at the partial over their stretch, their pitch not
// measured; y in cents above ref_hz, the words as `analyze` prints them over root_hz (intervals: two voices).
void ReviewScreen::draw_hidden(ImDrawList* dl, const std::vector<pitch::PartialVoice>& list, double ref_hz,
                               double root_hz, bool intervals) {
    const float u = ui_unit();
    const ReviewView& v = view_;
    view_.hidden.clear();
    view_.hidden_words.clear();
    for (std::size_t i = 0; i < list.size(); ++i) {
        const pitch::PartialVoice& p = list[i];
        view_.hidden_words.push_back(on_partial_words(p, take_->set, root_hz, intervals));
        if (p.end_s < v.t0_s || p.start_s > v.t1_s) continue;
        ReviewMarkView m;
        m.note = static_cast<int>(i);
        m.x0 = v.x_of(p.start_s);
        m.x1 = v.x_of(p.end_s);
        m.cents = 1200.0 * std::log2(p.f_hz / ref_hz);
        m.y = std::round(v.y_of(m.cents));
        m.dev_cents = NAN;
        m.colour = palette::kTextDim;
        const float r = std::round(0.22f * u);
        dl->AddRect(ImVec2(m.x0, m.y - r), ImVec2(m.x1, m.y + r), m.colour, 0.0f, 0, 1.5f);
        draw_text(
            dl, FontFace::body, ImVec2(m.x0, m.y - r - std::round(1.3f * u)), m.colour,
            fit_text(FontFace::body, "voice hidden with the drone (its partial " + std::to_string(p.partial) + ")",
                     v.plot_x1 - m.x0));
        view_.hidden.push_back(m);
    }
}

void ReviewScreen::draw_duo(AppState& app, ImDrawList* dl) {
    const float u = ui_unit();
    const ReviewView& v = view_;
    const TwoVoiceAnalysis& d = take_->duo;
    dl->PushClipRect(ImVec2(v.plot_x0 - std::round(5.0f * u), v.plot_y0), ImVec2(v.plot_x1, v.plot_y1 + 1.0f), true);
    for (int o = static_cast<int>(std::ceil(v.cents_lo / 1200.0));
         o <= static_cast<int>(std::floor(v.cents_hi / 1200.0)); ++o) {
        const float ly = std::round(v.y_of(1200.0 * o)) + 0.5f;
        dl->AddLine(ImVec2(v.plot_x0, ly), ImVec2(v.plot_x1, ly), palette::kGrid, 1.0f);
        draw_text(dl, FontFace::body, ImVec2(v.plot_x0 - std::round(4.6f * u), ly - 0.55f * u), palette::kTextDim,
                  pitch::format_trimmed(d.ref_hz * std::exp2(o), 1) + " Hz");
    }
    dl->PopClipRect();
    dl->PushClipRect(ImVec2(v.plot_x0, v.plot_y0), ImVec2(v.plot_x1, v.plot_y1), true);
    draw_trace(dl, d.low_trace, palette::with_alpha(palette::kTraceLine, 150));
    draw_trace(dl, d.high_trace, palette::kTraceLine);
    const double in_tune = app.settings().in_tune_cents;
    const float r = std::round(0.22f * u);
    for (std::size_t i = 0; i < d.dyads.size(); ++i) {
        const pitch::DyadResult& y = d.dyads[i];
        if (y.end_s < v.t0_s || y.start_s > v.t1_s) continue;
        ReviewMarkView m;
        m.note = static_cast<int>(i);
        m.x0 = v.x_of(y.start_s);
        m.x1 = v.x_of(y.end_s);
        // The judged voice (coloured) and the other: the upper over the lower, or, when a drone was one of the two,
        // the other voice over the drone's root (the reference), which may lie below it.
        const bool drone_pair = d.drone_hz > 0.0;
        m.cents = drone_pair ? y.interval_cents : 1200.0 * std::log2(y.f_high_hz / d.ref_hz);
        m.low_cents =
            drone_pair ? 1200.0 * std::log2(d.drone_hz / d.ref_hz) : 1200.0 * std::log2(y.f_low_hz / d.ref_hz);
        m.y = std::round(v.y_of(m.cents));
        m.y_low = std::round(v.y_of(m.low_cents));
        m.dev_cents = y.dev_cents;
        m.unsure = i < d.judged.size() && d.judged[i].unsure();
        m.colour = std::isfinite(y.dev_cents) ? tuning_colour(tuning_of(y.dev_cents, in_tune)) : palette::kTextDim;
        const bool sel = static_cast<int>(i) == selected_;
        if (std::isfinite(y.target_cents)) {
            const float ty = std::round(v.y_of(drone_pair ? y.target_cents : m.low_cents + y.target_cents)) + 0.5f;
            dl->AddLine(ImVec2(m.x0, ty), ImVec2(m.x1, ty), sel ? palette::kCurrentTarget : palette::kOtherTarget,
                        sel ? 2.0f : 1.0f);
        }
        dl->AddRectFilled(ImVec2(m.x0, m.y_low - 0.5f * r), ImVec2(m.x1, m.y_low + 0.5f * r), palette::kTextDim);
        draw_mark(dl, m, std::min(m.y, m.y_low), std::max(m.y, m.y_low));
    }
    draw_hidden(dl, d.on_partials, d.ref_hz, d.drone_hz, true);
    dl->PopClipRect();
}

// The selected item's heading, "Note 2 of 5   1.20 - 2.85 s" ("Interval ..." for two voices); returns the next line's
// top.
float ReviewScreen::draw_item_heading(ImDrawList* dl, float x, float y) {
    const float u = ui_unit();
    const float pad = std::round(0.6f * u);
    const ItemSpan s = item_span(*take_, selected_);
    char head[128];
    std::snprintf(head, sizeof head, "%s %d of %d   %.2f - %.2f s", take_->voices == 2 ? "Interval" : "Note",
                  selected_ + 1, item_count(*take_), s.start_s, s.end_s);
    draw_text(dl, FontFace::bold, ImVec2(x + pad, y + pad), palette::kTextDim, head);
    view_.heading = head;
    return y + pad + std::round(1.5f * u);
}

// The selected interval: its deviation (wide, narrow), the target, both voices, spread and beat rates.
float ReviewScreen::draw_duo_detail(AppState& app, ImDrawList* dl, float x, float y, float w) {
    const float u = ui_unit();
    const float pad = std::round(0.6f * u);
    const TwoVoiceAnalysis& a = take_->duo;
    const pitch::DyadResult& d = a.dyads[static_cast<std::size_t>(selected_)];
    float ty = draw_item_heading(dl, x, y);
    const auto at = static_cast<std::size_t>(selected_);
    const bool unsure = at < a.judged.size() && a.judged[at].unsure();
    std::string big = unsure ? "unsure" : "between targets", against;
    if (unsure) against = unsure_words(a.judged[at]);
    std::uint32_t colour = palette::kTextDim;
    const double in_tune = app.settings().in_tune_cents;
    if (std::isfinite(d.dev_cents)) {
        colour = tuning_colour(tuning_of(d.dev_cents, in_tune));
        big = signed_text(d.dev_cents, 1) + " c " +
              (std::fabs(d.dev_cents) <= in_tune ? "in tune"
               : d.dev_cents > 0.0               ? "wide"
                                                 : "narrow");
        // Named in the octave it was matched at, as the live two-voice readout and `analyze --voices 2` name it.
        against = "against " + target_text_at(take_->set, d.target_index, d.target_octaves);
        if (const std::string name = target_name_at(take_->set, d.target_index, d.target_octaves); !name.empty())
            against += ", " + name;
    }
    draw_text(dl, FontFace::large, ImVec2(x + pad, ty), colour, big);
    view_.against = against;
    const float big_w = text_size(FontFace::large, big).x;
    draw_text(dl, FontFace::body, ImVec2(x + pad + big_w + u, ty + 0.5f * font_px(FontFace::large) - 0.5f * u),
              palette::kText, fit_text(FontFace::body, against, w - 3 * pad - big_w - u));
    ty += std::round(font_px(FontFace::large) + 0.4f * u);
    // One line of facts: the voices, the interval between them (upper over lower), its spread, the beat.
    std::string facts = "voices " + pitch::format_trimmed(d.f_low_hz, 2) + " and " +
                        pitch::format_trimmed(d.f_high_hz, 2) + " Hz   interval " +
                        pitch::format_trimmed(1200.0 * std::log2(d.f_high_hz / d.f_low_hz), 1) + " c   spread " +
                        pitch::format_trimmed(d.spread_cents, 1) + " c";
    if (std::isfinite(d.measured_beat_hz))
        facts += "   beat " + pitch::format_trimmed(d.measured_beat_hz, 2) + " Hz measured";
    else if (std::isfinite(d.predicted_beat_hz))
        facts += "   beat " + pitch::format_trimmed(d.predicted_beat_hz, 2) + " Hz predicted (partials " +
                 std::to_string(d.partial_low) + ":" + std::to_string(d.partial_high) + ")";
    draw_text(dl, FontFace::body, ImVec2(x + pad, ty), palette::kTextDim, fit_text(FontFace::body, facts, w - 2 * pad));
    ty += std::round(1.8f * u);
    return ty;
}

void ReviewScreen::draw_plot(AppState& app, ImDrawList* dl, float x, float y, float w, float h) {
    const float u = ui_unit();
    draw_panel(dl, x, y, w, h);
    view_.open = false;
    view_.marks.clear();
    view_.reading = !opening_.empty();
    if (!opening_.empty()) {
        draw_text(dl, FontFace::body, ImVec2(x + u, y + u), palette::kTextDim,
                  fit_text(FontFace::body, "reading " + std::filesystem::path(opening_).filename().string() + "\u2026",
                           w - 2 * u));
        return;
    }
    if (!take_) {
        draw_text(dl, FontFace::body, ImVec2(x + u, y + u), palette::kTextDim, "no take open");
        return;
    }
    if (!take_->error.empty()) {
        draw_text(dl, FontFace::body, ImVec2(x + u, y + u), palette::kWarning,
                  fit_text(FontFace::body, take_->error, w - 2 * u));
        return;
    }
    const OneVoiceAnalysis& a = take_->analysis;
    // Cents range: the notes and the voiced trace, with a margin.
    double lo = INFINITY, hi = -INFINITY;
    for (const auto& n : a.notes) lo = std::min(lo, n.cents_above_root), hi = std::max(hi, n.cents_above_root);
    // Voices hidden on a drone partial are in view too (cents above the plot's reference).
    const auto& hidden = take_->voices == 2 ? take_->duo.on_partials : a.on_partials;
    const double hidden_ref_hz = take_->voices == 2 ? take_->duo.ref_hz : a.root_hz;
    for (const auto& p : hidden) {
        const double c = 1200.0 * std::log2(p.f_hz / hidden_ref_hz);
        lo = std::min(lo, c), hi = std::max(hi, c);
    }
    if (take_->voices == 2) {  // both voices, in cents above the reference
        const TwoVoiceAnalysis& d = take_->duo;
        for (const auto& y : d.dyads) {
            lo = std::min(lo, 1200.0 * std::log2(y.f_low_hz / d.ref_hz));
            hi = std::max(hi, 1200.0 * std::log2(y.f_high_hz / d.ref_hz));
        }
        for (const auto* t : {&d.low_trace, &d.high_trace})
            if (!std::isfinite(lo))
                for (std::size_t i = 0; i < t->size(); ++i)
                    if ((*t)[i].frames > 0)
                        lo = std::min(lo, (*t)[i].mean_cents), hi = std::max(hi, (*t)[i].mean_cents);
    }
    if (!std::isfinite(lo))
        for (std::size_t i = 0; i < a.trace.size(); ++i)
            if (a.trace[i].frames > 0)
                lo = std::min(lo, a.trace[i].mean_cents), hi = std::max(hi, a.trace[i].mean_cents);
    if (!std::isfinite(lo)) lo = 0.0, hi = 1200.0;
    lo -= 60.0;
    hi += 60.0;
    // A hidden voice's words go above its outline: room for them under the top.
    const double words_c = 0.12 * (hi - lo);
    for (const auto& p : hidden) hi = std::max(hi, 1200.0 * std::log2(p.f_hz / hidden_ref_hz) + 60.0 + words_c);
    // One voice: the target lines in every octave in view, each named in its octave as `analyze` names a note
    // matched there ("5/4 +1oct"); the label column fits the longest name, within 9 units.
    struct Line {
        double cents;
        std::string label;
        bool used;
    };
    std::vector<Line> lines;
    float label_w = std::round(5.0f * u);
    if (take_->voices != 2) {
        std::vector<bool> used(take_->set.targets.size(), false);
        for (const auto& n : a.notes)
            if (n.target_index >= 0) used[static_cast<std::size_t>(n.target_index)] = true;
        for (std::size_t k = 0; k < take_->set.targets.size(); ++k) {
            const double c = take_->set.targets[k].interval.cents();
            for (int o = static_cast<int>(std::floor((lo - c) / 1200.0));
                 o <= static_cast<int>(std::ceil((hi - c) / 1200.0)); ++o) {
                const double tc = c + 1200.0 * o;
                if (tc < lo || tc > hi) continue;
                lines.push_back({tc, target_text(static_cast<int>(k), o), used[k]});
                label_w = std::max(label_w, std::round(text_size(FontFace::body, lines.back().label).x + 1.0f * u));
            }
        }
        label_w = std::min(label_w, std::round(9.0f * u));
    }
    view_.open = true;
    view_.title = take_->title;
    view_.plot_x0 = x + label_w;
    view_.plot_x1 = x + w - std::round(0.6f * u);
    view_.plot_y0 = y + std::round(0.6f * u);
    view_.plot_y1 = y + h - std::round(1.8f * u);
    view_.t0_s = t0_s_;
    view_.t1_s = t0_s_ + span_s_;
    view_.cents_lo = lo;
    view_.cents_hi = hi;
    view_.selected = selected_;
    view_.lines.clear();
    const ReviewView& v = view_;
    if (take_->voices == 2) {
        draw_duo(app, dl);
        draw_time_axis(dl);
        return;
    }
    dl->PushClipRect(ImVec2(x, v.plot_y0), ImVec2(v.plot_x1, v.plot_y1 + 1.0f), true);
    // Labelled at the left where a label fits: the targets the notes are judged against first, then the others.
    std::stable_sort(lines.begin(), lines.end(), [](const Line& p, const Line& q) { return p.used > q.used; });
    const float label_h = font_px(FontFace::body);
    for (const Line& ln : lines) {
        ReviewLineView lv;
        lv.cents = ln.cents;
        lv.y = std::round(v.y_of(ln.cents)) + 0.5f;
        dl->AddLine(ImVec2(v.plot_x0, lv.y), ImVec2(v.plot_x1, lv.y), palette::kOtherTarget, 1.0f);
        bool clear = true;
        for (const ReviewLineView& o : view_.lines)
            clear = clear && (o.label.empty() || std::fabs(o.y - lv.y) >= label_h);
        if (clear) {
            lv.label = fit_text(FontFace::body, ln.label, label_w - 0.6f * u);
            lv.label_x0 = x + 0.4f * u;
            lv.label_y0 = lv.y - 0.55f * u;
            const ImVec2 sz = text_size(FontFace::body, lv.label);
            lv.label_x1 = lv.label_x0 + sz.x;
            lv.label_y1 = lv.label_y0 + sz.y;
            draw_text(dl, FontFace::body, ImVec2(lv.label_x0, lv.label_y0),
                      ln.used ? palette::kText : palette::kTextDim, lv.label);
        }
        view_.lines.push_back(std::move(lv));
    }
    // The selected note's target, in the current target's colour.
    if (selected_ >= 0 && std::isfinite(a.notes[static_cast<std::size_t>(selected_)].target_cents)) {
        const double tc = a.notes[static_cast<std::size_t>(selected_)].target_cents;
        const float ly = std::round(v.y_of(tc)) + 0.5f;
        dl->AddLine(ImVec2(v.plot_x0, ly), ImVec2(v.plot_x1, ly), palette::kCurrentTarget, 2.0f);
    }
    dl->PopClipRect();
    dl->PushClipRect(ImVec2(v.plot_x0, v.plot_y0), ImVec2(v.plot_x1, v.plot_y1), true);
    draw_trace(dl, a.trace, palette::kTraceLine);
    // The notes: a bar at each centre, coloured by tuning, its deviation above it.
    const double in_tune = app.settings().in_tune_cents;
    for (std::size_t i = 0; i < a.notes.size(); ++i) {
        const auto& n = a.notes[i];
        if (n.end_s < v.t0_s || n.start_s > v.t1_s) continue;
        ReviewMarkView m;
        m.note = static_cast<int>(i);
        m.x0 = v.x_of(n.start_s);
        m.x1 = v.x_of(n.end_s);
        m.y = std::round(v.y_of(n.cents_above_root));
        m.cents = n.cents_above_root;
        m.dev_cents = n.dev_cents;
        m.unsure = i < a.judged.size() && a.judged[i].unsure();
        m.colour = std::isfinite(n.dev_cents) ? tuning_colour(tuning_of(n.dev_cents, in_tune)) : palette::kTextDim;
        draw_mark(dl, m, m.y, m.y);
    }
    draw_hidden(dl, a.on_partials, a.root_hz, a.root_hz, false);
    dl->PopClipRect();
    draw_time_axis(dl);
}

// ---------------------------------------------------------------------------
// [SECTION] Detail
// ---------------------------------------------------------------------------

// The selected note's judgement and facts; returns where the buttons go.
float ReviewScreen::draw_note_detail(AppState& app, ImDrawList* dl, float x, float y, float w) {
    const float u = ui_unit();
    const float pad = std::round(0.6f * u);
    const OneVoiceAnalysis& a = take_->analysis;
    const auto& n = a.notes[static_cast<std::size_t>(selected_)];
    const auto& j = take_->analysis.judged[static_cast<std::size_t>(selected_)];
    float ty = draw_item_heading(dl, x, y);
    std::string big, against;
    std::uint32_t colour = palette::kTextDim;
    if (std::isfinite(n.dev_cents)) {
        const Tuning tn = tuning_of(n.dev_cents, app.settings().in_tune_cents);
        colour = tuning_colour(tn);
        big = signed_text(n.dev_cents, 1) + " c " + std::string(tuning_word(tn));
        const std::string tgt = target_text(n.target_index, n.target_octaves);
        against = "against " + tgt + (j.meant_index >= 0 ? ", the target meant" : ", the nearest target");
    } else if (j.unsure()) {
        big = "unsure";
        against = unsure_words(j);
    } else {
        big = "between targets";
        against = off_words(j.nearest.dev_cents, false) + " of " +
                  target_text(static_cast<int>(j.nearest.index), j.nearest.octaves) + ", the nearest; none within " +
                  pitch::format_trimmed(pitch::IntentConfig{}.between_cents, 0) + " c";
    }
    draw_text(dl, FontFace::large, ImVec2(x + pad, ty), colour, big);
    view_.against = against;
    const float big_w = text_size(FontFace::large, big).x;
    draw_text(dl, FontFace::body, ImVec2(x + pad + big_w + u, ty + 0.5f * font_px(FontFace::large) - 0.5f * u),
              palette::kText, fit_text(FontFace::body, against, w - 3 * pad - big_w - u));
    ty += std::round(font_px(FontFace::large) + 0.4f * u);
    const std::string remark = j.between || j.unsure() ? std::string() : judgement_words(j, take_->set, false);
    view_.remark = remark;
    if (!remark.empty()) {
        draw_text(dl, FontFace::body, ImVec2(x + pad, ty), palette::kText,
                  fit_text(FontFace::body, remark, w - 2 * pad));
        ty += std::round(1.4f * u);
    }
    std::string facts =
        "spread " + pitch::format_trimmed(n.spread_cents, 1) + " c   settled " +
        (std::isfinite(n.settle_s) ? "in " + pitch::format_trimmed(n.settle_s, 2) + " s" : std::string("never"));
    if (std::isfinite(n.beat_hz))
        facts += "   beat " + pitch::format_trimmed(n.beat_hz, 2) + " Hz (partials " + std::to_string(n.partial_root) +
                 ":" + std::to_string(n.partial_voice) + ", " + beat_heard_word(n.beat_hz, a.drone_hz > 0.0) + ")";
    draw_text(dl, FontFace::body, ImVec2(x + pad, ty), palette::kTextDim, fit_text(FontFace::body, facts, w - 2 * pad));
    ty += std::round(1.8f * u);
    return ty;
}

void ReviewScreen::draw_detail(AppState& app, ImDrawList* dl, float x, float y, float w, float h) {
    const float u = ui_unit();
    draw_panel(dl, x, y, w, h);
    const float pad = std::round(0.6f * u);
    view_.heading.clear();
    view_.against.clear();
    view_.remark.clear();
    if (!take_ || !take_->error.empty()) return;
    const HeardLevels& heard = take_->voices == 2 ? take_->duo.heard : take_->analysis.heard;
    if (item_count(*take_) == 0) {
        draw_text(dl, FontFace::body, ImVec2(x + pad, y + pad), palette::kTextDim,
                  fit_text(FontFace::body, nothing_found_words(heard.loudest_dbfs, heard.snr_db, take_->voices == 2),
                           w - 2 * pad));
        return;
    }
    if (selected_ < 0) {
        draw_text(dl, FontFace::body, ImVec2(x + pad, y + pad), palette::kTextDim,
                  "choose a note: click it, or Left / Right");
        return;
    }
    const float ty = take_->voices == 2 ? draw_duo_detail(app, dl, x, y, w) : draw_note_detail(app, dl, x, y, w);
    const bool has_target =
        std::isfinite(take_->voices == 2 ? take_->duo.dyads[static_cast<std::size_t>(selected_)].target_cents
                                         : take_->analysis.notes[static_cast<std::size_t>(selected_)].target_cents);
    ImGui::SetCursorScreenPos(ImVec2(x + pad, ty));
    if (ImGui::Button("Hear it (L)")) hear(app, ClipKind::note);
    ImGui::SameLine();
    if (ImGui::Button("with its drone (D)")) hear(app, ClipKind::with_drone);
    ImGui::SameLine();
    ImGui::BeginDisabled(!has_target);
    if (ImGui::Button("then its target (B)")) hear(app, ClipKind::then_target);
    ImGui::EndDisabled();
    ImGui::SameLine();
    ImGui::BeginDisabled(!app.clip_playing());
    if (ImGui::Button("Stop (S)")) app.stop_clip();
    ImGui::EndDisabled();
    ImGui::SetCursorScreenPos(ImVec2(x + pad, ImGui::GetCursorScreenPos().y));
    ImGui::BeginDisabled(!has_target);
    if (ImGui::Button("Sound the target (T)")) sound(app, true);
    ImGui::EndDisabled();
    ImGui::SameLine();
    if (ImGui::Button("Sound its pitch (P)")) sound(app, false);
    ImGui::SameLine();
    if (ImGui::Button("Export PNG, CSV, JSON")) export_report(app);
    ImGui::SetCursorScreenPos(ImVec2(x + pad, ImGui::GetCursorScreenPos().y));
    ImGui::SetNextItemWidth(std::round(9.0f * u));
    ImGui::InputTextWithHint("##rename", "new name", rename_buf_, sizeof rename_buf_);
    ImGui::SameLine();
    if (ImGui::Button("Rename") && rename_buf_[0] != '\0') rename(app, rename_buf_);
    ImGui::SameLine();
    if (!confirm_delete_) {
        if (ImGui::Button("Delete take")) confirm_delete_ = true;
    } else {
        if (ImGui::Button("Delete: yes")) {
            std::error_code ec;
            std::filesystem::remove(take_->path, ec);
            std::filesystem::remove(take_sidecar_path(take_->path), ec);
            app.post("deleted " + take_->title);
            worker_->forget(take_->path);
            take_.reset();
            selected_ = -1;
            list_takes_now();
        }
        ImGui::SameLine();
        if (ImGui::Button("keep it")) confirm_delete_ = false;
    }
}

void ReviewScreen::draw_summary(ImDrawList* dl, float x, float y, float w, float h) {
    const float u = ui_unit();
    draw_panel(dl, x, y, w, h);
    const float pad = std::round(0.6f * u);
    draw_text(dl, FontFace::medium, ImVec2(x + pad, y + pad), palette::kText, "Per target");
    view_.summary_rows.clear();
    if (!take_ || !take_->error.empty()) return;
    float ty = y + pad + std::round(1.9f * u);
    // One line a target: its ratio, the mean deviation (its colour and word), the count and the spread; when the
    // targets outnumber the panel's two-line rows, one line each; when even those do not fit, a last line says how
    // many are not shown, so no target disappears silently.
    const auto& rows = take_summary(*take_);
    // The name column fits the longest name ("3/2 +1oct", "45/16"), within 45 % of the panel.
    float col = std::round(4.5f * u);
    for (const auto& row : rows) {
        view_.summary_rows.push_back(target_text(row.target_index, row.target_octaves));
        col = std::max(col, std::round(text_size(FontFace::bold, view_.summary_rows.back()).x + 0.8f * u));
    }
    col = std::min(col, std::round(0.45f * (w - 2 * pad)));
    const float room = y + h - pad - ty;
    const bool compact = static_cast<float>(rows.size()) * std::round(2.6f * u) > room;
    const float row_h = compact ? std::round(1.4f * u) : std::round(2.6f * u);
    std::size_t fit = static_cast<std::size_t>(std::max(0.0f, room / row_h));
    if (fit < rows.size() && fit > 0) --fit;  // the last line names what is not shown
    // "mean 2.1 c sharp" on every row, or on none where the column is too narrow for one of them.
    bool with_mean = true;
    for (const auto& row : rows)
        if (text_size(FontFace::bold, "mean " + off_words(row.mean_dev_cents, take_->voices == 2)).x >
            w - 2 * pad - col)
            with_mean = false;
    for (std::size_t i = 0; i < rows.size() && i < fit; ++i) {
        const auto& row = rows[i];
        const Tuning tn = tuning_of(row.mean_dev_cents, in_tune_cents_);
        draw_text(dl, FontFace::bold, ImVec2(x + pad, ty), palette::kText,
                  fit_text(FontFace::bold, view_.summary_rows[i], col - 0.3f * u));
        std::string more = count_words(row.count, take_->voices == 2);
        if (row.count > 1) more += ", spread " + pitch::format_trimmed(row.spread_cents, 1) + " c";
        const std::string mean =
            std::string(with_mean ? "mean " : "") + off_words(row.mean_dev_cents, take_->voices == 2);
        if (compact) {
            draw_text(dl, FontFace::bold, ImVec2(x + pad + col, ty), tuning_colour(tn),
                      fit_text(FontFace::bold, off_words(row.mean_dev_cents, take_->voices == 2) + " \xC2\xB7 " + more,
                               w - 2 * pad - col));
        } else {
            draw_text(dl, FontFace::bold, ImVec2(x + pad + col, ty), tuning_colour(tn),
                      fit_text(FontFace::bold, mean, w - 2 * pad - col));
            draw_text(dl, FontFace::body, ImVec2(x + pad + col, ty + 1.2f * u), palette::kTextDim,
                      fit_text(FontFace::body, more, w - 2 * pad - col));
        }
        ty += row_h;
    }
    if (fit < rows.size()) {
        const std::size_t hidden = rows.size() - fit;
        draw_text(dl, FontFace::body, ImVec2(x + pad, ty), palette::kTextDim,
                  fit_text(FontFace::body,
                           "+ " + std::to_string(hidden) + (hidden == 1 ? " more target" : " more targets") +
                               " (in the exported report)",
                           w - 2 * pad));
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Build
// ---------------------------------------------------------------------------

void ReviewScreen::build(AppState& app, const ScreenArea& area, double) {
    default_set_ = app.settings().target_set.empty() ? kDefaultSet : app.settings().target_set;
    if (!started_) {
        started_ = true;
        wait_ = app.options().simulated;
        std::filesystem::path cache;
        try {
            cache = takes_dir() / ".review-cache";
        } catch (const std::exception&) {  // no data folder: nothing kept between runs
        }
        worker_ = std::make_unique<ReviewWorker>(cache);
        if (app.options().review_note) {
            select_when_open_ = *app.options().review_note - 1;
            span_when_open_ = app.options().review_span_s.value_or(0.0);
        }
        list_takes_now();
        if (!app.options().take.empty())
            open(app, app.options().take);
        else if (!takes_.empty())
            open(app, takes_.front().audio_path.string());
    }
    take_opened(app);
    handle_keys(app);
    in_tune_cents_ = app.settings().in_tune_cents;

    const float u = ui_unit();
    ImDrawList* dl = begin_screen_panel("##review", area);
    const float pad = std::round(0.8f * u), gap = std::round(0.5f * u);
    const float top = area.pos.y + std::round(0.5f * u), bottom = area.pos.y + area.size.y - std::round(0.5f * u);
    const float x0 = area.pos.x + pad, w = area.size.x - 2.0f * pad, H = bottom - top;
    const float left_w = std::round(std::clamp(0.27f * w, 15.0f * u, 22.0f * u));
    // The list takes what its rows need (at least three rows' room, at most 58 %); the summary the rest.
    const float rows_h =
        std::round(2.5f * u) + std::round(3.8f * u) * static_cast<float>(std::max<std::size_t>(3, takes_.size()));
    const float list_h = std::round(std::min(0.58f * H, rows_h));
    draw_list(app, dl, x0, top, left_w, list_h);
    draw_summary(dl, x0, top + list_h + gap, left_w, H - list_h - gap);
    const float rx = x0 + left_w + gap, rw = w - left_w - gap;
    // The take's title line.
    const float title_h = std::round(1.8f * u);
    if (take_) {
        std::string line = take_->title;
        if (take_->error.empty() && take_->voices == 2)
            line += "   two voices   targets " + take_->set_name +
                    (take_->duo.drone_hz > 0.0
                         ? "   drone " + pitch::format_trimmed(take_->duo.drone_hz, 2) + " Hz, one of the two"
                         : "");
        else if (take_->error.empty())
            line += "   root " + pitch::format_trimmed(take_->analysis.root_hz, 2) + " Hz   targets " +
                    take_->set_name + (take_->expect.empty() ? "" : "   meant " + take_->expect);
        // Any take may be read as one voice or as two (a double stop, a duet, a voice over its drone).
        const char* as = take_->voices == 2 ? "Read as one voice" : "Read as two voices";
        const float bw = ImGui::CalcTextSize(as).x + 2.0f * ImGui::GetStyle().FramePadding.x;
        draw_text(dl, FontFace::bold, ImVec2(rx, top + 0.2f * u), palette::kText,
                  fit_text(FontFace::bold, line, rw - bw - u));
        ImGui::SetCursorScreenPos(ImVec2(rx + rw - bw, top));
        if (ImGui::SmallButton(as)) {
            voices_asked_ = take_->voices == 2 ? 1 : 2;
            open(app, take_->path);
        }
    }
    const float detail_h = std::round(std::clamp(0.36f * H, 10.0f * u, 12.5f * u));
    draw_plot(app, dl, rx, top + title_h, rw, H - title_h - detail_h - gap);
    draw_detail(app, dl, rx, bottom - detail_h, rw, detail_h);
    end_screen_panel();
}

}  // namespace

std::unique_ptr<Screen> make_review_screen() { return std::make_unique<ReviewScreen>(); }

const ReviewView* review_view(const Screen& screen) {
    const auto* r = dynamic_cast<const ReviewScreen*>(&screen);
    return r ? &r->view() : nullptr;
}

void review_select(Screen& screen, int note, double span_s) {
    if (auto* r = dynamic_cast<ReviewScreen*>(&screen)) r->select(note, span_s);
}

void review_export(Screen& screen, AppState& app) {
    if (auto* r = dynamic_cast<ReviewScreen*>(&screen)) r->export_report(app);
}

}  // namespace beatless::ui
