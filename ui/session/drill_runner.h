// Drill runner — one run of a drill as a state machine driven by a clock and by readings: it scores each hold,
// logs each attempt and says what to sound. Method: ours (phases ready, announce, count_in, hold, rest for holds;
// ear_play, ear_answer, ear_feedback for ear drills); DEVELOPERS.md, "Methods in detail".
// Thread: one thread (the screen's or the command's). Allocates: in start() and when an attempt is scored.
#pragma once

#include "audio/demo_performer.h"
#include "audio/drone.h"
#include "pitch/measure/reading.h"
#include "pitch/measure/two_voice.h"
#include "pitch/theory/targets.h"
#include "ui/session/drill_files.h"
#include "ui/session/drill_score.h"
#include "ui/session/ear_question.h"
#include "ui/session/log_writer.h"
#include "ui/session/practice_log.h"
#include "ui/session/staircase.h"

#include <cmath>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

enum class DrillPhase {
    idle,
    ready,
    announce,
    count_in,
    hold,
    rest,
    ear_play,
    ear_answer,
    ear_feedback,
    finished,
    stopped
};
std::string_view phase_name(DrillPhase p);  // "announce", "count-in", ...

struct RunnerConfig {
    double settle_s = 1.5;        // the drone alone before the first target or question; default 1.5
    double announce_s = 1.5;      // the target shown before the count-in when no tone sounds; default 1.5
    double tone_s = 1.5;          // sound_target: the target tone's length; default 1.5
    double announce_gap_s = 0.5;  // sound_target: after the tone, before the count-in; default 0.5
    double score_wait_s = 0.5;    // longest wait past a hold's end for its last readings; default 0.5
    double hop_s = 0.005;         // time each reading stands for (the tracker's hop); default 5 ms
    double ear_gap_s = 0.5;       // between the two tones of a two-interval question; default 0.5
    double feedback_s = 1.2;      // right or wrong shown after an answer; default 1.2
    std::uint64_t seed = 1;       // the shuffled order and the ear questions; default 1
    std::string performer;        // who practises (the practice log's performer); default empty
    // What the score reads; default the vibrato centre where known (a singer with a
    // 5-7 Hz vibrato of tens of cents is in tune when its centre is), else the pitch.
    ui::DeviationSource deviation = ui::DeviationSource::centre_first;
    double min_voiced_s = 0.04;  // shorter voiced stretches are tracker blips, scored as unvoiced; default 40 ms
    std::size_t max_holds = 0;   // hold drills: stop after this many holds (0 = the whole sequence); default 0
    // 1: one voice against the drone (feed Readings). 2: a double stop, the interval between two voices in one
    // input against the hold's target (feed TwoVoiceFrames; hop_s becomes the two-voice tracker's). Default 1.
    int voices = 1;
};

// A tone to sound now with the reference voice.
struct ToneRequest {
    double freq_hz = 0.0;
    double dur_s = 0.0;
};

// A hold on the runner's clock (the demo performer sings these).
struct PlannedHold {
    std::size_t index = 0;  // in the run's sequence
    double start_s = 0.0;   // from start()
    double dur_s = 0.0;
    double target_cents = 0.0;  // above the root
};

struct HoldResult {
    std::size_t index = 0;  // in the run's sequence
    DrillTarget target;
    double tolerance_cents = 0.0;
    double hold_start_s = 0.0;  // runner clock
    double hold_dur_s = 0.0;
    ui::HoldScore score;
    std::vector<TraceRecord> trace;  // t from the hold's start
};

struct EarAnswer {
    double t_s = 0.0;          // from the session's start
    ui::EarQuestion question;  // what was asked and played (question.level_cents: the mistuning)
    int answer = 0;            // discriminate: position named pure (0, 1); identify: target named
    bool correct = false;
};

struct EarResult {
    ui::EarTask task = ui::EarTask::discriminate;
    int trials = 0;
    double correct_share = NAN;
    double dur_s = 0.0;
    bool complete = false;             // the stopping rule was met (not stopped early)
    ui::ThresholdEstimate estimate;    // discriminate: fitted to every answer
    double reversal_mean_cents = NAN;  // discriminate: mean of the last reversals (Levitt's estimate), NaN if too few
    ui::StopReason stopped_by = ui::StopReason::running;  // discriminate: which rule ended it (running: stopped early)
    std::vector<std::vector<int>> confusion;              // identify: counts [played][named]
};

// The fitted threshold of a discrimination session's answers.
ui::ThresholdEstimate fit_answers(const Drill& drill, const std::vector<EarAnswer>& answers);

class DrillRunner {
public:
    // log may be null: attempts are then only kept in results().
    DrillRunner(Drill drill, RunnerConfig config, LogWriter* log = nullptr);

    // --- Control ------------------------------------------------------------------
    void start(double now_s);
    // Ends the run: a hold not yet over is dropped; a hold waiting for its
    // last readings is scored with what arrived; an ear session with answers
    // is logged (its threshold NaN when too few reversals).
    void stop(double now_s);
    void feed(const pitch::Reading& r);  // readings in time order
    // voices 2: two-voice frames in time order. The interval between the voices is scored against the hold's
    // target in its nearest octave, by the same rules as one voice; a frame with one voice, silence or a pair
    // below the screens' sure confidence (ui/session/duo_verdict.h) counts as unheard.
    void feed(const pitch::TwoVoiceFrame& f);
    void advance(double now_s);             // phases, due tones, late scores
    bool answer(int choice, double now_s);  // ear: position (discriminate) or target (identify); false when not open
    std::vector<ToneRequest> take_tones();  // tones due since the last call
    void retry_log();                       // writes what the log writer still keeps

    // --- State ----------------------------------------------------------------------
    const Drill& drill() const { return drill_; }
    DrillPhase phase() const { return phase_; }
    bool running() const {
        return phase_ != DrillPhase::idle && phase_ != DrillPhase::finished && phase_ != DrillPhase::stopped;
    }
    bool done() const;  // finished or stopped, with nothing left to score
    double phase_start_s() const { return phase_start_s_; }
    double phase_end_s() const { return phase_end_s_; }  // INFINITY while an answer is awaited
    double time_left_s(double now_s) const;
    double started_s() const { return start_s_; }
    int voices() const { return cfg_.voices; }  // 2: the interval between two voices is scored

    // --- Hold drills ------------------------------------------------------------------
    std::size_t hold_count() const { return sequence_.size(); }
    std::size_t hold_index() const { return index_; }  // current or next hold (hold_count() at the end)
    const DrillTarget* current_target() const;         // nullptr past the end
    const DrillTarget& planned_target(std::size_t i) const { return sequence_[i]; }
    double target_cents(const DrillTarget& t) const { return t.target.interval.cents(); }
    std::vector<PlannedHold> planned_holds() const;
    const std::vector<HoldResult>& results() const { return results_; }
    double phase_len_s(DrillPhase p, std::size_t index) const;  // the schedule's lengths

    // --- Ear drills --------------------------------------------------------------------
    const ui::Staircase* staircase() const { return staircase_ ? &*staircase_ : nullptr; }
    const ui::EarQuestion* question() const { return has_question_ ? &question_ : nullptr; }
    std::size_t questions_total() const {
        return questioner_ ? questioner_->total() : 0;
    }  // identify: all questions; else 0
    bool answer_open(double now_s) const;
    const std::vector<EarAnswer>& answers() const { return answers_; }
    const std::optional<EarResult>& ear_result() const { return ear_result_; }

    // --- Practice log ------------------------------------------------------------------
    const SaveResult& last_save() const { return last_save_; }
    std::size_t attempts_made() const { return attempts_made_; }
    std::size_t unsaved() const { return log_ ? log_->pending() : 0; }
    std::string log_warning() const;  // one line while attempts are kept in memory, else empty

private:
    void enter(DrillPhase p, double at_s, double len_s);
    void begin_hold_step(double at_s);  // announce of hold index_
    void finish_hold_score();
    void next_question(double at_s);
    void finish_ear(double now_s, bool complete);
    void save(Attempt a);
    double tone_hz(double cents) const { return drill_.drone.root_hz * std::exp2(cents / 1200.0); }

    Drill drill_;
    RunnerConfig cfg_;
    LogWriter* log_;
    std::string settings_json_;
    std::vector<DrillTarget> sequence_;
    DrillPhase phase_ = DrillPhase::idle;
    double start_s_ = 0.0;
    double phase_start_s_ = 0.0, phase_end_s_ = 0.0;
    std::size_t index_ = 0;
    // The hold being collected (possibly after its phase has ended).
    bool collecting_ = false;
    std::size_t collect_index_ = 0;
    double collect_start_s_ = 0.0, collect_end_s_ = 0.0;
    std::string collect_started_at_;
    std::vector<pitch::Reading> collected_;
    std::vector<HoldResult> results_;
    // Ear.
    std::optional<ui::EarQuestioner> questioner_;
    std::optional<ui::Staircase> staircase_;
    ui::EarQuestion question_;
    bool has_question_ = false;
    double last_tone_at_s_ = 0.0;
    struct Due {
        double at_s;
        ToneRequest tone;
    };
    std::vector<Due> due_;
    std::vector<ToneRequest> out_tones_;
    std::vector<EarAnswer> answers_;
    std::optional<EarResult> ear_result_;
    std::string session_started_at_;
    // Log.
    SaveResult last_save_;
    std::size_t attempts_made_ = 0;
};

// --- Words for the results (the Drills screen and `beatless drill`) ---------------
// "locked in 0.8 s, held 3 cents flat, 86 % within ±5 c"; without a lock
// "no lock, 12 cents sharp on average, 20 % within ±5 c"; "no voice heard".
std::string hold_summary_text(const ui::HoldScore& s, double tolerance_cents);
// "spread 4 c while held" (the standard deviation), or empty when unknown.
std::string hold_spread_text(const ui::HoldScore& s);
// "threshold 4.2 c (95 % interval 3.1 to 5.9 c) after 48 answers, 71 % right";
// "finer than 0.5 c (...)", "no reliable threshold (...)"; identify:
// "31 of 48 right (65 %)".
std::string ear_summary_text(const EarResult& r);
// The stopping rule: "stops after 12 reversals, 80 answers, or 10 right in a row at 0.5 c".
std::string stop_rule_text(const ui::StaircaseConfig& c);
// Why it stopped: "after 12 reversals", "after 80 answers", "after 10 right in a row at 0.5 c", "stopped early".
std::string stopped_by_text(ui::StopReason why, const ui::StaircaseConfig& c);
// The method in a line: "2-down 1-up staircase (Levitt 1971, 70.7 % point); threshold fitted to every answer (...)".
std::string method_text(const Drill& d);
// The estimate alone: "4.2 c (95 % interval 3.1 to 5.9 c)", "finer than 0.5 c", "no reliable threshold".
std::string threshold_text(const ui::ThresholdEstimate& e);
// "practice log PATH: cannot write (disk full); 2 attempts kept and will be
// saved when possible"; the writer's own warning when no problem is named.
std::string log_warning_line(const std::string& log_path, const SaveResult& r);
std::string_view log_problem_words(LogProblem p);  // "disk full", "read-only", ...
// At the end (the command's, the window's): what the writer still keeps goes
// into a CSV file in the temporary folder, for `beatless history --import`.
// Returns the one line to show ("<warning>; written to FILE (add them ...)"),
// or empty when nothing is kept.
std::string keep_unsaved(const LogWriter& w, const std::string& warning);

// --- What the engine needs for a drill -----------------------------------------------
// The drill's drone, sounding: its root, fifth and level (never above
// max_level_dbfs), a timbre for its partial count (1 pure, up to 6 soft, up
// to 12 round, more bright).
audio::DroneSettings drill_drone(const Drill& d, double max_level_dbfs = audio::kDroneMaxLevelDbfs);
// Readings against one target alone (the hold's).
pitch::TargetSet one_target_set(const DrillTarget& t);
// The demo performer's notes for the run's holds: each starts reaction_s
// after its hold and stops release_s before its end (times + offset_s).
std::vector<audio::DemoNote> demo_script(const DrillRunner& r, double reaction_s = 0.3, double release_s = 0.1,
                                         double offset_s = 0.0);

}  // namespace beatless::ui
