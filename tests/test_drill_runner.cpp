// The drill runner on a fake clock: the sequence (ready → announce → count-in
// → hold → score → log → rest → next), tones, late readings, stopping, the
// practice log full or read-only (the drill goes on, attempts are kept and
// saved later), ear sessions driven by a simulated listener, and the words.
//
// Sources: the schedule is the one ui/session/drill_runner.h documents, the phase
// lengths come from the drill file written here; the hold scores are worked
// by hand from the definitions in ui/session/drill_score.h (arithmetic beside
// each check); the ear threshold is checked against the point a 2-down/1-up
// staircase converges to, p = 0.7071 (H. Levitt, "Transformed up-down methods
// in psychoacoustics", JASA 49(2B), 1971, Table I), with a simulated listener
// whose psychometric function puts that point at a known difference.
#include "pitch/base/error.h"
#include "tests/cli.h"
#include "ui/session/drill_runner.h"
#include "ui/session/listener_model.h"
#include "ui/session/log_writer.h"
#include "ui/session/practice_log.h"

#include <doctest/doctest.h>
#include <sqlite3.h>

#include <cmath>
#include <filesystem>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::ui;
using beatless::test::TempDir;

namespace {

// Two targets, 2 s holds, 1 s count-in, 0.5 s rest, ±10 c, a tone first.
const char* kTwoHolds = R"(kind = "drill"
title = "Two holds"
mode = "hold"
hold_s = 2.0
lead_in_s = 1.0
rest_s = 0.5
tolerance_cents = 10.0
dwell_s = 0.3
sound_target = true
[drone]
root = "A2"
[[target]]
interval = "3/2"
[[target]]
interval = "7/4"
)";

RunnerConfig fake_config() {
    RunnerConfig c;
    c.settle_s = 1.0;
    c.announce_s = 1.0;
    c.tone_s = 1.5;
    c.announce_gap_s = 0.5;
    c.hop_s = 0.01;
    c.seed = 3;
    return c;
}

pitch::Reading reading(double t, double dev) {
    pitch::Reading r;
    r.t_s = t;
    if (std::isfinite(dev)) {
        r.f0_hz = 165.0 * std::exp2(dev / 1200.0);
        r.dev_cents = dev;
        r.target_index = 0;
    }
    return r;
}

// Drives the runner from t0 to t1 in steps of `step`, feeding one reading per
// step with the deviation dev_of(t) (NaN: unvoiced), as an engine would: a
// reading lags the clock by `lag`.
// Times are whole multiples of the step, so they meet the phase edges exactly.
template <class F>
void drive(DrillRunner& r, double t0, double t1, double step, F dev_of, double lag = 0.02) {
    const long k0 = std::lround(t0 / step), k1 = std::lround(t1 / step), lag_k = std::lround(lag / step);
    for (long k = k0; k < k1; ++k) {
        r.advance(static_cast<double>(k) * step);
        if (k - lag_k >= 0) {
            const double rt = static_cast<double>(k - lag_k) * step;
            r.feed(reading(rt, dev_of(rt)));
        }
    }
    r.advance(t1);
}

std::size_t log_count(const std::filesystem::path& p) {
    PracticeLog log(p);
    return static_cast<std::size_t>(log.count());
}

}  // namespace

TEST_CASE(
    "the hold sequence: ready, announce (with the tone), count-in, hold, rest, next; each hold scored and logged") {
    TempDir dir;
    const std::filesystem::path db = dir.file("log.sqlite3");
    LogWriter writer(db);
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    DrillRunner r(d, fake_config(), &writer);
    // The plan: ready 1 s; announce 1.5 + 0.5 s (a tone sounds); count-in 1 s;
    // hold 2 s; rest 0.5 s. Hold 1 at 1 + 2 + 1 = 4 s; hold 2 at 4 + 2 + 0.5 + 2 + 1 = 9.5 s.
    const auto plan = r.planned_holds();
    REQUIRE(plan.size() == 2);
    CHECK(plan[0].start_s == doctest::Approx(4.0));
    CHECK(plan[1].start_s == doctest::Approx(9.5));
    CHECK(plan[0].dur_s == doctest::Approx(2.0));
    CHECK(plan[1].target_cents == doctest::Approx(1200.0 * std::log2(7.0 / 4.0)));

    r.start(0.0);
    CHECK(r.phase() == DrillPhase::ready);
    CHECK(r.take_tones().empty());
    r.advance(1.0);
    CHECK(r.phase() == DrillPhase::announce);
    // The target's tone: 3/2 over A2 = 165 Hz, for tone_s.
    auto tones = r.take_tones();
    REQUIRE(tones.size() == 1);
    CHECK(tones[0].freq_hz == doctest::Approx(165.0));
    CHECK(tones[0].dur_s == doctest::Approx(1.5));
    r.advance(2.99);
    CHECK(r.phase() == DrillPhase::announce);
    r.advance(3.0);
    CHECK(r.phase() == DrillPhase::count_in);
    CHECK(r.time_left_s(3.25) == doctest::Approx(0.75));
    r.advance(4.0);
    CHECK(r.phase() == DrillPhase::hold);
    // Sing it: 20 c flat for the first 0.5 s of the hold, then 2 c sharp.
    auto path = [](double t) {
        if (t < 4.0) return static_cast<double>(NAN);
        return t < 4.5 ? -20.0 : 2.0;
    };
    drive(r, 4.0, 6.0, 0.01, path);
    CHECK(r.phase() == DrillPhase::rest);
    CHECK(r.results().empty());  // the hold's last readings are still on their way
    drive(r, 6.0, 6.05, 0.01, path);
    REQUIRE(r.results().size() == 1);
    const HoldResult& h = r.results()[0];
    // Hand-worked (drill_score.h): readings every 10 ms from 4.00 (the first
    // at t >= 4.0); -20 c until 4.49, +2 c from 4.50. The first in-band
    // reading is at 4.50 and its run lasts to the end: lock 0.50 s. Held
    // points all read +2: mean +2, spread 0. In band: 150 of 200 points = 0.75.
    CHECK(h.score.locked);
    CHECK(h.score.time_to_lock_s == doctest::Approx(0.5).epsilon(1e-6));
    CHECK(h.score.mean_dev_cents == doctest::Approx(2.0));
    CHECK(h.score.spread_cents == doctest::Approx(0.0).epsilon(1e-9));
    CHECK(h.score.in_tolerance_share == doctest::Approx(0.75).epsilon(0.01));
    CHECK(h.trace.size() == 200);
    CHECK(h.trace.front().t_s == doctest::Approx(0.0).epsilon(1e-4));
    CHECK(log_count(db) == 1);
    CHECK(r.unsaved() == 0);
    CHECK(r.log_warning().empty());
    // The next target: its announcement and tone at 6.5 s (the rest ends).
    r.advance(6.5);
    CHECK(r.phase() == DrillPhase::announce);
    CHECK(r.hold_index() == 1);
    tones = r.take_tones();
    REQUIRE(tones.size() == 1);
    CHECK(tones[0].freq_hz == doctest::Approx(110.0 * 7.0 / 4.0));
    r.advance(9.5);
    CHECK(r.phase() == DrillPhase::hold);
    drive(r, 9.5, 12.2, 0.01, [](double t) { return t < 9.5 ? static_cast<double>(NAN) : -4.0; });
    CHECK(r.phase() == DrillPhase::finished);
    CHECK(r.done());
    REQUIRE(r.results().size() == 2);
    CHECK(r.results()[1].score.time_to_lock_s == doctest::Approx(0.0).epsilon(1e-6));
    CHECK(r.results()[1].score.mean_dev_cents == doctest::Approx(-4.0));
    // Both attempts in the log, with their traces and the drill's settings.
    PracticeLog log(db);
    const auto all = log.read();
    REQUIRE(all.size() == 2);
    // On a fake clock both start within a millisecond of wall time: find them by target.
    std::vector<Attempt> by = all;
    if (by[0].target != "3/2") std::swap(by[0], by[1]);
    CHECK(by[0].target == "3/2");
    CHECK(by[1].target == "7/4");
    const std::vector<Attempt>& all2 = by;
    CHECK(all2[0].drill == "two-holds");
    CHECK(all2[0].kind == AttemptKind::hold);
    CHECK(all2[0].root_hz == doctest::Approx(110.0));
    CHECK(all2[0].locked.value_or(false));
    CHECK(all2[0].time_to_lock_s == doctest::Approx(0.5).epsilon(1e-6));
    CHECK(all2[0].trace.size() == 200);
    CHECK(all2[0].trace[60].dev_cents == doctest::Approx(2.0));
    CHECK(log.is_json_object(all2[0].settings_json));
}

TEST_CASE("a hold whose readings stop is scored score_wait_s after its end; a long frame walks several phases") {
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    DrillRunner r(d, fake_config(), nullptr);
    r.start(10.0);
    r.advance(14.0);  // one late frame: ready, announce and count-in are over
    CHECK(r.phase() == DrillPhase::hold);
    CHECK(r.take_tones().size() == 1);                                   // the announcement's tone was still asked for
    for (double t = 14.0; t < 15.0; t += 0.01) r.feed(reading(t, 1.0));  // then the input stops
    r.advance(16.2);
    CHECK(r.results().empty());
    r.advance(16.5);  // 0.5 s past the end
    REQUIRE(r.results().size() == 1);
    // Voiced from 14.0 to 15.0 of the 2 s window: locked at once, +1 c, half of it voiced.
    CHECK(r.results()[0].score.time_to_lock_s == doctest::Approx(0.0).epsilon(1e-6));
    CHECK(r.results()[0].score.voiced_share == doctest::Approx(0.5).epsilon(0.01));
    CHECK(r.attempts_made() == 1);
}

TEST_CASE("stopping: a hold not yet over is dropped; an ear session with answers is kept") {
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    DrillRunner r(d, fake_config(), nullptr);
    r.start(0.0);
    drive(r, 0.0, 5.0, 0.01, [](double) { return 0.0; });
    CHECK(r.phase() == DrillPhase::hold);
    r.stop(5.0);
    CHECK(r.phase() == DrillPhase::stopped);
    CHECK(r.done());
    CHECK(r.results().empty());
    CHECK(r.attempts_made() == 0);

    TempDir dir;
    LogWriter writer(dir.file("ear.sqlite3"));
    Drill e = load_drill("ear-tritones");
    DrillRunner q(e, fake_config(), &writer);
    q.start(0.0);
    CHECK_FALSE(q.answer(0, 0.5));  // still the drone alone
    q.advance(1.0);
    CHECK(q.phase() == DrillPhase::ear_play);
    CHECK(q.answer_open(1.1));  // one tone: the answer is open as soon as it sounds
    q.advance(3.6);
    CHECK(q.phase() == DrillPhase::ear_answer);
    CHECK(q.answer(q.question()->correct_answer, 3.7));
    CHECK(q.phase() == DrillPhase::ear_feedback);
    q.stop(4.0);
    REQUIRE(q.ear_result().has_value());
    CHECK_FALSE(q.ear_result()->complete);
    CHECK(q.ear_result()->trials == 1);
    CHECK(q.ear_result()->task == ui::EarTask::identify);
    REQUIRE(q.ear_result()->confusion.size() == e.targets.size());
    CHECK(q.ear_result()->confusion[q.answers()[0].question.target][q.answers()[0].question.target] == 1);
    PracticeLog log(dir.file("ear.sqlite3"));
    const auto all = log.read();
    REQUIRE(all.size() == 1);
    CHECK(all[0].kind == AttemptKind::ear);
    CHECK(all[0].trials.value_or(0) == 1);
    CHECK(all[0].trace.size() == 1);
    CHECK(all[0].trace[0].centre_dev_cents == 1.0f);  // right
    CHECK(all[0].method == "identify");
    CHECK(all[0].trace[0].f0_hz == static_cast<float>(q.answers()[0].question.target));  // the interval played
    CHECK(all[0].trace[0].dev_cents == all[0].trace[0].f0_hz);                           // named: the same
}

TEST_CASE("a full disk: the drill goes on, attempts are kept with a one-line warning, and saved when space returns") {
    TempDir dir;
    const std::filesystem::path db = dir.file("full.sqlite3");
    std::int64_t pages = 0;
    {
        PracticeLog make(db);
        sqlite3* h = nullptr;
        REQUIRE(sqlite3_open(db.c_str(), &h) == SQLITE_OK);
        sqlite3_stmt* st = nullptr;
        sqlite3_prepare_v2(h, "PRAGMA page_count", -1, &st, nullptr);
        REQUIRE(sqlite3_step(st) == SQLITE_ROW);
        pages = sqlite3_column_int64(st, 0);
        sqlite3_finalize(st);
        sqlite3_close(h);
    }
    LogOptions o;
    o.max_page_count = pages;  // not one page more: SQLite's max_page_count as a full disk, as test_practice_log does
    LogWriter writer(db, o);
    const char* four = R"(kind = "drill"
title = "Four holds"
mode = "hold"
hold_s = 2.0
lead_in_s = 0.5
rest_s = 0.5
repetitions = 2
[[target]]
interval = "3/2"
[[target]]
interval = "5/4"
)";
    Drill d = parse_drill(four, "four.toml");
    RunnerConfig c = fake_config();
    c.hop_s = 0.005;
    DrillRunner r(d, c, &writer);
    r.start(0.0);
    // ready 1 + announce 1 + count-in 0.5: holds at 2.5, 6.5, 10.5, 14.5 (hold 2 + rest 0.5 + announce 1 + count-in 0.5 apart).
    drive(r, 0.0, 9.0, 0.005, [](double) { return 1.0; });
    REQUIRE(r.results().size() == 2);
    CHECK(r.unsaved() == 2);
    const std::string w = r.log_warning();
    CHECK(w == "practice log " + db.string() +
                   ": cannot write (disk full); 2 attempts kept and will be saved when possible");
    CHECK(test::line_count(w) == 1);
    CHECK(r.phase() != DrillPhase::stopped);  // the drill still runs
    CHECK(log_count(db) == 0);
    // Space comes back: the next attempt writes everything kept, in order.
    REQUIRE(writer.log() != nullptr);
    writer.log()->set_max_page_count(0);
    drive(r, 9.0, 17.5, 0.005, [](double) { return 1.0; });
    CHECK(r.phase() == DrillPhase::finished);
    REQUIRE(r.results().size() == 4);
    CHECK(r.unsaved() == 0);
    CHECK(r.log_warning().empty());
    PracticeLog log(db);
    const auto all = log.read();
    REQUIRE(all.size() == 4);
    // (On a fake clock the four start within a millisecond of wall time, so
    // the log's time order cannot tell them apart; count them instead.)
    int fifths = 0;
    for (const Attempt& a : all) {
        fifths += a.target == "3/2" ? 1 : 0;
        CHECK(a.trace.size() == 400);
    }
    CHECK(fifths == 2);
}

TEST_CASE("a read-only log: warned and kept; the runner's retry writes them once it can") {
    TempDir dir;
    const std::filesystem::path db = dir.file("ro.sqlite3");
    { PracticeLog make(db); }
    LogOptions o;
    o.read_only = true;  // root ignores file modes: SQLite's read-only open, as test_practice_log does
    LogWriter writer(db, o);
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    DrillRunner r(d, fake_config(), &writer);
    r.start(0.0);
    drive(r, 0.0, 7.0, 0.01, [](double) { return -3.0; });
    REQUIRE(r.results().size() == 1);
    CHECK(r.log_warning() ==
          "practice log " + db.string() + ": cannot write (read-only); 1 attempt kept and will be saved when possible");
    r.retry_log();
    CHECK(r.unsaved() == 1);
    // What is kept can still be written out as CSV and imported elsewhere.
    PracticeLog other(dir.file("other.sqlite3"));
    CHECK(writer.pending_csv().find("two-holds") != std::string::npos);
}

TEST_CASE("a log folder that cannot be created: one line naming it, the attempt kept") {
    TempDir dir;
    {
        std::FILE* f = std::fopen(dir.file("blocker").c_str(), "w");
        std::fputs("x", f);
        std::fclose(f);
    }
    LogWriter writer(dir.file("blocker") + "/data/practice.sqlite3");
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    DrillRunner r(d, fake_config(), &writer);
    r.start(0.0);
    drive(r, 0.0, 7.0, 0.01, [](double) { return 0.0; });
    REQUIRE(r.results().size() == 1);
    const std::string w = r.log_warning();
    CHECK(w.find("cannot write (cannot open or create it); 1 attempt kept") != std::string::npos);
    CHECK(w.find(dir.file("blocker")) != std::string::npos);
}

TEST_CASE("tracker blips shorter than 40 ms count as unvoiced") {
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    RunnerConfig c = fake_config();
    c.hop_s = 0.005;
    DrillRunner r(d, c, nullptr);
    r.start(0.0);
    // Hold 1 is [4, 6). A 15 ms blip 500 c off at 4.1 s, then the note from 4.5 s at +3 c.
    auto path = [](double t) {
        if (t >= 4.1 && t < 4.115) return -500.0;
        return t >= 4.5 ? 3.0 : static_cast<double>(NAN);
    };
    drive(r, 0.0, 6.2, 0.005, path);
    REQUIRE(r.results().size() == 1);
    const auto& s = r.results()[0].score;
    // Without the blip: voiced 4.5..6.0 at +3 c: lock 0.5 s, spread 0, all in band.
    CHECK(s.time_to_lock_s == doctest::Approx(0.5).epsilon(1e-6));
    CHECK(s.spread_cents == doctest::Approx(0.0).epsilon(1e-9));
    CHECK(s.in_tolerance_share == doctest::Approx(1.0));
    CHECK(s.voiced_share == doctest::Approx(0.75).epsilon(0.01));
}

TEST_CASE(
    "discrimination questions: the pure interval and the mistuned one in turn; an answer before the second is "
    "refused") {
    const char* two = R"(kind = "drill"
title = "Two tones"
mode = "ear"
task = "discriminate"
tone_s = 1.0
[staircase]
start_cents = 20.0
[[target]]
interval = "7/5"
)";
    Drill d = parse_drill(two, "two.toml");
    RunnerConfig c = fake_config();
    c.ear_gap_s = 0.5;
    DrillRunner r(d, c, nullptr);
    r.start(0.0);
    r.advance(1.0);
    auto t1 = r.take_tones();
    REQUIRE(t1.size() == 1);
    CHECK_FALSE(r.answer(0, 1.2));
    r.advance(2.49);
    CHECK(r.take_tones().empty());
    r.advance(2.5);  // 1 s tone + 0.5 s gap
    auto t2 = r.take_tones();
    REQUIRE(t2.size() == 1);
    // One tone is 7/5 over A2 (110 * 7/5 = 154 Hz); the other is it mistuned by
    // the level asked, 20 c: f = 154 * 2^(+-20/1200) (the cent, Ellis 1885).
    const ui::EarQuestion& q = *r.question();
    CHECK(q.level_cents == doctest::Approx(20.0));
    const double pure = 110.0 * 7.0 / 5.0, off = pure * std::exp2(q.mistune_sign * 20.0 / 1200.0);
    const double f_pure = q.correct_answer == 0 ? t1[0].freq_hz : t2[0].freq_hz;
    const double f_off = q.correct_answer == 0 ? t2[0].freq_hz : t1[0].freq_hz;
    CHECK(f_pure == doctest::Approx(pure).epsilon(1e-9));
    CHECK(f_off == doctest::Approx(off).epsilon(1e-9));
    CHECK(r.answer(1, 2.6));
    CHECK(r.answers().back().question.level_cents == doctest::Approx(20.0));  // what was asked is what sounded
}

TEST_CASE("the simulated listener: chance at 0, threshold_p at the threshold, rising") {
    ui::ListenerConfig lc;
    lc.threshold_cents = 12.0;
    ui::SimulatedListener l(lc);
    CHECK(l.p_correct(0.0) == doctest::Approx(0.5));
    CHECK(l.p_correct(12.0) == doctest::Approx(0.7071).epsilon(1e-6));
    CHECK(l.p_correct(6.0) < l.p_correct(12.0));
    // The upper asymptote is 1 - lapse (Wichmann & Hill 2001, eq. 1): 0.98 with the default 2 %.
    CHECK(l.p_correct(1000.0) == doctest::Approx(0.98).epsilon(1e-9));
    // Over many draws the share right matches p (binomial: 20 000 draws, sd 0.0032).
    int right = 0;
    for (int i = 0; i < 20000; ++i) right += l.answers_right(12.0) ? 1 : 0;
    CHECK(right / 20000.0 == doctest::Approx(0.7071).epsilon(0.02));
    lc.threshold_cents = 0.0;
    CHECK_THROWS_AS(ui::SimulatedListener{lc}, Error);
}

TEST_CASE("the results in words a performer reads at a glance") {
    ui::HoldScore s;
    s.locked = true;
    s.time_to_lock_s = 0.84;
    s.mean_dev_cents = -3.2;
    s.spread_cents = 4.4;
    s.in_tolerance_share = 0.862;
    CHECK(hold_summary_text(s, 5.0) ==
          "locked in 0.8 s, held 3 cents flat, 86 % within \xC2\xB1"
          "5 c");
    CHECK(hold_spread_text(s) == "spread 4 c while held");
    s.mean_dev_cents = 1.4;
    CHECK(hold_summary_text(s, 7.5) ==
          "locked in 0.8 s, held 1 cent sharp, 86 % within \xC2\xB1"
          "7.5 c");
    s.mean_dev_cents = 0.3;
    CHECK(hold_summary_text(s, 5.0) ==
          "locked in 0.8 s, held right on the target, 86 % within \xC2\xB1"
          "5 c");
    s.locked = false;
    s.mean_dev_cents = 12.0;
    s.in_tolerance_share = 0.2;
    CHECK(hold_summary_text(s, 5.0) ==
          "no lock, 12 cents sharp on average, 20 % within \xC2\xB1"
          "5 c");
    CHECK(hold_spread_text(s) == "spread 4 c over the hold");
    CHECK(hold_summary_text(ui::HoldScore{}, 5.0) == "no voice heard");
    EarResult e;
    e.estimate.verdict = ui::ThresholdVerdict::measured;
    e.estimate.threshold_cents = 14.23;
    e.estimate.lo_cents = 11.4;
    e.estimate.hi_cents = 19.6;
    e.trials = 48;
    e.correct_share = 0.708;
    CHECK(ear_summary_text(e) == "threshold 14 c (95 % interval 11 to 20 c) after 48 answers, 71 % right");
    e.estimate.threshold_cents = 4.23;
    e.estimate.lo_cents = 0.0;
    CHECK(threshold_text(e.estimate) == "4.2 c (95 % interval below 20 c)");
    e.estimate = {};
    e.estimate.verdict = ui::ThresholdVerdict::finer;
    e.estimate.smallest_cents = 0.5;
    CHECK(ear_summary_text(e) == "finer than 0.5 c after 48 answers, 71 % right");
    e.estimate.verdict = ui::ThresholdVerdict::none;
    CHECK(ear_summary_text(e) == "no reliable threshold after 48 answers, 71 % right");
    e.task = ui::EarTask::identify;
    e.trials = 48;
    e.correct_share = 34.0 / 48.0;
    CHECK(ear_summary_text(e) == "34 of 48 answers right (71 %)");
}

TEST_CASE("a singer's vibrato: the hold is scored on the vibrato centre where it is known") {
    // Hand-worked: a 5.5 Hz vibrato of +-30 cents around a centre 1 cent
    // sharp. Its instantaneous pitch leaves a +-10 c band most of the time
    // (|30 sin| > 9 for 80 % of a cycle), its centre never does: scored on
    // the centre, the hold locks at once and stays 100 % within the band,
    // 1 cent sharp with no spread (common practice: singers are judged by
    // the centre of their vibrato).
    TempDir dir;
    LogWriter writer(dir.file("log.sqlite3"));
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    RunnerConfig cfg = fake_config();
    DrillRunner r(d, cfg, &writer);
    r.start(0.0);
    const double step = 0.01;
    for (long k = 0; k < 605; ++k) {
        const double t = static_cast<double>(k) * step;
        r.advance(t);
        if (t < 4.0) continue;
        pitch::Reading x = reading(t, 1.0 + 30.0 * std::sin(2.0 * 3.14159265358979 * 5.5 * t));
        x.centre_dev_cents = 1.0;
        r.feed(x);
    }
    REQUIRE(r.results().size() == 1);
    const auto& s = r.results()[0].score;
    CHECK(s.locked);
    CHECK(s.time_to_lock_s < 0.35);  // the dwell of 0.3 s, from the first reading
    CHECK(s.mean_dev_cents == doctest::Approx(1.0));
    CHECK(s.spread_cents == doctest::Approx(0.0).scale(1.0));
    CHECK(s.in_tolerance_share == doctest::Approx(1.0));
    // The instantaneous pitch alone would not have held the band.
    cfg.deviation = ui::DeviationSource::instant;
    DrillRunner q(d, cfg, &writer);
    q.start(0.0);
    for (long k = 0; k < 605; ++k) {
        const double t = static_cast<double>(k) * step;
        q.advance(t);
        if (t >= 4.0) q.feed(reading(t, 1.0 + 30.0 * std::sin(2.0 * 3.14159265358979 * 5.5 * t)));
    }
    REQUIRE(q.results().size() == 1);
    CHECK(q.results()[0].score.in_tolerance_share < 0.4);
}

// Two voices: the interval between them is scored against the hold's target (3/2, then 7/4) in its nearest octave;
// one pitch, or a pair below the sure confidence, counts as unheard. Cents from 1200 log2(p/q) (common practice).
TEST_CASE("two voices: each hold scores the interval between the voices; one pitch is not a pass") {
    Drill d = parse_drill(kTwoHolds, "two-holds.toml");
    RunnerConfig c = fake_config();
    c.voices = 2;
    DrillRunner r(d, c, nullptr);
    CHECK(r.voices() == 2);
    // Hold 1 (3/2, 4-6 s): a 3/1 (a twelfth: 3/2 an octave up) 2 c wide; hold 2 (7/4, 9.5-11.5 s): one pitch only,
    // then from 10.5 s a 7/4 pair 1 c narrow but unsure for its first 0.2 s.
    auto frame = [](double t) {
        pitch::TwoVoiceFrame f;
        f.t_s = t;
        f.end_s = t + 0.085;
        f.confidence = 0.9;
        f.f_low_hz = 110.0;
        if (t >= 4.0 && t < 6.0) {
            f.voices = 2;
            f.f_high_hz = 110.0 * 3.0 * std::exp2(2.0 / 1200.0);
        } else if (t >= 9.5 && t < 10.5) {
            f.voices = 1;
        } else if (t >= 10.5 && t < 11.5) {
            f.voices = 2;
            f.f_high_hz = 110.0 * 7.0 / 4.0 * std::exp2(-1.0 / 1200.0);
            if (t < 10.7) f.confidence = 0.4;
        }
        return f;
    };
    r.start(0.0);
    const long k1 = std::lround(13.0 / 0.01);
    for (long k = 0; k < k1; ++k) {
        const double t = static_cast<double>(k) * 0.01;
        r.advance(t);
        if (t >= 0.02) r.feed(frame(t - 0.02));
    }
    r.advance(13.0);
    REQUIRE(r.results().size() == 2);
    const HoldResult& a = r.results()[0];
    CHECK(a.score.locked);
    CHECK(a.score.mean_dev_cents == doctest::Approx(2.0).epsilon(1e-6));
    CHECK(a.score.voiced_share > 0.95);
    const HoldResult& b = r.results()[1];
    CHECK(b.score.locked);
    CHECK(b.score.time_to_lock_s >= 1.2 - 1e-9);  // nothing before the sure pair at 10.7 s counts
    CHECK(b.score.mean_dev_cents == doctest::Approx(-1.0).epsilon(1e-6));
    CHECK(b.score.voiced_share == doctest::Approx(0.4).epsilon(0.03));  // 0.8 of the 2 s hold sure
    // The trace keeps the upper voice and the interval's deviation; unheard moments have neither.
    REQUIRE(!b.trace.empty());
    CHECK(b.trace.front().f0_hz == 0.0f);
    CHECK(std::isnan(b.trace.front().dev_cents));
    CHECK(b.trace.back().f0_hz == doctest::Approx(110.0 * 7.0 / 4.0 * std::exp2(-1.0 / 1200.0)).epsilon(1e-5));
}
