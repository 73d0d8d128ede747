// DrillRunner — see drill_runner.h.
//
// Index
//   [phases]   names, lengths, the plan, enter()
//   [control]  start, stop, feed, advance, answer, tones
//   [hold]     announce, scoring a hold, its attempt
//   [ear]      questions, the session's attempt
//   [log]      saving, the warning line
//   [words]    the results in words
//   [engine]   drone, target set and demo script for a drill
#include "ui/session/drill_runner.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "ui/session/duo_verdict.h"
#include "ui/session/safe_file.h"

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <fstream>

namespace beatless::ui {

// ---------------------------------------------------------------------------
// [SECTION] Phases
// ---------------------------------------------------------------------------

std::string_view phase_name(DrillPhase p) {
    switch (p) {
        case DrillPhase::idle: return "idle";
        case DrillPhase::ready: return "ready";
        case DrillPhase::announce: return "announce";
        case DrillPhase::count_in: return "count-in";
        case DrillPhase::hold: return "hold";
        case DrillPhase::rest: return "rest";
        case DrillPhase::ear_play: return "listen";
        case DrillPhase::ear_answer: return "answer";
        case DrillPhase::ear_feedback: return "feedback";
        case DrillPhase::finished: return "finished";
        case DrillPhase::stopped: return "stopped";
    }
    return "idle";
}

DrillRunner::DrillRunner(Drill drill, RunnerConfig config, LogWriter* log)
    : drill_(std::move(drill)),
      cfg_(std::move(config)),
      log_(log),
      settings_json_(drill_settings_json(drill_, cfg_.voices)) {
    if (cfg_.voices == 2) cfg_.hop_s = pitch::TwoVoiceConfig{}.hop_s;  // one frame per two-voice hop
    if (drill_.mode == DrillMode::hold) sequence_ = drill_.sequence(cfg_.seed);
    if (cfg_.max_holds > 0 && sequence_.size() > cfg_.max_holds) sequence_.resize(cfg_.max_holds);
}

double DrillRunner::phase_len_s(DrillPhase p, std::size_t index) const {
    switch (p) {
        case DrillPhase::ready: return cfg_.settle_s;
        case DrillPhase::announce: return drill_.sound_target ? cfg_.tone_s + cfg_.announce_gap_s : cfg_.announce_s;
        case DrillPhase::count_in: return drill_.lead_in_s;
        case DrillPhase::hold: return index < sequence_.size() ? drill_.hold_of(sequence_[index]) : 0.0;
        case DrillPhase::rest: return drill_.rest_s;
        case DrillPhase::ear_feedback: return cfg_.feedback_s;
        default: return 0.0;
    }
}

std::vector<PlannedHold> DrillRunner::planned_holds() const {
    std::vector<PlannedHold> out;
    double t = cfg_.settle_s;
    for (std::size_t i = 0; i < sequence_.size(); ++i) {
        t += phase_len_s(DrillPhase::announce, i) + phase_len_s(DrillPhase::count_in, i);
        out.push_back({i, t, phase_len_s(DrillPhase::hold, i), target_cents(sequence_[i])});
        t += phase_len_s(DrillPhase::hold, i) + phase_len_s(DrillPhase::rest, i);
    }
    return out;
}

void DrillRunner::enter(DrillPhase p, double at_s, double len_s) {
    phase_ = p;
    phase_start_s_ = at_s;
    phase_end_s_ = at_s + len_s;
}

double DrillRunner::time_left_s(double now_s) const {
    if (!running() || !std::isfinite(phase_end_s_)) return 0.0;
    return std::max(0.0, phase_end_s_ - now_s);
}

const DrillTarget* DrillRunner::current_target() const {
    return index_ < sequence_.size() ? &sequence_[index_] : nullptr;
}

bool DrillRunner::done() const {
    return (phase_ == DrillPhase::finished || phase_ == DrillPhase::stopped) && !collecting_;
}

// ---------------------------------------------------------------------------
// [SECTION] Control
// ---------------------------------------------------------------------------

void DrillRunner::start(double now_s) {
    start_s_ = now_s;
    index_ = 0;
    results_.clear();
    answers_.clear();
    ear_result_.reset();
    due_.clear();
    out_tones_.clear();
    collecting_ = false;
    has_question_ = false;
    attempts_made_ = 0;
    if (drill_.mode == DrillMode::hold) {
        double longest = 0.0;
        for (const DrillTarget& t : sequence_) longest = std::max(longest, drill_.hold_of(t));
        collected_.clear();
        collected_.reserve(static_cast<std::size_t>(longest / cfg_.hop_s) + 256);
        if (sequence_.empty()) {
            enter(DrillPhase::finished, now_s, 0.0);
            return;
        }
    } else {
        questioner_.emplace(drill_.task, drill_.target_cents(), drill_.rounds, cfg_.seed);
        staircase_.emplace(drill_.staircase);
        session_started_at_ = utc_now_iso8601();
    }
    enter(DrillPhase::ready, now_s, cfg_.settle_s);
    advance(now_s);
}

void DrillRunner::stop(double now_s) {
    if (!running() && !collecting_) return;
    if (drill_.mode == DrillMode::hold) {
        // A hold still sounding is dropped; one that is over waits only for readings.
        if (collecting_ && now_s < collect_end_s_) {
            collecting_ = false;
            collected_.clear();
        }
        if (collecting_) finish_hold_score();
    } else if (running() && !answers_.empty()) {
        finish_ear(now_s, false);
    }
    due_.clear();
    enter(DrillPhase::stopped, now_s, 0.0);
}

void DrillRunner::feed(const pitch::Reading& r) {
    if (!collecting_) return;
    if (r.t_s >= collect_end_s_) {
        finish_hold_score();  // a reading past the end: the window is complete
        return;
    }
    if (r.t_s < collect_start_s_) return;
    if (collected_.size() < collected_.capacity()) collected_.push_back(r);
}

void DrillRunner::feed(const pitch::TwoVoiceFrame& f) {
    if (!collecting_) return;
    pitch::Reading r;  // the interval as a reading: f0 the upper voice's, dev the interval's deviation
    r.t_s = f.t_s;
    const double interval = f.f_low_hz > 0.0 && f.f_high_hz > 0.0 ? 1200.0 * std::log2(f.f_high_hz / f.f_low_hz) : NAN;
    if (f.voices == 2 && f.confidence >= DuoVerdictConfig{}.sure_confidence && std::isfinite(interval)) {
        const double dev = interval - target_cents(sequence_[collect_index_]);
        r.f0_hz = f.f_high_hz;
        r.confidence = f.confidence;
        r.dev_cents = dev - 1200.0 * std::round(dev / 1200.0);  // the target in the interval's nearest octave
    }
    feed(r);
}

void DrillRunner::advance(double now_s) {
    if (collecting_ && now_s >= collect_end_s_ + cfg_.score_wait_s) finish_hold_score();
    // Walk through every phase that has ended by now (a long frame may skip several).
    for (int guard = 0; guard < 1000 && running() && now_s >= phase_end_s_; ++guard) {
        const double at = phase_end_s_;
        switch (phase_) {
            case DrillPhase::ready:
                if (drill_.mode == DrillMode::hold)
                    begin_hold_step(at);
                else
                    next_question(at);
                break;
            case DrillPhase::announce:
                enter(DrillPhase::count_in, at, phase_len_s(DrillPhase::count_in, index_));
                break;
            case DrillPhase::count_in: {
                const double len = phase_len_s(DrillPhase::hold, index_);
                if (collecting_) finish_hold_score();  // the last hold's readings are as complete as they will be
                collecting_ = true;
                collect_index_ = index_;
                collect_start_s_ = at;
                collect_end_s_ = at + len;
                collect_started_at_ = utc_now_iso8601();
                collected_.clear();
                enter(DrillPhase::hold, at, len);
                break;
            }
            case DrillPhase::hold: enter(DrillPhase::rest, at, phase_len_s(DrillPhase::rest, index_)); break;
            case DrillPhase::rest:
                ++index_;
                if (index_ >= sequence_.size())
                    enter(DrillPhase::finished, at, 0.0);
                else
                    begin_hold_step(at);
                break;
            case DrillPhase::ear_play: enter(DrillPhase::ear_answer, at, INFINITY); break;
            case DrillPhase::ear_feedback:
                if (drill_.task == ui::EarTask::discriminate ? staircase_->done()
                                                             : questioner_->asked() >= questioner_->total())
                    finish_ear(at, true);
                else
                    next_question(at);
                break;
            default: break;
        }
    }
    // Tones that fell due while walking the phases.
    for (auto it = due_.begin(); it != due_.end();) {
        if (it->at_s <= now_s) {
            out_tones_.push_back(it->tone);
            it = due_.erase(it);
        } else {
            ++it;
        }
    }
}

std::vector<ToneRequest> DrillRunner::take_tones() {
    std::vector<ToneRequest> out;
    out.swap(out_tones_);
    return out;
}

// ---------------------------------------------------------------------------
// [SECTION] Hold
// ---------------------------------------------------------------------------

void DrillRunner::begin_hold_step(double at_s) {
    enter(DrillPhase::announce, at_s, phase_len_s(DrillPhase::announce, index_));
    if (drill_.sound_target) due_.push_back({at_s, {tone_hz(target_cents(sequence_[index_])), cfg_.tone_s}});
}

void DrillRunner::finish_hold_score() {
    collecting_ = false;
    const DrillTarget& t = sequence_[collect_index_];
    HoldResult res;
    res.index = collect_index_;
    res.target = t;
    res.tolerance_cents = drill_.tolerance_cents;
    res.hold_start_s = collect_start_s_;
    res.hold_dur_s = collect_end_s_ - collect_start_s_;
    std::vector<ui::HoldPoint> points = ui::hold_points(collected_, cfg_.deviation);
    // Blips: voiced stretches too short to be singing (gaps of more than two hops end a stretch).
    for (std::size_t i = 0; i < points.size();) {
        if (!points[i].voiced) {
            ++i;
            continue;
        }
        std::size_t j = i + 1;
        while (j < points.size() && points[j].voiced && points[j].t_s - points[j - 1].t_s <= 2.5 * cfg_.hop_s) ++j;
        if (points[j - 1].t_s - points[i].t_s + cfg_.hop_s < cfg_.min_voiced_s - 1e-9)
            for (std::size_t k = i; k < j; ++k) points[k].voiced = false;
        i = j;
    }
    res.score = ui::score_hold(points, drill_.score_config(t, collect_start_s_, cfg_.hop_s));
    res.trace.reserve(collected_.size());
    for (const pitch::Reading& r : collected_) {
        TraceRecord rec;
        rec.t_s = static_cast<float>(r.t_s - collect_start_s_);
        rec.f0_hz = r.voiced() ? static_cast<float>(r.f0_hz) : 0.0f;
        rec.dev_cents = r.voiced() ? static_cast<float>(r.dev_cents) : NAN;
        rec.centre_dev_cents = r.voiced() ? static_cast<float>(r.centre_dev_cents) : NAN;
        res.trace.push_back(rec);
    }
    collected_.clear();

    Attempt a;
    a.started_at = collect_started_at_;
    a.drill = drill_.id;
    a.kind = AttemptKind::hold;
    a.target = t.target.interval.str();
    a.target_name = t.target.name;
    a.root_hz = drill_.drone.root_hz;
    a.performer = cfg_.performer;
    a.settings_json = settings_json_;
    a.dur_s = res.hold_dur_s;
    a.locked = res.score.locked;
    a.time_to_lock_s = res.score.time_to_lock_s;
    a.mean_dev_cents = res.score.mean_dev_cents;
    a.spread_cents = res.score.spread_cents;
    a.in_tolerance_share = res.score.in_tolerance_share;
    a.trace = res.trace;
    results_.push_back(std::move(res));
    save(std::move(a));
}

// ---------------------------------------------------------------------------
// [SECTION] Ear
// ---------------------------------------------------------------------------

void DrillRunner::next_question(double at_s) {
    question_ = questioner_->next(staircase_->level());
    has_question_ = true;
    due_.push_back({at_s, {tone_hz(question_.tone_cents[0]), drill_.tone_s}});
    last_tone_at_s_ = at_s;
    double len = drill_.tone_s;
    if (question_.tones == 2) {
        last_tone_at_s_ = at_s + drill_.tone_s + cfg_.ear_gap_s;
        due_.push_back({last_tone_at_s_, {tone_hz(question_.tone_cents[1]), drill_.tone_s}});
        len = 2.0 * drill_.tone_s + cfg_.ear_gap_s;
    }
    enter(DrillPhase::ear_play, at_s, len);
}

bool DrillRunner::answer_open(double now_s) const {
    return has_question_ &&
           (phase_ == DrillPhase::ear_answer || (phase_ == DrillPhase::ear_play && now_s >= last_tone_at_s_));
}

bool DrillRunner::answer(int choice, double now_s) {
    const int options = drill_.task == ui::EarTask::discriminate ? 2 : static_cast<int>(drill_.targets.size());
    if (!answer_open(now_s) || choice < 0 || choice >= options) return false;
    EarAnswer a;
    a.t_s = now_s - start_s_;
    a.question = question_;
    a.answer = choice;
    a.correct = choice == question_.correct_answer;
    if (drill_.task == ui::EarTask::discriminate) staircase_->record(a.correct);
    answers_.push_back(a);
    // The second tone may still be due: a question answered is over.
    due_.clear();
    enter(DrillPhase::ear_feedback, now_s, cfg_.feedback_s);
    return true;
}

ui::ThresholdEstimate fit_answers(const Drill& drill, const std::vector<EarAnswer>& answers) {
    std::vector<ui::LevelAnswer> la;
    la.reserve(answers.size());
    for (const EarAnswer& e : answers) la.push_back({e.question.level_cents, e.correct});
    return ui::fit_threshold(la, drill.fit_config());
}

void DrillRunner::finish_ear(double now_s, bool complete) {
    EarResult r;
    r.task = drill_.task;
    r.trials = static_cast<int>(answers_.size());
    int right = 0;
    for (const EarAnswer& e : answers_) right += e.correct ? 1 : 0;
    r.correct_share = r.trials > 0 ? static_cast<double>(right) / r.trials : NAN;
    r.dur_s = now_s - start_s_;
    r.complete = complete;
    const bool disc = drill_.task == ui::EarTask::discriminate;
    if (disc) {
        r.estimate = fit_answers(drill_, answers_);
        r.reversal_mean_cents = staircase_->threshold();
        r.stopped_by = staircase_->stop_reason();
    } else {
        const std::size_t n = drill_.targets.size();
        r.confusion.assign(n, std::vector<int>(n, 0));
        for (const EarAnswer& e : answers_) ++r.confusion[e.question.target][static_cast<std::size_t>(e.answer)];
    }
    ear_result_ = r;
    has_question_ = false;
    enter(DrillPhase::finished, now_s, 0.0);

    Attempt a;
    a.started_at = session_started_at_;
    a.drill = drill_.id;
    a.kind = AttemptKind::ear;
    a.target = drill_.targets_text();
    a.root_hz = drill_.drone.root_hz;
    a.performer = cfg_.performer;
    a.settings_json = settings_json_;
    a.dur_s = r.dur_s;
    a.trials = r.trials;
    a.correct_share = r.correct_share;
    if (disc) {
        a.method = drill_.staircase.n_down == 3 ? "discriminate 3-down 1-up" : "discriminate 2-down 1-up";
        const ui::ThresholdEstimate& e = r.estimate;
        a.estimate = e.verdict == ui::ThresholdVerdict::measured ? "measured"
                     : e.verdict == ui::ThresholdVerdict::finer  ? "finer"
                                                                 : "none";
        a.threshold_cents = e.threshold_cents;
        a.threshold_lo_cents = e.verdict == ui::ThresholdVerdict::finer ? 0.0 : e.lo_cents;
        a.threshold_hi_cents = e.verdict == ui::ThresholdVerdict::finer ? e.smallest_cents : e.hi_cents;
    } else {
        a.method = "identify";
    }
    for (const EarAnswer& e : answers_) {
        TraceRecord rec;
        rec.t_s = static_cast<float>(e.t_s);
        if (disc) {
            rec.f0_hz = static_cast<float>(e.question.level_cents);
            rec.dev_cents = static_cast<float>(e.question.mistune_sign * e.question.level_cents);
        } else {
            rec.f0_hz = static_cast<float>(e.question.target);
            rec.dev_cents = static_cast<float>(e.answer);
        }
        rec.centre_dev_cents = e.correct ? 1.0f : 0.0f;
        a.trace.push_back(rec);
    }
    save(std::move(a));
}

// ---------------------------------------------------------------------------
// [SECTION] Log
// ---------------------------------------------------------------------------

void DrillRunner::save(Attempt a) {
    ++attempts_made_;
    if (!log_) return;
    last_save_ = log_->save(std::move(a));
}

void DrillRunner::retry_log() {
    if (!log_ || log_->pending() == 0) return;
    last_save_ = log_->retry();
}

std::string DrillRunner::log_warning() const {
    if (!log_ || log_->pending() == 0) return {};
    return log_warning_line(log_->path().string(), last_save_);
}

std::string keep_unsaved(const LogWriter& w, const std::string& warning) {
    if (w.pending() == 0) return {};
    std::error_code ec;
    std::filesystem::path dir = std::filesystem::temp_directory_path(ec);
    if (ec) dir = ".";
    const std::filesystem::path csv = dir / ("beatless-unsaved-" + new_uid().substr(0, 8) + ".csv");
    bool written = true;
    try {
        write_file_safely(csv, w.pending_csv());
    } catch (const Error&) {
        written = false;
    }
    std::string line = warning.empty() ? std::to_string(w.pending()) + " attempts not saved" : warning;
    if (written)
        line +=
            "; written to " + csv.string() + " (add them later with beatless history --import " + csv.string() + ")";
    else
        line += "; and " + csv.string() + " cannot be written either: the attempts above are all that is left";
    return line;
}

std::string_view log_problem_words(LogProblem p) {
    switch (p) {
        case LogProblem::full: return "disk full";
        case LogProblem::read_only: return "read-only";
        case LogProblem::cannot_open: return "cannot open or create it";
        case LogProblem::busy: return "locked by another program";
        case LogProblem::not_a_log: return "not a practice log, or damaged";
        case LogProblem::too_new: return "written by a newer beatless";
        case LogProblem::io: return "disk error";
        case LogProblem::bad_data: return "a value was refused";
        case LogProblem::other: return "database error";
    }
    return "database error";
}

std::string log_warning_line(const std::string& log_path, const SaveResult& r) {
    if (!r.problem) return r.warning;
    std::string s = "practice log ";
    s += log_path;
    s += ": cannot write (";
    s += log_problem_words(*r.problem);
    s += "); ";
    s += std::to_string(r.pending);
    s += r.pending == 1 ? " attempt kept and will be saved when possible"
                        : " attempts kept and will be saved when possible";
    return s;
}

// ---------------------------------------------------------------------------
// [SECTION] Words
// ---------------------------------------------------------------------------

namespace {

std::string cents_words(double dev) {
    const long n = std::lround(std::fabs(dev));
    std::string s = std::to_string(n);
    s += n == 1 ? " cent " : " cents ";
    s += dev > 0 ? "sharp" : "flat";
    return s;
}

std::string within_words(double share, double tol) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%ld %% within \xC2\xB1%s c", std::lround(100.0 * share),
                  pitch::format_trimmed(tol, 1).c_str());
    return buf;
}

}  // namespace

std::string hold_summary_text(const ui::HoldScore& s, double tol) {
    if (!std::isfinite(s.mean_dev_cents)) return "no voice heard";
    std::string out;
    const bool on_target = std::lround(std::fabs(s.mean_dev_cents)) == 0;
    if (s.locked) {
        char buf[48];
        std::snprintf(buf, sizeof buf, "locked in %.1f s, ", s.time_to_lock_s);
        out = buf;
        out += on_target ? "held right on the target" : "held " + cents_words(s.mean_dev_cents);
    } else {
        out = "no lock, ";
        out += on_target ? "on the target on average" : cents_words(s.mean_dev_cents) + " on average";
    }
    out += ", ";
    out += within_words(std::isfinite(s.in_tolerance_share) ? s.in_tolerance_share : 0.0, tol);
    return out;
}

std::string hold_spread_text(const ui::HoldScore& s) {
    if (!std::isfinite(s.spread_cents)) return {};
    char buf[48];
    std::snprintf(buf, sizeof buf, "spread %ld c %s", std::lround(s.spread_cents),
                  s.locked ? "while held" : "over the hold");
    return buf;
}

std::string stop_rule_text(const ui::StaircaseConfig& c) {
    std::string s = "stops after " + std::to_string(c.stop_reversals) + " reversals";
    s += c.floor_run > 0 ? ", " : " or ";
    s += std::to_string(c.max_trials) + " answers";
    if (c.floor_run > 0)
        s += ", or " + std::to_string(c.floor_run) + " right in a row at " + pitch::format_trimmed(c.min_level, 2) +
             " c";
    return s;
}

std::string stopped_by_text(ui::StopReason why, const ui::StaircaseConfig& c) {
    switch (why) {
        case ui::StopReason::reversals: return "after " + std::to_string(c.stop_reversals) + " reversals";
        case ui::StopReason::max_trials: return "after " + std::to_string(c.max_trials) + " answers";
        case ui::StopReason::floor_run:
            return "after " + std::to_string(c.floor_run) + " right in a row at " +
                   pitch::format_trimmed(c.min_level, 2) + " c";
        case ui::StopReason::running: break;
    }
    return "stopped early";
}

std::string method_text(const Drill& d) {
    if (d.task == ui::EarTask::identify)
        return "each interval asked " + std::to_string(d.rounds) +
               " times in shuffled rounds; share right per pair from the confusion matrix";
    const ui::FitConfig f = d.fit_config();
    char pct[16];
    std::snprintf(pct, sizeof pct, "%.1f", 100.0 * f.threshold_p);
    return std::to_string(d.staircase.n_down) + "-down 1-up staircase (Levitt 1971, the " + pct + " % point), " +
           stop_rule_text(d.staircase) + "; threshold fitted to every answer (Weibull, slope " +
           pitch::format_trimmed(f.slope, 2) + ", lapse " + pitch::format_trimmed(100.0 * f.lapse, 1) +
           " %; Wichmann & Hill 2001), 95 % interval from the likelihood, its cut calibrated by simulation";
}

std::string threshold_text(const ui::ThresholdEstimate& e) {
    using pitch::format_trimmed;
    switch (e.verdict) {
        case ui::ThresholdVerdict::finer: return "finer than " + format_trimmed(e.smallest_cents, 2) + " c";
        case ui::ThresholdVerdict::none: return "no reliable threshold";
        case ui::ThresholdVerdict::measured: break;
    }
    const auto num = [](double c) { return format_trimmed(c, c < 10.0 ? 1 : 0); };
    const std::string lo = e.lo_cents > 0.0 ? num(e.lo_cents) + " to " : "below ";
    return num(e.threshold_cents) + " c (95 % interval " + lo + num(e.hi_cents) + " c)";
}

std::string ear_summary_text(const EarResult& r) {
    const std::string answers = std::to_string(r.trials) + (r.trials == 1 ? " answer" : " answers");
    const long pct = std::isfinite(r.correct_share) ? std::lround(100.0 * r.correct_share) : 0;
    if (r.task == ui::EarTask::identify) {
        const long right = std::lround((std::isfinite(r.correct_share) ? r.correct_share : 0.0) * r.trials);
        return std::to_string(right) + " of " + answers + " right (" + std::to_string(pct) + " %)";
    }
    std::string s = threshold_text(r.estimate);
    if (r.estimate.verdict == ui::ThresholdVerdict::measured) s = "threshold " + s;
    return s + " after " + answers + ", " + std::to_string(pct) + " % right";
}

}  // namespace beatless::ui

namespace beatless::ui {

// ---------------------------------------------------------------------------
// [SECTION] Engine
// ---------------------------------------------------------------------------

audio::DroneSettings drill_drone(const Drill& d, double max_level_dbfs) {
    audio::DroneSettings s;
    s.on = true;
    s.root_hz = d.drone.root_hz;
    s.fifth = d.drone.fifth;
    s.level_dbfs = std::min(d.drone.level_dbfs, max_level_dbfs);
    const int n = d.drone.partials;
    s.timbre = n <= 1    ? audio::Timbre::pure
               : n <= 6  ? audio::Timbre::soft
               : n <= 12 ? audio::Timbre::round
                         : audio::Timbre::bright;
    return s;
}

pitch::TargetSet one_target_set(const DrillTarget& t) {
    pitch::TargetSet s;
    s.id = "drill-target";
    s.title = t.target.interval.str();
    s.targets.push_back(t.target);
    return s;
}

std::vector<audio::DemoNote> demo_script(const DrillRunner& r, double reaction_s, double release_s, double offset_s) {
    std::vector<audio::DemoNote> out;
    for (const PlannedHold& h : r.planned_holds()) {
        const double dur = h.dur_s - reaction_s - release_s;
        if (dur > 0.05) out.push_back({offset_s + h.start_s + reaction_s, dur, h.target_cents});
    }
    return out;
}

}  // namespace beatless::ui
