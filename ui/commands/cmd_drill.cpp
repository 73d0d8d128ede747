// beatless drill — run a drill without a screen and print each attempt's score.
//
//   beatless drill NAME [--demo [--hold CENTS] [--seed N]] [--input DEV | --input-file FILE] [--output DEV]
//                  [--voices 1|2] [--listener perfect|guess|CENTS] [--root NOTE|HZ] [--a4 HZ] [--attempts N]
//                  [--log FILE] [--format text|json]
//
// NAME is a built-in drill (hold-tritones, ear-tritones, ...) or a .toml
// file. Hold drills listen to the input (a device, or --demo: the demo
// performer sings the drill's targets on its schedule, seeded). Ear drills
// need someone to answer: here that is a simulated listener of known
// threshold and lapse rate (--listener CENTS, or perfect, or guess;
// ui/session/listener_model.h); a person answers on the Drills screen. An
// ear drill prints its result: the fitted threshold with its interval and
// the levels played (discriminate), or the confusion matrix and the share
// right per pair (identify). --voices 2 (hold drills): a double stop, the interval
// between two voices in one input scored against each hold's target (with --demo
// the demo violinist plays the holds). --input-file: a recording is the input,
// read from its first sample on the drill's clock, in simulated time.
// With --demo (hold) or an ear drill, and no --output,
// nothing can be heard, so the drill runs in simulated time, as fast as the
// machine allows; otherwise in real time, the drone and the tones on the
// output device. Every attempt goes to the practice log like the screen's
// (the data folder's, or --log FILE); when the log cannot be written, the
// attempts are kept and, at the end, written to a CSV file that
// `beatless history --import` takes, and the command says so in one line
// and exits 1. Scores go to stdout (text lines, or one JSON object per
// attempt), diagnostics to stderr.
#include "audio/demo_duo.h"
#include "audio/demo_performer.h"
#include "audio/device.h"
#include "audio/engine.h"
#include "audio/sound_system.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "ui/commands/commands.h"
#include "ui/session/drill_runner.h"
#include "ui/session/json.h"
#include "ui/session/listener_model.h"
#include "ui/session/log_writer.h"
#include "ui/session/paths.h"
#include "ui/session/safe_file.h"
#include "ui/session/usage_error.h"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <functional>
#include <memory>
#include <optional>
#include <span>
#include <thread>

namespace beatless::ui {

namespace {

namespace fs = std::filesystem;

std::atomic<bool> g_stop{false};
extern "C" void on_drill_signal(int) { g_stop.store(true); }

constexpr double kSimRateHz = 48000.0;
constexpr std::size_t kSimBlock = 256;
constexpr double kDemoVibratoScale = 0.25;  // a singer tuning to a drone keeps her vibrato narrow (common practice)

struct DrillCmd {
    std::string name;
    bool demo = false;
    std::optional<double> hold_dev_cents;
    std::uint64_t seed = 7;
    std::string listener;
    std::string input;
    std::string input_file;
    int voices = 1;
    std::string output;
    std::string root;
    std::optional<double> a4_hz;
    int attempts = 0;
    std::string log_file;
    Format format = Format::text;
    std::string lowest;
};

audio::EngineConfig engine_config(const DrillCmd& o) {
    audio::EngineConfig ec;
    if (!o.lowest.empty()) ec.f_min_hz = parse_lowest(o.lowest, o.a4_hz.value_or(pitch::kDefaultA4Hz));
    return ec;
}

// ---- Printing --------------------------------------------------------------

std::string hold_line(const Drill& d, const HoldResult& r, std::size_t of, int voices, Format f) {
    const ui::HoldScore& s = r.score;
    if (f == Format::json) {
        JsonWriter j;
        j.begin_object();
        j.key("drill").value(d.id).key("kind").value("hold").key("voices").value(voices);
        j.key("index").value(static_cast<std::int64_t>(r.index + 1)).key("of").value(static_cast<std::int64_t>(of));
        j.key("target").value(r.target.target.interval.str());
        j.key("name").value(r.target.target.name);
        j.key("tolerance_cents").value(r.tolerance_cents, 3);
        j.key("locked").value(s.locked);
        j.key("time_to_lock_s").value(s.time_to_lock_s, 4);
        j.key("mean_dev_cents").value(s.mean_dev_cents, 3);
        j.key("spread_cents").value(s.spread_cents, 3);
        j.key("in_tolerance_share").value(s.in_tolerance_share, 4);
        j.key("voiced_share").value(s.voiced_share, 4);
        j.end_object();
        return j.str();
    }
    std::string line =
        "hold " + std::to_string(r.index + 1) + " of " + std::to_string(of) + "  " + r.target.target.interval.str();
    if (!r.target.target.name.empty()) line += " " + r.target.target.name;
    line += ": " + hold_summary_text(s, r.tolerance_cents);
    if (const std::string sp = hold_spread_text(s); !sp.empty()) line += "; " + sp;
    return line;
}

std::string listener_text(const ui::ListenerConfig& l) {
    if (l.kind == ui::ListenerKind::perfect) return "perfect (always right)";
    if (l.kind == ui::ListenerKind::guess) return "guessing (right half the time)";
    return "threshold " + pitch::format_trimmed(l.threshold_cents, 2) + " c, lapse rate " +
           pitch::format_trimmed(100.0 * l.lapse, 1) + " %";
}

std::string ear_json(const Drill& d, const DrillRunner& run, const EarResult& r, const ui::ListenerConfig& l) {
    JsonWriter j;
    j.begin_object();
    j.key("drill").value(d.id).key("kind").value("ear");
    j.key("task").value(r.task == ui::EarTask::discriminate ? "discriminate" : "identify");
    j.key("choices").value(d.targets_text());
    j.key("trials").value(static_cast<std::int64_t>(r.trials));
    j.key("correct_share").value(r.correct_share, 4);
    j.key("complete").value(r.complete);
    if (r.task == ui::EarTask::discriminate) {
        const ui::ThresholdEstimate& e = r.estimate;
        j.key("estimate")
            .value(e.verdict == ui::ThresholdVerdict::measured ? "measured"
                   : e.verdict == ui::ThresholdVerdict::finer  ? "finer"
                                                               : "none");
        j.key("threshold_cents").value(e.threshold_cents, 3);
        j.key("lo_cents").value(e.lo_cents, 3).key("hi_cents").value(e.hi_cents, 3);
        j.key("smallest_cents").value(e.smallest_cents, 3);
        j.key("reversal_mean_cents").value(r.reversal_mean_cents, 3);
        j.key("levels_cents").begin_array();
        for (const EarAnswer& a : run.answers()) j.value(a.question.level_cents, 4);
        j.end_array();
        j.key("correct").begin_array();
        for (const EarAnswer& a : run.answers()) j.value(a.correct);
        j.end_array();
    } else {
        j.key("confusion").begin_array();
        for (const auto& row : r.confusion) {
            j.begin_array();
            for (int n : row) j.value(static_cast<std::int64_t>(n));
            j.end_array();
        }
        j.end_array();
    }
    j.key("listener")
        .value(l.kind == ui::ListenerKind::perfect ? "perfect"
               : l.kind == ui::ListenerKind::guess ? "guess"
                                                   : "model");
    j.key("listener_cents").value(l.kind == ui::ListenerKind::model ? l.threshold_cents : NAN, 3);
    j.key("listener_lapse").value(l.lapse, 4);
    j.end_object();
    return j.str();
}

// The result in lines: the verdict, the method, and what it rests on.
std::string ear_text(const Drill& d, const DrillRunner& run, const EarResult& r, const ui::ListenerConfig& l) {
    std::string out = d.id + ": " + ear_summary_text(r) + "\n";
    if (r.task == ui::EarTask::discriminate) {
        out += "  method: " + method_text(d) + "\n";
        out += "  stopped " + stopped_by_text(r.stopped_by, d.staircase);
        if (std::isfinite(r.reversal_mean_cents))
            out += "; mean of the last " + std::to_string(d.staircase.threshold_reversals) + " reversals " +
                   pitch::format_trimmed(r.reversal_mean_cents, r.reversal_mean_cents < 10 ? 1 : 0) +
                   " c (Levitt's estimate)";
        out += "\n  mistunings played, cents (x wrong):";
        for (const EarAnswer& a : run.answers())
            out += " " + pitch::format_trimmed(a.question.level_cents, a.question.level_cents < 10 ? 2 : 1) +
                   (a.correct ? "" : "x");
        out += "\n";
    } else {
        const std::size_t n = d.targets.size();
        std::vector<std::string> names;
        std::size_t w = 6;
        for (const DrillTarget& t : d.targets) {
            names.push_back(t.target.interval.str());
            w = std::max(w, names.back().size() + 1);
        }
        auto pad = [](std::string s, std::size_t width) {
            while (s.size() < width) s.insert(s.begin(), ' ');
            return s;
        };
        out += "  confusion matrix (rows: played, columns: named):\n  " + std::string(8, ' ');
        for (const std::string& nm : names) out += pad(nm, w);
        out += "\n";
        for (std::size_t i = 0; i < n; ++i) {
            std::string nm = names[i];
            nm.resize(8, ' ');
            out += "  " + nm;
            for (std::size_t k = 0; k < n; ++k) out += pad(std::to_string(r.confusion[i][k]), w);
            out += "\n";
        }
        out += "  right per pair (of the answers to either that named one of the two), closest pairs first:\n";
        const std::vector<double> cents = d.target_cents();
        for (const auto& [i, k] : pairs_closest_first(cents)) {
            const double share = pair_share_right(r.confusion, i, k);
            const int of = pair_answers(r.confusion, i, k);
            char buf[160];
            std::snprintf(buf, sizeof buf, "    %-8s %-8s %5.1f c apart: %s\n", names[i].c_str(), names[k].c_str(),
                          std::fabs(cents[i] - cents[k]),
                          std::isfinite(share)
                              ? (std::to_string(std::lround(100.0 * share)) + " % of " + std::to_string(of)).c_str()
                              : "not asked");
            out += buf;
        }
    }
    out += "  listener: simulated, " + listener_text(l) + "\n";
    return out;
}

// ---- The practice log at the end --------------------------------------------

// One line on stderr; the unsaved attempts into a CSV file. Returns the exit code.
int report_log(const DrillRunner& runner, const LogWriter& writer) {
    const std::size_t made = runner.attempts_made();
    if (writer.pending() == 0) {
        if (made > 0)
            std::fprintf(stderr, "beatless: %zu %s saved to %s\n", made, made == 1 ? "attempt" : "attempts",
                         writer.path().c_str());
        return 0;
    }
    const std::string line = keep_unsaved(writer, runner.log_warning());
    std::fprintf(stderr, "beatless: %s\n", line.c_str());
    return 1;
}

// ---- Checks -----------------------------------------------------------------

void check(const DrillCmd& o, const Drill& d) {
    if (o.voices != 1 && o.voices != 2) throw Error("--voices " + std::to_string(o.voices) + ": 1 or 2");
    if (o.demo && !o.input.empty()) throw UsageError("--demo and --input contradict each other; give one");
    if (!o.input_file.empty() && (o.demo || !o.input.empty()))
        throw UsageError("choose one input: --demo, --input-file or --input");
    if (!o.input_file.empty() && !o.output.empty())
        throw UsageError("--output: a drill on --input-file runs in simulated time and sounds nothing; leave it out");
    if (o.hold_dev_cents && !o.demo) throw UsageError("--hold works with --demo only");
    if (o.hold_dev_cents && o.voices == 2) throw UsageError("--hold works with one voice (the demo performer)");
    const bool has_listener = !o.listener.empty();
    if (o.hold_dev_cents && !(std::fabs(*o.hold_dev_cents) <= 100.0))
        throw Error("--hold " + pitch::format_trimmed(*o.hold_dev_cents, 2) + ": out of range (-100 to 100 cents)");
    if (o.attempts < 0) throw Error("--attempts " + std::to_string(o.attempts) + ": must not be negative");
    if (d.mode == DrillMode::hold) {
        if (has_listener) throw UsageError("--listener is for ear drills; " + d.id + " is a hold drill");
        return;
    }
    if (o.voices == 2)
        throw UsageError("--voices 2 scores the interval of a double stop in a hold drill; " + d.id +
                         " is an ear drill");
    if (o.demo && !has_listener)
        throw UsageError("--demo: the demo performer sings hold drills; for the ear drill " + d.id +
                         " give --listener CENTS, perfect or guess (a simulated listener) instead");
    if (!has_listener)
        throw UsageError("drill " + d.id +
                         " is an ear drill and needs a listener: answer it on the Drills screen, or give --listener "
                         "CENTS, perfect or "
                         "guess for a simulated listener");
    if (!o.input.empty() || !o.input_file.empty())
        throw UsageError(std::string(o.input.empty() ? "--input-file" : "--input") +
                         ": an ear drill listens to no input (" + d.id + " plays questions and waits for answers)");

    if (o.attempts > 0) throw UsageError("--attempts counts holds; " + d.id + " is an ear drill (one session)");
}

// ---- Running ----------------------------------------------------------------

struct Printer {
    const Drill& drill;
    const DrillRunner& runner;
    Format format;
    std::string header;  // one line on stderr once the drill is under way
    std::size_t printed = 0;
    void begin() {
        if (!header.empty()) std::fprintf(stderr, "beatless: %s\n", header.c_str());
        header.clear();
    }
    void operator()() {
        while (printed < runner.results().size()) {
            std::printf(
                "%s\n",
                hold_line(drill, runner.results()[printed], runner.hold_count(), runner.voices(), format).c_str());
            ++printed;
        }
        std::fflush(stdout);
    }
};

// What the engine analyses for a hold drill: one voice against the hold's target, or two voices (the runner
// scores their interval against the hold's target itself, so the set is the drill's targets, for the beats).
void follow_holds(audio::Engine& engine, const Drill& d, const DrillRunner& runner) {
    if (runner.voices() == 2) {
        pitch::TargetSet set;
        set.id = d.id;
        for (const DrillTarget& t : d.targets) set.targets.push_back(t.target);
        engine.set_two_voices(pitch::TwoVoiceConfig{}, std::move(set));
        return;
    }
    pitch::ReadingConfig rc;
    rc.root_hz = d.drone.root_hz;
    engine.set_readings(rc, one_target_set(*runner.current_target()));
}

// One voice: the readings follow the hold's target once the runner moves on (target_at: the hold last followed).
void keep_target(audio::Engine& engine, const Drill& d, const DrillRunner& runner, std::size_t& target_at) {
    if (runner.voices() == 2 || runner.hold_index() == target_at || !runner.current_target()) return;
    target_at = runner.hold_index();
    follow_holds(engine, d, runner);
}

// Everything the engine has made since the last call, into the runner.
void drain_into(audio::Engine& engine, DrillRunner& runner) {
    if (runner.voices() == 2) {
        pitch::TwoVoiceFrame got[64];
        for (std::size_t k; (k = engine.take_readings(std::span<pitch::TwoVoiceFrame>(got))) > 0;)
            for (std::size_t i = 0; i < k; ++i) runner.feed(got[i]);
        return;
    }
    pitch::Reading got[512];
    for (std::size_t k; (k = engine.take_readings(std::span<pitch::Reading>(got))) > 0;)
        for (std::size_t i = 0; i < k; ++i) runner.feed(got[i]);
}

// The demo violinist's double stops: the drill's holds, on its schedule.
audio::DemoDuoConfig demo_duo(const Drill& d, const DrillRunner& runner, const DrillCmd& o) {
    audio::DemoDuoConfig vc;
    vc.sample_rate_hz = kSimRateHz;
    vc.root_hz = d.drone.root_hz;
    vc.seed = o.seed;
    vc.script = demo_script(runner);
    return vc;
}

// A hold drill on a recording, in simulated time: the file's first sample is the drill's time 0. When the file
// ends before the drill, a hold it covered to the end is scored and the rest are not.
void run_hold_file(const Drill& d, DrillRunner& runner, const DrillCmd& o, Printer& print) {
    audio::Engine engine(engine_config(o), nullptr);
    engine.use_file(o.input_file);
    follow_holds(engine, d, runner);
    std::size_t target_at = runner.hold_index();
    print.begin();
    runner.start(0.0);
    double end_s = 0.0;
    auto on_time = [&](double t_s) {
        end_s = std::max(end_s, t_s);
        runner.advance(t_s);
        keep_target(engine, d, runner, target_at);
        print();
    };
    if (runner.voices() == 2) {
        engine.run_fast(std::function<void(const pitch::TwoVoiceFrame&)>([&](const pitch::TwoVoiceFrame& f) {
            runner.feed(f);
            on_time(f.end_s);
        }));
    } else {
        engine.run_fast(std::function<void(const pitch::Reading&)>([&](const pitch::Reading& r) {
            runner.feed(r);
            on_time(r.t_s);
        }));
    }
    end_s = std::max(end_s, engine.stream_time_s());
    runner.advance(end_s);
    const std::size_t planned = runner.hold_count();
    if (!runner.done()) runner.stop(end_s);
    engine.stop();
    print();
    if (runner.results().size() < planned)
        std::fprintf(stderr, "beatless: %s ended at %s s, before the drill: %zu of %zu holds scored\n",
                     o.input_file.c_str(), pitch::format_trimmed(end_s, 1).c_str(), runner.results().size(), planned);
}

// A hold drill in simulated time: the demo performer rendered block by block.
void run_hold_simulated(const Drill& d, DrillRunner& runner, const DrillCmd& o, Printer& print) {
    audio::DemoConfig dc;
    dc.sample_rate_hz = kSimRateHz;
    dc.root_hz = d.drone.root_hz;
    dc.seed = o.seed;
    dc.script = demo_script(runner);
    dc.vibrato_scale = kDemoVibratoScale;
    for (const auto& n : dc.script) dc.target_cents.push_back(n.target_cents);
    if (dc.target_cents.empty()) dc.target_cents.push_back(0.0);
    if (o.hold_dev_cents) {
        dc.hold = true;
        dc.hold_dev_cents = *o.hold_dev_cents;
    }
    const bool duo = runner.voices() == 2;
    audio::Engine engine(engine_config(o), nullptr);
    if (duo)
        engine.use_demo(demo_duo(d, runner, o));  // the violinist plays inside the engine
    else
        engine.use_demo(dc);
    follow_holds(engine, d, runner);
    engine.set_drone(drill_drone(d));
    engine.start(false);
    audio::DemoPerformer performer(dc);
    std::vector<float> block(kSimBlock);
    std::size_t target_at = runner.hold_index();
    print.begin();
    runner.start(0.0);
    const double limit_s = runner.planned_holds().empty() ? 1.0 : runner.planned_holds().back().start_s + 60.0;
    while (!runner.done() && engine.stream_time_s() < limit_s) {
        if (duo) {
            engine.run_demo_frames(kSimBlock);
        } else {
            performer.render(block);
            engine.capture_block(block);
            engine.analyze_available();
        }
        drain_into(engine, runner);
        runner.advance(engine.stream_time_s());
        for (const ToneRequest& t : runner.take_tones()) engine.sound_tone(t.freq_hz, t.dur_s);
        keep_target(engine, d, runner, target_at);
        print();
    }
    if (!runner.done()) runner.stop(engine.stream_time_s());
    engine.stop();
    print();
}

// An ear drill in simulated time: nothing sounds; the listener answers when asked.
void run_ear_simulated(DrillRunner& runner, ui::SimulatedListener& listener, Printer& print) {
    print.begin();
    double now = 0.0;
    const double step = 0.01;
    runner.start(now);
    while (!runner.done() && now < 24 * 3600.0) {
        now += step;
        runner.advance(now);
        runner.take_tones();
        if (runner.phase() == DrillPhase::ear_answer) {
            runner.answer(listener.answer(*runner.question(), runner.drill().target_cents()), now);
        }
    }
}

// Any drill in real time on the audio devices.
void run_realtime(const Drill& d, DrillRunner& runner, const DrillCmd& o, Printer& print,
                  ui::SimulatedListener* listener) {
    const bool hold = d.mode == DrillMode::hold;
    auto system = audio::make_sound_system();
    audio::Engine engine(engine_config(o), system.get());
    engine.on_message([](const std::string& m) { std::fprintf(stderr, "beatless: %s\n", m.c_str()); });
    audio::DemoConfig dc;
    dc.root_hz = d.drone.root_hz;
    dc.seed = o.seed;
    dc.vibrato_scale = kDemoVibratoScale;
    if (hold && o.demo) {
        dc.script = demo_script(runner);
        for (const auto& n : dc.script) dc.target_cents.push_back(n.target_cents);
        if (o.hold_dev_cents) {
            dc.hold = true;
            dc.hold_dev_cents = *o.hold_dev_cents;
        }
    }
    if (dc.target_cents.empty()) dc.target_cents.push_back(0.0);
    if (hold && !o.demo) {
        engine.open_input_device(o.input);
    } else if (hold && runner.voices() == 2) {
        engine.use_demo(demo_duo(d, runner, o));
    } else {
        if (!hold) dc.script = {{1.0e6, 1.0, 0.0}};  // an ear drill listens to nothing: a silent stand-in input
        engine.use_demo(dc);
    }
    engine.open_output_device(o.output);
    if (hold) {
        follow_holds(engine, d, runner);
    } else {
        pitch::ReadingConfig rc;
        rc.root_hz = d.drone.root_hz;
        engine.set_readings(rc, one_target_set(d.targets.front()));
    }
    engine.set_drone(drill_drone(d));
    hearing_caution_once();
    g_stop.store(false);
    std::signal(SIGINT, on_drill_signal);
    std::signal(SIGTERM, on_drill_signal);
    engine.start();
    print.begin();
    std::size_t target_at = runner.hold_index();
    runner.start(hold && o.demo ? 0.0 : engine.stream_time_s());
    double answer_due = INFINITY;
    while (!runner.done()) {
        if (g_stop.load()) {
            runner.stop(engine.stream_time_s());
            break;
        }
        drain_into(engine, runner);
        const double now = engine.stream_time_s();
        runner.advance(now);
        for (const ToneRequest& t : runner.take_tones()) engine.sound_tone(t.freq_hz, t.dur_s);
        if (hold) keep_target(engine, d, runner, target_at);
        if (listener && runner.phase() == DrillPhase::ear_answer) {
            if (!std::isfinite(answer_due)) answer_due = now + 0.4;  // a moment to think
            if (now >= answer_due) {
                runner.answer(listener->answer(*runner.question(), runner.drill().target_cents()), now);
                answer_due = INFINITY;
            }
        }
        engine.supervise();
        print();
        std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    audio::DroneSettings quiet = engine.drone();
    quiet.on = false;
    engine.set_drone(quiet);
    std::this_thread::sleep_for(std::chrono::milliseconds(120));  // the drone's 50 ms fade before the stream closes
    engine.stop();
    std::signal(SIGINT, SIG_DFL);
    std::signal(SIGTERM, SIG_DFL);
    print();
}

int run_drill(const DrillCmd& o) {
    Drill d = load_drill(o.name);
    check(o, d);
    const double a4 = o.a4_hz ? pitch::check_a4(*o.a4_hz) : pitch::kDefaultA4Hz;
    if (!o.root.empty()) d.drone.root_text = o.root;
    if (!o.root.empty() || o.a4_hz) {
        d.drone.root_hz = pitch::parse_root(d.drone.root_text, a4);
        audio::DroneSettings probe;
        probe.root_hz = d.drone.root_hz;
        audio::check_drone_settings(probe);
    }
    std::optional<ui::SimulatedListener> listener;
    if (!o.listener.empty()) listener.emplace(parse_listener(o.listener, o.seed));
    const fs::path log_path = o.log_file.empty() ? practice_log_path() : fs::path(o.log_file);
    if (!o.log_file.empty())
        (void)check_output_path(log_path);  // a device, a folder or a missing folder: before the drill
    LogWriter writer(log_path);
    RunnerConfig rc;
    rc.seed = o.seed;
    rc.max_holds = static_cast<std::size_t>(o.attempts);
    rc.performer = o.demo ? kDemoPerformer : listener ? kSimulatedListener : "";
    rc.voices = o.voices;
    DrillRunner runner(d, rc, &writer);
    Printer print{d, runner, o.format, {}};

    const bool hold = d.mode == DrillMode::hold;
    const bool on_file = !o.input_file.empty();
    const bool simulated = on_file || (o.output.empty() && o.input.empty() && (o.demo || !hold));
    if (o.format == Format::text) {
        std::string what =
            hold ? std::to_string(runner.hold_count()) + (runner.hold_count() == 1 ? " hold" : " holds") +
                       ", tolerance \xC2\xB1" + pitch::format_trimmed(d.tolerance_cents, 1) + " c"
            : d.task == ui::EarTask::discriminate
                ? d.targets_text() + " pure against mistuned, which was pure? (" + stop_rule_text(d.staircase) + ")"
                : "which of " + d.targets_text() + "? (each " + std::to_string(d.rounds) + " times)";
        if (hold && o.voices == 2) what += ", the interval between two voices";
        print.header = d.title + ": " + what + " over " + d.drone.root_text + " (" +
                       pitch::format_trimmed(d.drone.root_hz, 2) + " Hz)" + (on_file ? ", on " + o.input_file : "") +
                       (simulated ? ", in simulated time" : "");
    }
    if (on_file)
        run_hold_file(d, runner, o, print);
    else if (hold && simulated)
        run_hold_simulated(d, runner, o, print);
    else if (simulated)
        run_ear_simulated(runner, *listener, print);
    else
        run_realtime(d, runner, o, print, listener ? &*listener : nullptr);
    if (!hold && runner.ear_result()) {
        const EarResult& r = *runner.ear_result();
        if (o.format == Format::json)
            std::printf("%s\n", ear_json(d, runner, r, listener->config()).c_str());
        else
            std::printf("%s", ear_text(d, runner, r, listener->config()).c_str());
    }
    std::fflush(stdout);
    return report_log(runner, writer);
}

}  // namespace

void register_drill(CLI::App& app, Runner& run) {
    auto o = std::make_shared<DrillCmd>();
    CLI::App* sub = app.add_subcommand("drill", "Run a drill without a screen and print each attempt's score");
    sub->add_option("name", o->name, "A built-in drill (hold-tritones, ear-tritones, ...) or a .toml file")->required();
    sub->add_flag("--demo", o->demo,
                  "Hold drills: the demo performer sings the drill (simulated time unless --output)");
    sub->add_option("--hold", o->hold_dev_cents,
                    "With --demo: she holds every target this many cents off, without vibrato");
    sub->add_option("--seed", o->seed,
                    "Seed of the demo performer, the shuffled order, the ear questions and the listener (default 7)");
    sub->add_option(
        "--listener", o->listener,
        "Ear drills: a simulated listener: CENTS (its 70.7 % threshold, lapse rate 2 %), perfect, or guess");
    sub->add_option("--input", o->input, "Input device: index or a unique part of its name (default: the system's)");
    sub->add_option("--input-file", o->input_file,
                    "Hold drills: a recording is the input, its first sample the drill's start (simulated time)");
    sub->add_option("--voices", o->voices,
                    "Hold drills: 2 scores the interval between two voices in one input (a double stop) against each "
                    "target; with --demo the demo violinist plays them (default 1)");
    sub->add_option("--output", o->output,
                    "Output device for the drone and the tones (the drill then runs in real time)");
    sub->add_option("--root", o->root, "Drone root as a note (A2) or in Hz (110); default the drill's");
    sub->add_option("--lowest", o->lowest, kLowestHelp);
    sub->add_option("--a4", o->a4_hz, "A4 reference in Hz (400-480) for a root given as a note; default 440");
    sub->add_option("--attempts", o->attempts, "Hold drills: stop after this many holds (default all)");
    sub->add_option("--log", o->log_file, "Practice log file (default: the data folder's practice.sqlite3)");
    add_format_option(*sub, o->format, false);
    sub->callback([o, &run] { run = [o] { return run_drill(*o); }; });
}

}  // namespace beatless::ui
