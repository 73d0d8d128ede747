// Drills — choose a drill, run it, see each result at once, and the history.
//
//   ┌ Drills ────────────┬ now: the target, the countdown, the lane (holds);  ┐
//   │ one entry per      │      the question and the answer buttons (ear)     │
//   │ built-in drill:    ├ last attempt: the result in words and its trace    │
//   │ title, about       │      against the target line and the band          │
//   │ [Start] [Stop]     │                                                    │
//   ├ history (ui/screens/drill_chart.h): mean deviation per target per day, small  ┤
//   │ plots; the ear threshold per day for ear drills                         │
//   └──────────────────────────────────────────────────────────────────────────┘
// The runner (ui/session/drill_runner.h) keeps the time: for holds the engine's
// stream time (the readings' clock), so the demo performer and a snapshot
// follow the same schedule; for ear questions the frames' clock. Attempts go
// to the practice log through a LogWriter on this (the screen's) thread;
// when it cannot write, a one-line warning stays across the top until they
// are saved, and the drill goes on. The history panel reads the log with the
// queries `beatless history` uses (ui/session/log_summary.h), once per saved attempt and
// when another drill is chosen. Leaving the screen stops a drill (a hold not
// yet over is dropped). With two voices (--voices 2, or V on the Practice screen) a hold drill scores the
// interval of a double stop: the now panel shows the Practice screen's two-voice lane and voices
// (ui/screens/practice_duo.h) against the hold's target, and the runner is fed the two-voice frames.
//
// Index: [state] [run] [now panel] [attempt panel] [left column] [screen]
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "ui/screens/drill_chart.h"
#include "ui/screens/lane.h"
#include "ui/screens/palette.h"
#include "ui/screens/practice_duo.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"
#include "ui/session/drill_runner.h"
#include "ui/session/listener_model.h"
#include "ui/session/log_writer.h"
#include "ui/session/paths.h"
#include "ui/session/target_files.h"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>  // key codes only

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <map>
#include <memory>
#include <string>
#include <vector>

namespace beatless::ui {

namespace {

// ---------------------------------------------------------------------------
// [SECTION] State
// ---------------------------------------------------------------------------

constexpr double kRetryEveryS = 10.0;  // unsaved attempts: try the log again this often
constexpr double kAwayS = 0.5;         // no frame of this screen for this long: it was left

ImVec4 v4(std::uint32_t c) { return ImGui::ColorConvertU32ToFloat4(c); }

// The voices a drill is run and its history read with: a hold drill scores the interval of two voices while the two-
// voice mode is on (V on the Practice screen); an ear drill has one.
int drill_voices(const Drill& d, const AppState& app) { return d.mode == DrillMode::hold && app.two_voices() ? 2 : 1; }

constexpr KeyHelp kDrillKeys[] = {
    {"Enter", "start the chosen drill (again)"},
    {"S", "stop the drill"},
    {"1 .. 9", "ear drills: answer (the first, the second; or the interval's number)"},
    {"PgUp / PgDn", "choose the drill above / below"},
    {"Lane", "during a hold: your pitch; the green window is the drill's tolerance"},
};

class DrillsScreen final : public Screen {
public:
    ~DrillsScreen() override {
        // Closing the program: one more try, then nothing kept in memory is lost.
        if (!writer_ || writer_->pending() == 0) return;
        const SaveResult r = writer_->retry();
        if (r.pending > 0)
            std::fprintf(stderr, "beatless: %s\n", keep_unsaved(*writer_, log_warning_line(log_path_, r)).c_str());
    }
    ScreenId id() const override { return ScreenId::drills; }
    std::span<const KeyHelp> keys() const override { return kDrillKeys; }
    void build(AppState& app, const ScreenArea& area, double dt_s) override;

private:
    void load(AppState& app);
    void start(AppState& app);
    void stop(AppState& app, const char* why);
    void pump(AppState& app);
    void keys_of_screen(AppState& app);

    void left_column(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void now_panel(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void hold_now(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void ear_now(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void idle_now(const AppState& app, ImDrawList* dl, float x0, float y0, float w, float h);
    void attempt_panel(ImDrawList* dl, float x0, float y0, float w, float h);
    void hold_trace(ImDrawList* dl, const HoldResult& r, float x0, float y0, float w, float h);
    void ear_track(ImDrawList* dl, float x0, float y0, float w, float h);
    void ear_matrix(ImDrawList* dl, float x0, float y0, float w, float h);

    const Drill* chosen() const { return selected_ < drills_.size() ? &drills_[selected_] : nullptr; }
    const Drill& run_drill() const { return runner_->drill(); }

    bool loaded_ = false;
    std::vector<Drill> drills_;
    std::size_t selected_ = 0;
    std::size_t list_first_ = 0;                               // first drill shown when the list needs scrolling
    std::size_t list_follows_ = static_cast<std::size_t>(-1);  // the choice the list last scrolled to
    std::unique_ptr<LogWriter> writer_;
    std::string log_path_;
    std::unique_ptr<DrillRunner> runner_;
    bool drill_owned_ = false;  // AppState is in drill mode for us
    std::size_t target_seen_ = static_cast<std::size_t>(-1);
    double last_fed_t_ = -INFINITY;
    double last_build_s_ = -1.0;
    double next_retry_s_ = 0.0;
    std::size_t results_seen_ = 0;
    bool ear_done_seen_ = false;
    bool warned_unheard_ = false;
    std::string shown_warning_;
    double now_s_ = 0.0;  // the runner's clock this frame
    // History.
    bool history_dirty_ = true;
    DrillProgress history_;
    std::vector<ImVec2> points_;                     // polyline scratch
    std::optional<ui::SimulatedListener> listener_;  // --listener: answers ear questions
    double answer_due_s_ = INFINITY;
};

// ---------------------------------------------------------------------------
// [SECTION] Run
// ---------------------------------------------------------------------------

void DrillsScreen::load(AppState& app) {
    loaded_ = true;
    for (const std::string& name : builtin_names("drill")) {
        try {
            drills_.push_back(load_drill(name));
        } catch (const Error& e) {
            app.post(e.what(), true);
        }
    }
    const AppOptions& o = app.options();
    if (!o.listener.empty()) {
        try {
            listener_.emplace(parse_listener(o.listener, o.seed));
        } catch (const Error& e) {
            app.post(e.what(), true);
        }
    }
    if (o.log) {
        try {
            log_path_ = (o.log_file.empty() ? practice_log_path() : std::filesystem::path(o.log_file)).string();
            writer_ = std::make_unique<LogWriter>(log_path_);
        } catch (const Error& e) {
            app.post(std::string(e.what()) + "; attempts are not saved", true);
        }
    }
    if (!o.drill.empty()) {
        bool found = false;
        for (std::size_t i = 0; i < drills_.size(); ++i)
            if (drills_[i].id == o.drill) selected_ = i, found = true;
        if (!found) {
            try {  // a drill file by path
                drills_.push_back(load_drill(o.drill));
                selected_ = drills_.size() - 1;
                found = true;
            } catch (const Error& e) {
                app.post(e.what(), true);
            }
        }
        if (found) start(app);
    }
}

void DrillsScreen::start(AppState& app) {
    const Drill* c = chosen();
    if (!c) return;
    if (runner_ && runner_->running()) stop(app, nullptr);
    Drill d = *c;
    try {
        d.drone.root_hz = pitch::parse_frequency(d.drone.root_text, app.settings().a4_hz);
    } catch (const Error& e) {
        app.post(e.what(), true);
        return;
    }
    if (d.mode == DrillMode::hold && !app.engine_running()) {
        app.post("no input: a hold drill listens to you; choose an input in Settings (or start with --demo)", true);
        return;
    }
    const AppOptions& o = app.options();
    if (d.mode == DrillMode::ear && !listener_ && !app.drone_heard()) {
        app.post(
            "no output device: an ear drill plays its questions, so it cannot start without one; choose an output in "
            "Settings",
            true);
        return;
    }
    RunnerConfig rc;
    rc.seed = o.demo || o.simulated
                  ? o.seed
                  : static_cast<std::uint64_t>(std::chrono::steady_clock::now().time_since_epoch().count());
    rc.performer = d.mode == DrillMode::ear ? (listener_ ? kSimulatedListener : "") : o.demo ? kDemoPerformer : "";
    rc.voices = drill_voices(d, app);
    auto runner = std::make_unique<DrillRunner>(d, rc, writer_.get());
    // The name load_drill finds it by again: the file given with --drill, else the drill's id (a built-in's name).
    const std::string name =
        !o.drill.empty() && std::filesystem::path(o.drill).stem().string() == d.id ? o.drill : d.id;
    if (!app.begin_drill(drill_drone(d), name)) return;
    drill_owned_ = true;
    const bool hold = d.mode == DrillMode::hold;
    app.set_drill_targets(
        one_target_set(hold && runner->current_target() ? *runner->current_target() : d.targets.front()));
    // Holds run on the input's clock (readings carry it); ear questions on the frames' clock.
    double t0 = hold ? app.stream_time_s() : app.app_time_s();
    if (hold && o.demo && app.sing_script(demo_script(*runner))) t0 = 0.0;  // the engine starts again with her notes
    runner_ = std::move(runner);
    runner_->start(t0);
    now_s_ = t0;
    target_seen_ = runner_->hold_index();
    last_fed_t_ = t0;
    results_seen_ = 0;
    ear_done_seen_ = false;
    warned_unheard_ = false;
}

void DrillsScreen::stop(AppState& app, const char* why) {
    if (runner_) {
        runner_->stop(now_s_);
        if (why) app.post(why);
    }
    if (drill_owned_) {
        app.end_drill();
        drill_owned_ = false;
    }
}

// Readings in, time on, tones out, the engine's target kept in step.
void DrillsScreen::pump(AppState& app) {
    if (!runner_) return;
    const bool active = runner_->running() || !runner_->done();
    if (active) {
        // What arrived since the last frame: readings (one voice) or two-voice frames, from the app's trace.
        auto feed_new = [&](const auto& tr) {
            std::size_t i = tr.size();
            while (i > 0 && tr.at(i - 1).t_s > last_fed_t_) --i;
            for (; i < tr.size(); ++i) {
                runner_->feed(tr.at(i));
                last_fed_t_ = tr.at(i).t_s;
            }
        };
        if (runner_->voices() == 2)
            feed_new(app.duo_trace());
        else
            feed_new(app.trace());
        now_s_ = run_drill().mode == DrillMode::hold ? app.stream_time_s() : app.app_time_s();
        runner_->advance(now_s_);
        for (const ToneRequest& t : runner_->take_tones()) {
            if (!app.sound_tone(t.freq_hz, t.dur_s) && !warned_unheard_ && run_drill().mode == DrillMode::ear &&
                !listener_) {
                warned_unheard_ = true;
                app.post("no output device: the questions cannot be heard (choose an output in Settings)", true);
            }
        }
        if (runner_->hold_index() != target_seen_ && runner_->current_target()) {
            target_seen_ = runner_->hold_index();
            app.set_drill_targets(one_target_set(*runner_->current_target()));
        }
        if (listener_ &&
            runner_->phase() == DrillPhase::ear_answer) {  // the simulated listener thinks for half a second
            if (!std::isfinite(answer_due_s_)) answer_due_s_ = now_s_ + 0.5;
            if (now_s_ >= answer_due_s_) {
                runner_->answer(listener_->answer(*runner_->question(), run_drill().target_cents()), now_s_);
                answer_due_s_ = INFINITY;
            }
        }
    }
    if (runner_->results().size() != results_seen_ || (runner_->ear_result().has_value() && !ear_done_seen_)) {
        results_seen_ = runner_->results().size();
        ear_done_seen_ = runner_->ear_result().has_value();
        history_dirty_ = true;
    }
    if (runner_->done() && drill_owned_) {
        app.end_drill();
        drill_owned_ = false;
    }
    // The log: retry now and then while attempts wait in memory; say so once per new warning.
    if (runner_->unsaved() > 0 && app.app_time_s() >= next_retry_s_) {
        next_retry_s_ = app.app_time_s() + kRetryEveryS;
        if (runner_->attempts_made() > 0 && runner_->last_save().pending > 0) runner_->retry_log();
    }
    const std::string w = runner_->log_warning();
    if (!w.empty() && w != shown_warning_) app.post(w, true);
    if (runner_->unsaved() == 0 && !shown_warning_.empty()) history_dirty_ = true;
    shown_warning_ = w;
}

void DrillsScreen::keys_of_screen(AppState& app) {
    const ImGuiIO& io = ImGui::GetIO();
    if (io.WantTextInput) return;
    if (ImGui::IsKeyPressed(GLFW_KEY_ENTER, false) || ImGui::IsKeyPressed(GLFW_KEY_KP_ENTER, false)) start(app);
    if (ImGui::IsKeyPressed(GLFW_KEY_S, false) && runner_ && runner_->running()) stop(app, "drill stopped");
    if (runner_ && runner_->running() && run_drill().mode == DrillMode::ear) {
        for (int k = 0; k < 9; ++k)
            if (ImGui::IsKeyPressed(GLFW_KEY_1 + k, false) || ImGui::IsKeyPressed(GLFW_KEY_KP_1 + k, false))
                runner_->answer(k, now_s_);
    }
    if (!(runner_ && runner_->running()) && !drills_.empty()) {
        if (ImGui::IsKeyPressed(GLFW_KEY_PAGE_UP, true) && selected_ > 0) --selected_, history_dirty_ = true;
        if (ImGui::IsKeyPressed(GLFW_KEY_PAGE_DOWN, true) && selected_ + 1 < drills_.size())
            ++selected_, history_dirty_ = true;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Now panel
// ---------------------------------------------------------------------------

std::string seconds_text(double s) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%.1f s", std::max(0.0, s));
    return buf;
}

void DrillsScreen::idle_now(const AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const Drill* d = chosen();
    if (!d) {
        draw_text(dl, FontFace::medium, ImVec2(x0 + u, y0 + u), palette::kTextDim, "No drills found");
        return;
    }
    float y = y0 + std::round(0.7f * u);
    draw_text(dl, FontFace::medium, ImVec2(x0 + u, y), palette::kText, d->title);
    y += font_px(FontFace::medium) + std::round(0.5f * u);
    ImGui::SetCursorScreenPos(ImVec2(x0 + u, y));
    ImGui::PushTextWrapPos(x0 + w - u);
    ImGui::TextWrapped("%s", d->about.c_str());
    ImGui::PopTextWrapPos();
    y = ImGui::GetCursorScreenPos().y + std::round(0.6f * u);
    std::string facts;
    if (d->mode == DrillMode::hold) {
        facts = "Hold each target for " + pitch::format_trimmed(d->hold_s, 1) + " s within \xC2\xB1" +
                pitch::format_trimmed(d->tolerance_cents, 1) + " cents. " +
                std::string(d->sound_target ? "Each target sounds first; then " : "") + "a count-in of " +
                pitch::format_trimmed(d->lead_in_s, 1) + " s, and you sing or play." +
                (app.two_voices() ? " Two voices: the interval between them (a double stop) is scored, not either "
                                    "voice against the drone."
                                  : "");
    } else {
        facts =
            d->task == ui::EarTask::discriminate
                ? "Two tones sound in turn over the drone, " + d->targets.front().target.interval.str() +
                      " pure and mistuned: say which was pure. The mistuning shrinks after two right answers and grows "
                      "after a wrong one; the drill " +
                      stop_rule_text(d->staircase) + "."
                : "One tone sounds over the drone: say which of the " + std::to_string(d->targets.size()) +
                      " intervals it was. Each is asked " + std::to_string(d->rounds) + " times.";
    }
    ImGui::SetCursorScreenPos(ImVec2(x0 + u, y));
    ImGui::PushTextWrapPos(x0 + w - u);
    ImGui::TextColored(v4(palette::kTextDim), "%s", facts.c_str());
    ImGui::PopTextWrapPos();
    const std::string hint = "Press Start or Enter. The drone starts quietly.";
    draw_text(dl, FontFace::bold, ImVec2(x0 + u, y0 + h - std::round(1.8f * u)), palette::kText, hint);
}

void DrillsScreen::hold_now(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const DrillRunner& r = *runner_;
    const DrillPhase ph = r.phase();
    float y = y0 + std::round(0.5f * u);
    // The top line: where we are in the drill.
    char buf[160];
    // In the rest before another hold, the next one is shown.
    const bool rest_before_next = ph == DrillPhase::rest && r.hold_index() + 1 < r.hold_count();
    const std::size_t shown_index =
        std::min(r.hold_index() + (rest_before_next ? 1 : 0), r.hold_count() ? r.hold_count() - 1 : 0);
    std::snprintf(buf, sizeof buf, "%s  \xC2\xB7  hold %zu of %zu%s%s", run_drill().title.c_str(), shown_index + 1,
                  r.hold_count(), rest_before_next ? " next" : "",
                  r.voices() == 2 ? "  \xC2\xB7  two voices: the interval between them" : "");
    draw_text(dl, FontFace::body, ImVec2(x0 + u, y), palette::kTextDim, buf);
    y += std::round(1.4f * u);
    const DrillTarget* t = r.current_target();
    if (ph == DrillPhase::finished || ph == DrillPhase::stopped || !t) {
        std::size_t locked = 0;
        double ttl = 0.0, dev = 0.0;
        std::size_t dev_n = 0;
        for (const HoldResult& res : r.results()) {
            if (res.score.locked) ++locked, ttl += res.score.time_to_lock_s;
            if (std::isfinite(res.score.mean_dev_cents)) dev += res.score.mean_dev_cents, ++dev_n;
        }
        std::snprintf(buf, sizeof buf, "%s: %zu of %zu holds locked",
                      ph == DrillPhase::stopped ? "Stopped" : "Drill finished", locked, r.results().size());
        draw_text(dl, FontFace::medium, ImVec2(x0 + u, y), palette::kText, buf);
        y += font_px(FontFace::medium) + std::round(0.5f * u);
        std::string line;
        if (locked > 0) line += "mean time to lock " + seconds_text(ttl / static_cast<double>(locked));
        if (dev_n > 0) {
            const double m = dev / static_cast<double>(dev_n);
            if (!line.empty()) line += ",  ";
            line += "mean deviation " + signed_text(m, 1) + " cents";
        }
        if (!line.empty()) draw_text(dl, FontFace::body, ImVec2(x0 + u, y), palette::kText, line);
        draw_text(dl, FontFace::bold, ImVec2(x0 + u, y0 + h - std::round(1.8f * u)), palette::kText,
                  "Press Enter to go again, or choose another drill.");
        return;
    }
    // The target, large, with its name; in the rest before another hold, the
    // next one, so that it can be heard inwardly before the count-in.
    if (rest_before_next) t = &r.planned_target(r.hold_index() + 1);
    const std::string ratio = t->target.interval.str();
    draw_text(dl, FontFace::large, ImVec2(x0 + u, y), palette::kText, ratio);
    const float nx = x0 + u + text_size(FontFace::large, ratio).x + std::round(0.9f * u);
    const float count_w = text_size(FontFace::large, "0.0 s").x + std::round(1.5f * u);
    {  // the target's name: a smaller face before any word is cut
        const std::string name = t->target.name.empty() ? std::string("target") : t->target.name;
        const float name_w = x0 + w - u - count_w - nx;
        const FontFace face = text_size(FontFace::medium, name).x <= name_w ? FontFace::medium : FontFace::bold;
        draw_text(dl, face, ImVec2(nx, y + std::round(0.08f * font_px(FontFace::large))), palette::kText,
                  fit_text(face, name, name_w));
    }
    const char* what = "";
    switch (ph) {
        case DrillPhase::ready: what = "listen to the drone"; break;
        case DrillPhase::announce: what = run_drill().sound_target ? "listen: the target sounds" : "next target"; break;
        case DrillPhase::count_in: what = "get ready, sing or play on zero"; break;
        case DrillPhase::hold: what = "hold it"; break;
        case DrillPhase::rest:
            if (rest_before_next) {
                what = "rest \xC2\xB7 this one is next";
            } else {
                what = "rest \xC2\xB7 the last hold is done";
            }
            break;
        default: break;
    }
    draw_text(
        dl, FontFace::body,
        ImVec2(nx, y + std::round(0.08f * font_px(FontFace::large)) + font_px(FontFace::medium) + std::round(0.2f * u)),
        palette::kTextDim, what);
    // Right: the countdown (whole seconds before the hold, tenths during it).
    const double left = r.time_left_s(now_s_);
    std::string count;
    if (ph == DrillPhase::count_in || ph == DrillPhase::announce || ph == DrillPhase::ready)
        count = std::to_string(static_cast<int>(std::ceil(left - 1e-9)));
    else if (ph == DrillPhase::hold)
        count = seconds_text(left);
    if (!count.empty()) {
        const float cw = text_size(FontFace::large, count).x;
        const std::uint32_t col = ph == DrillPhase::hold ? palette::kText : palette::kYellow;
        draw_text(dl, FontFace::large, ImVec2(x0 + w - u - cw, y), col, count);
        const char* label = ph == DrillPhase::hold ? "left" : "until the hold";
        draw_text(dl, FontFace::body,
                  ImVec2(x0 + w - u - text_size(FontFace::body, label).x, y + font_px(FontFace::large)),
                  palette::kTextDim, label);
    }
    y += font_px(FontFace::large) + std::round(1.1f * u);
    // The hold's progress.
    const float bar_h = std::round(0.35f * u);
    const float bx0 = x0 + u, bx1 = x0 + w - u;
    dl->AddRectFilled(ImVec2(bx0, y), ImVec2(bx1, y + bar_h), palette::kPanelRaised);
    if (ph == DrillPhase::hold) {
        const double f =
            std::clamp((now_s_ - r.phase_start_s()) / std::max(1e-6, r.phase_end_s() - r.phase_start_s()), 0.0, 1.0);
        dl->AddRectFilled(ImVec2(bx0, y), ImVec2(std::round(bx0 + static_cast<float>(f) * (bx1 - bx0)), y + bar_h),
                          palette::kInTune);
    }
    y += bar_h + std::round(1.5f * u);
    // The lane, as on the Practice screen, its window the drill's tolerance.
    const float lane_margin = std::round(1.6f * u);
    const bool live = ph == DrillPhase::count_in || ph == DrillPhase::hold;
    if (r.voices() == 2) {  // the Practice screen's two-voice lane and voices: the interval against the hold's target
        const DuoLook look{run_drill().tolerance_cents, false, live};
        const float band_h = std::round(std::clamp(y0 + h - y - 4.4f * u, 1.4f * u, 2.6f * u));
        draw_duo_lane(app, dl, x0 + lane_margin, y, w - 2.0f * lane_margin, band_h, look);
        draw_duo_voices(app, dl, x0 + lane_margin, y + band_h + std::round(0.9f * u), look);
        return;
    }
    const float band_h = std::round(std::clamp(y0 + h - y - 3.3f * u, 1.4f * u, 2.6f * u));
    LaneView v;
    v.in_tune_cents = run_drill().tolerance_cents;
    v.verdict = live ? &app.verdict() : nullptr;
    v.trail = &app.trace();
    v.show_now = y0 + h - (y + band_h) >= 3.6f * u;
    draw_lane(dl, x0 + lane_margin, y, w - 2.0f * lane_margin, band_h, v);
}

void DrillsScreen::ear_now(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const DrillRunner& r = *runner_;
    const DrillPhase ph = r.phase();
    const Drill& d = run_drill();
    const bool disc = d.task == ui::EarTask::discriminate;
    float y = y0 + std::round(0.5f * u);
    const bool over = ph == DrillPhase::finished || ph == DrillPhase::stopped;
    const ui::EarQuestion* q = r.question();
    // The top line: which question, and (discriminate) the mistuning it plays.
    std::string top = d.title + "  \xC2\xB7  ";
    if (over) {
        top += std::to_string(r.answers().size()) + " answered";
    } else if (q) {
        top += "question " +
               std::to_string(q == nullptr ? 0 : r.answers().size() + (ph == DrillPhase::ear_feedback ? 0 : 1));
        if (!disc)
            top += " of " + std::to_string(r.questions_total());
        else
            top += "  \xC2\xB7  mistuned by " + pitch::format_trimmed(q->level_cents, q->level_cents < 10.0 ? 2 : 1) +
                   " c";
    } else {
        top += "the drone alone";
    }
    if (listener_)
        top += app.drone_heard() ? "  \xC2\xB7  simulated listener" : "  \xC2\xB7  simulated listener, nothing sounds";
    draw_text(dl, FontFace::body, ImVec2(x0 + u, y), palette::kTextDim, fit_text(FontFace::body, top, w - 2.0f * u));
    y += std::round(1.5f * u);
    if (over) {
        draw_text(dl, FontFace::medium, ImVec2(x0 + u, y), palette::kText,
                  ph == DrillPhase::stopped ? "Stopped" : "Session finished");
        y += font_px(FontFace::medium) + std::round(0.5f * u);
        if (const auto& res = r.ear_result()) {
            draw_text(dl, FontFace::bold, ImVec2(x0 + u, y), palette::kText,
                      fit_text(FontFace::bold, ear_summary_text(*res), w - 2.0f * u));
            std::string why;
            if (disc) {
                why = res->complete ? "Stopped " + stopped_by_text(res->stopped_by, d.staircase)
                                    : std::string("Stopped before the stopping rule");
                if (res->estimate.verdict == ui::ThresholdVerdict::measured) {
                    char pct[16];
                    std::snprintf(pct, sizeof pct, "%.1f", 100.0 * d.fit_config().threshold_p);
                    why += "; a mistuning of " + pitch::format_trimmed(res->estimate.threshold_cents, 1) +
                           " c is named right " + pct + " % of the time.";
                } else if (res->estimate.verdict == ui::ThresholdVerdict::finer) {
                    why += "; heard at the smallest mistuning this drill plays.";
                } else {
                    why += "; no mistuning up to " + pitch::format_trimmed(d.staircase.max_level, 0) +
                           " c was heard reliably.";
                }
            } else {
                why = "The confusion matrix below: what was played against what was named.";
            }
            draw_text(dl, FontFace::body, ImVec2(x0 + u, y + std::round(1.4f * u)), palette::kTextDim,
                      fit_text(FontFace::body, why, w - 2.0f * u));
        }
        draw_text(dl, FontFace::bold, ImVec2(x0 + u, y0 + h - std::round(1.8f * u)), palette::kText,
                  "Press Enter to go again, or choose another drill.");
        return;
    }
    if (ph == DrillPhase::ready || !q) {
        draw_text(dl, FontFace::medium, ImVec2(x0 + u, y), palette::kText, "Listen to the drone");
        char buf[64];
        std::snprintf(buf, sizeof buf, "the first question in %d",
                      static_cast<int>(std::ceil(r.time_left_s(now_s_) - 1e-9)));
        draw_text(dl, FontFace::body, ImVec2(x0 + u, y + font_px(FontFace::medium) + std::round(0.3f * u)),
                  palette::kTextDim, buf);
        return;
    }
    const auto& targets = d.targets;
    const std::string ask =
        disc ? "Which was " + targets.front().target.interval.str() + " pure: the first or the second?"
             : std::string("Which was it?");
    draw_text(dl, FontFace::medium, ImVec2(x0 + u, y), palette::kText, ask);
    std::string playing;
    if (ph == DrillPhase::ear_play) {
        const double into = now_s_ - r.phase_start_s();
        playing = !disc ? "listen\xE2\x80\xA6"
                        : (into < d.tone_s ? "listen: the first\xE2\x80\xA6" : "listen: the second\xE2\x80\xA6");
    } else if (ph == DrillPhase::ear_answer) {
        playing = disc ? "press 1 or 2, or click" : "press its number, or click";
    }
    y += font_px(FontFace::medium) + std::round(0.2f * u);
    draw_text(dl, FontFace::body, ImVec2(x0 + u, y), palette::kTextDim, playing);
    y += std::round(1.4f * u);
    // The answers as buttons: the key, then "the first" / the interval and its name.
    const int n = disc ? 2 : static_cast<int>(targets.size());
    const int cols = disc ? 2 : std::min(n, 3);
    const int rows = (n + cols - 1) / cols;
    const float gap = std::round(0.6f * u);
    const float bw = std::floor((w - 2.0f * u - gap * static_cast<float>(cols - 1)) / static_cast<float>(cols));
    const float avail = y0 + h - y - 2.2f * u;
    const float bh = std::round(
        std::clamp((avail - gap * static_cast<float>(rows - 1)) / static_cast<float>(rows), 1.8f * u, 3.8f * u));
    const bool open = r.answer_open(now_s_);
    const EarAnswer* last = ph == DrillPhase::ear_feedback && !r.answers().empty() ? &r.answers().back() : nullptr;
    for (int k = 0; k < n; ++k) {
        std::string big, small;
        if (disc) {
            big = k == 0 ? "the first" : "the second";
        } else {
            const pitch::Target& tt = targets[static_cast<std::size_t>(k)].target;
            big = tt.interval.str();
            small = tt.name;
        }
        const float bx = x0 + u + static_cast<float>(k % cols) * (bw + gap);
        const float by = y + static_cast<float>(k / cols) * (bh + gap);
        ImGui::SetCursorScreenPos(ImVec2(bx, by));
        ImGui::PushID(k);
        const bool clicked = ImGui::InvisibleButton("##answer", ImVec2(bw, bh));
        const bool hovered = ImGui::IsItemHovered();
        ImGui::PopID();
        if (clicked && open) runner_->answer(k, now_s_);
        std::uint32_t bg = open && hovered ? palette::with_alpha(palette::kAccent, 170) : palette::kPanelRaised;
        std::uint32_t border = open ? palette::kGrid : palette::kPanelRaised;
        if (last && k == last->question.correct_answer)
            border = palette::kInTune;
        else if (last && k == last->answer && !last->correct)
            border = palette::kSharp;
        dl->AddRectFilled(ImVec2(bx, by), ImVec2(bx + bw, by + bh), bg, std::round(0.2f * u));
        dl->AddRect(ImVec2(bx, by), ImVec2(bx + bw, by + bh), border, std::round(0.2f * u), 0, last ? 3.0f : 1.0f);
        const std::uint32_t ink = open || last ? palette::kText : palette::kTextDim;
        const std::string key = std::to_string(k + 1);
        const float kx = bx + std::round(0.6f * u);
        const float mid = by + 0.5f * bh;
        dl->AddRect(ImVec2(kx, mid - 0.75f * u), ImVec2(kx + 1.5f * u, mid + 0.75f * u), ink, 3.0f, 0, 1.5f);
        draw_text_centred(dl, FontFace::bold, kx + 0.75f * u, mid - 0.55f * u, ink, key);
        const float tx = kx + std::round(2.1f * u);
        const float tw = bx + bw - std::round(0.5f * u) - tx;
        if (small.empty() || bh < 2.6f * u) {
            draw_text(dl, FontFace::medium, ImVec2(tx, mid - 0.5f * font_px(FontFace::medium)), ink,
                      fit_text(FontFace::medium, big, tw));
        } else {
            const float tp = mid - 0.5f * (font_px(FontFace::medium) + 1.2f * u);
            draw_text(dl, FontFace::medium, ImVec2(tx, tp), ink, fit_text(FontFace::medium, big, tw));
            draw_text(dl, FontFace::body, ImVec2(tx, tp + font_px(FontFace::medium) + std::round(0.1f * u)),
                      palette::kTextDim, fit_text(FontFace::body, small, tw));
        }
    }
    y += static_cast<float>(rows) * bh + static_cast<float>(rows - 1) * gap + std::round(0.5f * u);
    if (last) {
        const ui::EarQuestion& lq = last->question;
        std::string s = last->correct ? "Right" : "Not this time";
        if (disc) {
            const std::string off = pitch::format_trimmed(lq.level_cents, lq.level_cents < 10.0 ? 2 : 1) + " c " +
                                    (lq.mistune_sign > 0 ? "wider" : "narrower");
            s += std::string(": the ") + (lq.correct_answer == 0 ? "first" : "second") + " was pure, the " +
                 (lq.correct_answer == 0 ? "second" : "first") + " " + off;
        } else {
            s += ": it was " + targets[lq.target].target.interval.str();
        }
        const std::uint32_t col = last->correct ? palette::kInTune : palette::kSharp;
        const float r0 = std::round(0.42f * u);
        if (last->correct)
            dl->AddCircleFilled(ImVec2(x0 + u + r0, y + 0.55f * u), r0, col, 20);
        else
            draw_tuning_shape(dl, Tuning::sharp, ImVec2(x0 + u + r0, y + 0.55f * u), r0, col);
        draw_text(dl, FontFace::bold, ImVec2(x0 + u + 2.0f * r0 + std::round(0.5f * u), y), col,
                  fit_text(FontFace::bold, s, w - 4.0f * u));
    }
}

void DrillsScreen::now_panel(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    draw_panel(dl, x0, y0, w, h);
    if (!runner_) return idle_now(app, dl, x0, y0, w, h);
    if (run_drill().mode == DrillMode::hold)
        hold_now(app, dl, x0, y0, w, h);
    else
        ear_now(app, dl, x0, y0, w, h);
}

// ---------------------------------------------------------------------------
// [SECTION] Attempt panel
// ---------------------------------------------------------------------------

// The hold's pitch against the target line (0) and the band, over the hold's time.
void DrillsScreen::hold_trace(ImDrawList* dl, const HoldResult& r, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const float gutter = std::round(3.2f * u);
    const float px0 = x0 + gutter, px1 = x0 + w - std::round(0.6f * u);
    const float py0 = y0 + std::round(0.3f * u), py1 = y0 + h - std::round(1.4f * u);
    if (px1 - px0 < 4.0f * u || py1 - py0 < 2.0f * u) return;
    const double span = std::max(15.0, 2.5 * r.tolerance_cents);
    const double dur = std::max(0.5, r.hold_dur_s);
    auto x_of = [&](double t) { return px0 + static_cast<float>(std::clamp(t / dur, 0.0, 1.0)) * (px1 - px0); };
    auto y_of = [&](double c) {
        return std::round(0.5f * (py0 + py1) -
                          static_cast<float>(std::clamp(c, -span, span) / span) * 0.5f * (py1 - py0));
    };
    dl->AddRectFilled(ImVec2(px0, py0), ImVec2(px1, py1), palette::kBackground);
    dl->AddRectFilled(ImVec2(px0, y_of(r.tolerance_cents)), ImVec2(px1, y_of(-r.tolerance_cents)),
                      palette::kInTuneZone);
    // Cents labels at the band's edges and the target line.
    const float ty = y_of(0.0);
    if (ty - y_of(r.tolerance_cents) >= 1.1f * u) {  // the band's edges, where they leave room for the target's label
        const std::string tol = signed_text(r.tolerance_cents, 0) + " c",
                          ntol = signed_text(-r.tolerance_cents, 0) + " c";
        draw_text(
            dl, FontFace::body,
            ImVec2(px0 - std::round(0.3f * u) - text_size(FontFace::body, tol).x, y_of(r.tolerance_cents) - 0.55f * u),
            palette::kTextDim, tol);
        draw_text(dl, FontFace::body,
                  ImVec2(px0 - std::round(0.3f * u) - text_size(FontFace::body, ntol).x,
                         y_of(-r.tolerance_cents) - 0.55f * u),
                  palette::kTextDim, ntol);
    }
    dl->AddRectFilled(ImVec2(px0, ty - 1), ImVec2(px1, ty + 1), palette::kCurrentTarget);
    const std::string tl = r.target.target.interval.str();
    draw_text(dl, FontFace::bold, ImVec2(px0 - std::round(0.3f * u) - text_size(FontFace::bold, tl).x, ty - 0.55f * u),
              palette::kCurrentTarget, tl);
    // Seconds below.
    for (int s = 0; s <= static_cast<int>(dur); ++s) {
        const float x = std::round(x_of(s));
        dl->AddRectFilled(ImVec2(x, py1), ImVec2(x + 1, py1 + std::round(0.25f * u)), palette::kGrid);
        draw_text_centred(dl, FontFace::body, x, py1 + std::round(0.25f * u), palette::kTextDim,
                          std::to_string(s) + (s == 0 ? " s" : ""));
    }
    // The lock.
    if (r.score.locked) {
        const float lx = std::round(x_of(r.score.time_to_lock_s));
        for (float yy = py0; yy < py1; yy += std::round(0.5f * u))
            dl->AddRectFilled(ImVec2(lx, yy), ImVec2(lx + 2, std::min(py1, yy + std::round(0.25f * u))),
                              palette::kInTune);
        draw_text(dl, FontFace::body, ImVec2(lx + std::round(0.3f * u), py0 + std::round(0.1f * u)), palette::kInTune,
                  "lock");
    }
    // The pitch: one polyline per voiced stretch.
    dl->PushClipRect(ImVec2(px0, py0), ImVec2(px1, py1), true);
    const float thick = std::max(2.0f, std::round(0.12f * u));
    points_.clear();
    double prev_t = -1.0;
    float last_x = -1e9f;
    auto flush = [&] {
        if (points_.size() >= 2)
            dl->AddPolyline(points_.data(), static_cast<int>(points_.size()), palette::kTraceLine, ImDrawFlags_None,
                            thick);
        points_.clear();
    };
    for (const TraceRecord& rec : r.trace) {
        if (!(rec.f0_hz > 0.0f) || !std::isfinite(rec.dev_cents)) {
            flush();
            continue;
        }
        if (rec.t_s - prev_t > 0.03) flush();
        prev_t = rec.t_s;
        const ImVec2 p(x_of(rec.t_s), y_of(rec.dev_cents));
        if (!points_.empty() && p.x - last_x < 1.0f) {  // at most one point per pixel column: the newest
            points_.back() = p;
            continue;
        }
        points_.push_back(p);
        last_x = p.x;
    }
    flush();
    dl->PopClipRect();
}

// The staircase: the mistuning played at each answer (log scale), right or
// wrong; when finished, the fitted threshold and its interval.
void DrillsScreen::ear_track(ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const DrillRunner& r = *runner_;
    const auto& as = r.answers();
    const float gutter = std::round(3.4f * u);
    const float px0 = x0 + gutter, px1 = x0 + w - std::round(0.6f * u);
    const float py0 = y0 + std::round(0.3f * u), py1 = y0 + h - std::round(1.4f * u);
    if (px1 - px0 < 4.0f * u || py1 - py0 < 2.0f * u) return;
    dl->AddRectFilled(ImVec2(px0, py0), ImVec2(px1, py1), palette::kBackground);
    const auto& sc = run_drill().staircase;
    const double top_c = std::max(sc.max_level, sc.start_level);
    const double lo = std::log(sc.min_level), hi = std::log(top_c);
    auto y_of = [&](double c) {
        return std::round(py1 - static_cast<float>((std::log(std::clamp(c, sc.min_level, top_c)) - lo) / (hi - lo)) *
                                    (py1 - py0));
    };
    const int n = std::max(1, std::min(sc.max_trials, std::max<int>(40, static_cast<int>(as.size()) + 5)));
    auto x_of = [&](int i) { return px0 + (static_cast<float>(i) + 0.5f) * (px1 - px0) / static_cast<float>(n); };
    float last_label_y = 1e9f;
    for (double c : {0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0}) {
        if (c < sc.min_level - 1e-9 || c > top_c + 1e-9) continue;
        const float y = y_of(c);
        if (last_label_y - y < 1.2f * u) continue;  // labels never overlap
        last_label_y = y;
        dl->AddRectFilled(ImVec2(px0, y), ImVec2(px1, y + 1), palette::kGrid);
        const std::string t = pitch::format_trimmed(c, 1) + " c";
        draw_text(dl, FontFace::body,
                  ImVec2(px0 - std::round(0.3f * u) - text_size(FontFace::body, t).x, y - 0.55f * u), palette::kTextDim,
                  t);
    }
    const auto& res = r.ear_result();
    if (res && res->estimate.verdict == ui::ThresholdVerdict::measured) {
        const ui::ThresholdEstimate& e = res->estimate;
        dl->AddRectFilled(ImVec2(px0, y_of(std::min(e.hi_cents, top_c))),
                          ImVec2(px1, y_of(std::max(e.lo_cents, sc.min_level))),
                          palette::with_alpha(palette::kCurrentTarget, 50));
        const float y = y_of(e.threshold_cents);
        dl->AddRectFilled(ImVec2(px0, y - 1), ImVec2(px1, y + 1), palette::kCurrentTarget);
    } else if (res && res->estimate.verdict == ui::ThresholdVerdict::finer) {
        const float y = y_of(res->estimate.smallest_cents);
        dl->AddRectFilled(ImVec2(px0, y - 1), ImVec2(px1, y + 1), palette::kCurrentTarget);
    }
    const float rad = std::round(0.28f * u);
    for (std::size_t i = 0; i < as.size() && static_cast<int>(i) < n; ++i) {
        const ImVec2 c(x_of(static_cast<int>(i)), y_of(as[i].question.level_cents));
        if (as[i].correct)
            dl->AddCircleFilled(c, rad, palette::kInTune, 12);
        else
            draw_tuning_shape(dl, Tuning::sharp, c, rad, palette::kSharp);
    }
    // The legend, in what fits: the full sentence, else a short one.
    const float lw = px1 - px0;
    std::string legend = "the mistuning played at each answer (log scale): disc right, triangle wrong";
    if (res && res->estimate.verdict == ui::ThresholdVerdict::measured)
        legend += "; yellow: the threshold, band: its 95 % interval";
    else if (res && res->estimate.verdict == ui::ThresholdVerdict::finer)
        legend += "; yellow: the smallest mistuning played";
    if (text_size(FontFace::body, legend).x > lw)
        legend = "mistuning played: disc right, triangle wrong" +
                 std::string(res && res->estimate.verdict != ui::ThresholdVerdict::none ? "; yellow: the result" : "");
    draw_text(dl, FontFace::body, ImVec2(px0, py1 + std::round(0.2f * u)), palette::kTextDim,
              fit_text(FontFace::body, legend, lw));
}

// Identification: the confusion matrix so far (rows played, columns named)
// and, beside it, the share right for the closest pairs.
void DrillsScreen::ear_matrix(ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    const Drill& d = run_drill();
    const std::size_t n = d.targets.size();
    std::vector<std::vector<int>> m(n, std::vector<int>(n, 0));
    for (const EarAnswer& a : runner_->answers()) ++m[a.question.target][static_cast<std::size_t>(a.answer)];
    const float label_w = std::round(5.0f * u);
    const float cw = std::round(std::min((0.5f * w - label_w) / static_cast<float>(n), 4.0f * u));
    const float ch = std::floor(std::min((h - 0.2f * u) / static_cast<float>(n + 1), 1.6f * u));
    if (cw < 2.0f * u || ch < 0.75f * u) return;
    const float mx0 = x0 + u + label_w, my0 = y0 - std::round(0.3f * u);
    draw_text(dl, FontFace::body, ImVec2(x0 + u, my0 + 0.5f * ch - 0.55f * u), palette::kTextFaint,
              "played \xE2\x86\x93");
    for (std::size_t k = 0; k < n; ++k) {
        const std::string name = d.targets[k].target.interval.str();
        draw_text_centred(dl, FontFace::body, mx0 + (static_cast<float>(k) + 0.5f) * cw, my0 + 0.5f * ch - 0.55f * u,
                          palette::kTextDim, fit_text(FontFace::body, name, cw));
        draw_text(dl, FontFace::body, ImVec2(x0 + u, my0 + static_cast<float>(k + 1) * ch + 0.5f * ch - 0.55f * u),
                  palette::kTextDim, name);
    }
    for (std::size_t i = 0; i < n; ++i) {
        int row = 0;
        for (int c : m[i]) row += c;
        for (std::size_t k = 0; k < n; ++k) {
            const float cx = mx0 + static_cast<float>(k) * cw, cy = my0 + static_cast<float>(i + 1) * ch;
            const double share = row > 0 ? static_cast<double>(m[i][k]) / row : 0.0;
            const std::uint32_t base = i == k ? palette::kInTune : palette::kSharp;
            dl->AddRectFilled(ImVec2(cx + 1, cy + 1), ImVec2(cx + cw - 1, cy + ch - 1),
                              m[i][k] > 0 ? palette::with_alpha(base, static_cast<unsigned>(40 + 170 * share))
                                          : palette::kPanelRaised);
            if (m[i][k] > 0)
                draw_text_centred(dl, FontFace::bold, cx + 0.5f * cw, cy + 0.5f * ch - 0.55f * u, palette::kText,
                                  std::to_string(m[i][k]));
        }
    }
    // The closest pairs, each with its share right so far.
    const std::vector<double> cents = d.target_cents();
    const float lx = mx0 + static_cast<float>(n) * cw + std::round(1.5f * u);
    const float lw = x0 + w - u - lx;
    float ly = y0;
    draw_text(dl, FontFace::body, ImVec2(lx, ly), palette::kTextDim,
              fit_text(FontFace::body, "right per pair, closest first:", lw));
    ly += std::round(1.4f * u);
    for (const auto& [i, k] : pairs_closest_first(cents)) {
        if (ly + u > y0 + h) break;
        const double share = pair_share_right(m, i, k);
        const int of = pair_answers(m, i, k);
        char buf[120];
        std::snprintf(buf, sizeof buf, "%s | %s (%s c): %s", d.targets[i].target.interval.str().c_str(),
                      d.targets[k].target.interval.str().c_str(),
                      pitch::format_trimmed(std::fabs(cents[i] - cents[k]), 1).c_str(),
                      std::isfinite(share)
                          ? (std::to_string(std::lround(100.0 * share)) + " % of " + std::to_string(of)).c_str()
                          : "not yet");
        draw_text(dl, FontFace::body, ImVec2(lx, ly), palette::kText, fit_text(FontFace::body, buf, lw));
        ly += std::round(1.2f * u);
    }
}

void DrillsScreen::attempt_panel(ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    draw_panel(dl, x0, y0, w, h);
    const float x = x0 + u;
    float y = y0 + std::round(0.5f * u);
    if (runner_ && run_drill().mode == DrillMode::ear && (!runner_->answers().empty() || runner_->ear_result())) {
        const bool disc = run_drill().task == ui::EarTask::discriminate;
        int right = 0;
        for (const EarAnswer& a : runner_->answers()) right += a.correct ? 1 : 0;
        const std::string head = runner_->ear_result() ? ear_summary_text(*runner_->ear_result())
                                                       : std::to_string(runner_->answers().size()) +
                                                             " answered so far, " + std::to_string(right) + " right";
        draw_text(dl, FontFace::bold, ImVec2(x, y), palette::kText, fit_text(FontFace::bold, head, w - 2.0f * u));
        y += std::round(1.5f * u);
        if (disc)
            ear_track(dl, x0, y, w, y0 + h - y - std::round(0.2f * u));
        else
            ear_matrix(dl, x0, y, w, y0 + h - y - std::round(0.2f * u));
        return;
    }
    if (!runner_ || runner_->results().empty()) {
        draw_text(dl, FontFace::body, ImVec2(x, y), palette::kTextDim, "Last attempt");
        draw_text(dl, FontFace::body, ImVec2(x, y + std::round(1.6f * u)), palette::kTextDim,
                  runner_ && run_drill().mode == DrillMode::hold
                      ? "Your result shows here as soon as the hold ends."
                      : "Start a drill: each result shows here at once, with its trace.");
        return;
    }
    const HoldResult& r = runner_->results().back();
    char buf[160];
    std::snprintf(buf, sizeof buf, "Last attempt: %s%s%s", r.target.target.interval.str().c_str(),
                  r.target.target.name.empty() ? "" : "  ", r.target.target.name.c_str());
    std::string second = hold_spread_text(r.score);
    if (r.score.voiced_share < 0.5 && std::isfinite(r.score.mean_dev_cents))
        second += (second.empty() ? "" : ";  ") + std::string("heard for only part of the hold");
    const float second_w = text_size(FontFace::body, second).x;
    draw_text(dl, FontFace::body, ImVec2(x, y), palette::kTextDim,
              fit_text(FontFace::body, buf, w - 3.0f * u - second_w));
    draw_text(dl, FontFace::body, ImVec2(x0 + w - u - second_w, y), palette::kText, second);
    y += std::round(1.4f * u);
    // The result in words, with the state's shape and colour for the mean.
    const ui::HoldScore& s = r.score;
    const Tuning t = std::isfinite(s.mean_dev_cents) ? tuning_of(s.mean_dev_cents, r.tolerance_cents) : Tuning::in_tune;
    const std::uint32_t col = std::isfinite(s.mean_dev_cents) ? tuning_colour(t) : palette::kTextDim;
    const float sr = std::round(0.42f * u);
    draw_tuning_shape(dl, t, ImVec2(x + sr, y + 0.55f * u), sr, col);
    const std::string words = hold_summary_text(s, r.tolerance_cents);
    draw_text(dl, FontFace::bold, ImVec2(x + 2.0f * sr + std::round(0.5f * u), y), palette::kText, words);
    y += std::round(1.5f * u);
    hold_trace(dl, r, x0, y, w, y0 + h - y - std::round(0.1f * u));
}

// ---------------------------------------------------------------------------
// [SECTION] Left column
// ---------------------------------------------------------------------------

void DrillsScreen::left_column(AppState& app, ImDrawList* dl, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    draw_panel(dl, x0, y0, w, h);
    float y = y0 + std::round(0.5f * u);
    draw_text(dl, FontFace::bold, ImVec2(x0 + u, y), palette::kTextDim, "Choose a drill");
    y += std::round(1.3f * u);
    const bool running = runner_ && runner_->running();
    const float entry_h = std::round(2.4f * u);
    const float buttons_h = ImGui::GetFrameHeight() + std::round(1.0f * u);
    // More drills than rows: the list scrolls (mouse wheel over it; Page Up/Down choose) and always shows the
    // chosen drill, which is the one running while a drill runs.
    const float list_top = y, list_bottom = y0 + h - buttons_h;
    const std::size_t rows =
        std::max<std::size_t>(1, static_cast<std::size_t>(std::max(0.0f, (list_bottom - list_top) / entry_h)));
    const std::size_t n = drills_.size();
    const std::size_t last_first = n > rows ? n - rows : 0;
    if (selected_ != list_follows_) {
        if (selected_ < list_first_) list_first_ = selected_;
        if (selected_ >= list_first_ + rows) list_first_ = selected_ + 1 - rows;
        list_follows_ = selected_;
    }
    if (n > rows && ImGui::IsMouseHoveringRect(ImVec2(x0, list_top), ImVec2(x0 + w, list_bottom))) {
        const float wheel = ImGui::GetIO().MouseWheel;
        if (wheel > 0.0f && list_first_ > 0) --list_first_;
        if (wheel < 0.0f) ++list_first_;
    }
    list_first_ = std::min(list_first_, last_first);
    if (n > rows) {  // a slim bar: where the rows shown sit in the whole list
        const float bx = x0 + w - std::round(0.35f * u), bw = std::max(2.0f, std::round(0.15f * u));
        const float track_h = static_cast<float>(rows) * entry_h - 2.0f;
        const float thumb_y = list_top + track_h * static_cast<float>(list_first_) / static_cast<float>(n);
        const float thumb_h = track_h * static_cast<float>(rows) / static_cast<float>(n);
        dl->AddRectFilled(ImVec2(bx, list_top), ImVec2(bx + bw, list_top + track_h), palette::kPanelRaised);
        dl->AddRectFilled(ImVec2(bx, thumb_y), ImVec2(bx + bw, thumb_y + thumb_h), palette::kTextFaint);
        char count[48];
        std::snprintf(count, sizeof count, "%zu-%zu of %zu", list_first_ + 1, list_first_ + rows, n);
        const float cw = text_size(FontFace::body, count).x;
        draw_text(dl, FontFace::body, ImVec2(x0 + w - u - cw, list_top - std::round(1.3f * u)), palette::kTextFaint,
                  count);
    }
    for (std::size_t i = list_first_; i < n && i < list_first_ + rows; ++i) {
        const Drill& d = drills_[i];
        const bool sel = i == selected_;
        if (sel) {
            dl->AddRectFilled(ImVec2(x0 + std::round(0.3f * u), y),
                              ImVec2(x0 + w - std::round(0.3f * u), y + entry_h - 2), palette::kPanelRaised);
            dl->AddRectFilled(ImVec2(x0 + std::round(0.3f * u), y),
                              ImVec2(x0 + std::round(0.3f * u) + 4, y + entry_h - 2), palette::kAccent);
        }
        ImGui::SetCursorScreenPos(ImVec2(x0, y));
        ImGui::PushID(static_cast<int>(i));
        if (ImGui::InvisibleButton("##drill", ImVec2(w, entry_h - 2)) && !running && !sel) {
            selected_ = i;
            history_dirty_ = true;
            if (runner_ && !runner_->running()) runner_.reset();  // the panels show the chosen drill
        }
        ImGui::PopID();
        const float tx = x0 + std::round(0.9f * u);
        dl->PushClipRect(ImVec2(x0, y), ImVec2(x0 + w - std::round(0.4f * u), y + entry_h), true);
        const float tw = x0 + w - std::round(0.5f * u) - tx;
        draw_text(dl, FontFace::bold, ImVec2(tx, y + std::round(0.15f * u)), sel ? palette::kText : palette::kTextDim,
                  fit_text(FontFace::bold, d.title, tw));
        const std::string kind = d.mode == DrillMode::hold ? "hold \xC2\xB7 " : "ear \xC2\xB7 ";
        draw_text(dl, FontFace::body, ImVec2(tx, y + std::round(1.15f * u)), palette::kTextFaint,
                  fit_text(FontFace::body, kind + d.about, tw));
        dl->PopClipRect();
        y += entry_h;
    }
    // Start and stop.
    ImGui::SetCursorScreenPos(ImVec2(x0 + u, y0 + h - buttons_h + std::round(0.3f * u)));
    ImGui::PushStyleColor(ImGuiCol_Button, v4(running ? palette::kPanelRaised : palette::kAccent));
    if (ImGui::Button(running ? "Restart" : "Start", ImVec2(std::round(6.0f * u), 0))) start(app);
    ImGui::PopStyleColor();
    ImGui::SameLine(0, std::round(0.8f * u));
    if (!running) ImGui::PushStyleVar(ImGuiStyleVar_Alpha, 0.5f);
    if (ImGui::Button("Stop", ImVec2(std::round(5.0f * u), 0)) && running) stop(app, "drill stopped");
    if (!running) ImGui::PopStyleVar();
}

// ---------------------------------------------------------------------------
// [SECTION] Screen
// ---------------------------------------------------------------------------

void DrillsScreen::build(AppState& app, const ScreenArea& area, double dt_s) {
    (void)dt_s;
    if (!loaded_) load(app);
    // Away from this screen for a while: a running drill has lost its frames.
    if (runner_ && runner_->running() && last_build_s_ >= 0.0 && app.app_time_s() - last_build_s_ > kAwayS)
        stop(app, "drill stopped: the Drills screen was left");
    last_build_s_ = app.app_time_s();
    keys_of_screen(app);
    pump(app);

    const float u = ui_unit();
    ImDrawList* dl = begin_screen_panel("##drills", area);
    const float pad = std::round(0.8f * u);
    float top = area.pos.y + std::round(0.5f * u);
    const float bottom = area.pos.y + area.size.y - std::round(0.5f * u);
    const float x0 = area.pos.x + pad, w = area.size.x - 2.0f * pad;

    // The practice log's warning, as long as attempts wait in memory.
    const std::string warning = runner_ ? runner_->log_warning() : std::string();
    if (!warning.empty()) {
        const float wh = std::round(1.7f * u);
        dl->AddRectFilled(ImVec2(x0, top), ImVec2(x0 + w, top + wh), palette::kPanelRaised, std::round(0.2f * u));
        dl->AddRect(ImVec2(x0, top), ImVec2(x0 + w, top + wh), palette::kWarning, std::round(0.2f * u), 0, 2.0f);
        draw_warning_sign(dl, ImVec2(x0 + u, top + 0.5f * wh), 0.5f * u, palette::kWarning);
        dl->PushClipRect(ImVec2(x0, top), ImVec2(x0 + w - 0.5f * u, top + wh), true);
        draw_text(dl, FontFace::body, ImVec2(x0 + 2.0f * u, top + std::round(0.5f * (wh - u))), palette::kText,
                  warning);
        dl->PopClipRect();
        top += wh + std::round(0.5f * u);
    }
    const float H = bottom - top;
    const float gap = std::round(0.5f * u);
    const float hist_h = std::round(std::clamp(0.29f * H, 6.0f * u, 11.0f * u));
    const float top_h = H - hist_h - gap;
    const float left_w = std::round(std::clamp(0.28f * w, 15.0f * u, 22.0f * u));
    left_column(app, dl, x0, top, left_w, top_h);
    const float rx = x0 + left_w + gap, rw = w - left_w - gap;
    const float now_h = std::round(std::clamp(0.58f * top_h, 9.0f * u, 14.0f * u));
    now_panel(app, dl, rx, top, rw, now_h);
    attempt_panel(dl, rx, top + now_h + gap, rw, top_h - now_h - gap);
    // The attempts shown are of the mode in use (V switches it).
    if (chosen() && (history_dirty_ || history_.voices != drill_voices(*chosen(), app))) {
        history_ = read_drill_progress(log_path_, *chosen(), app.options().demo || listener_.has_value(),
                                       drill_voices(*chosen(), app));
        history_dirty_ = false;
    }
    if (chosen()) draw_drill_progress(dl, history_, *chosen(), x0, top + top_h + gap, w, hist_h);
    end_screen_panel();
}

}  // namespace

std::unique_ptr<Screen> make_drills_screen() { return std::make_unique<DrillsScreen>(); }

}  // namespace beatless::ui
