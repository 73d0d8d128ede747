// beatless listen — the live engine without a screen, readings as JSON lines.
//
//   beatless listen [--demo | --input-file FILE [--fast] | --input DEV]
//                   [--root NOTE|HZ] [--a4 HZ] [--targets SET | --target R]
//                   [--seconds S] [--drone | --no-drone] [--output DEV]
//                   [--midi-out PORT [--midi-tuning mts|bend] [--bend-range N]] [--midi-in PORT]
//                   [--record [FILE.flac | FOLDER]] ...
//
// One JSON object per reading on stdout: {"t", "f0_hz", "confidence",
// "ratio", "target", "target_name", "dev_cents", "centre_dev_cents",
// "beat_hz", "beat_partials": [root partial, voice partial], "beat_in_tune_hz",
// "own_beat_hz", "own_partials"}, null where unvoiced or when nothing beats.
// beat_*: the audible pair (pitch/theory/beats.h, audible_pair), the pair a listener
// hears for the drone's timbre, and its rate now and exactly on target;
// own_*: a detail, the target's own coinciding pair (729:512 for 729/512).
// Diagnostics and a summary (overflows, underflows, latency) go to stderr. (`beatless --demo` with no subcommand opens the Practice screen.)
// The drone is off unless --drone is given; with a file or the demo,
// --drone means the input holds a drone at the root (the demo's microphone
// hears it through a simulated room), and drone removal follows it.
// --midi-out plays the drone (and a fixed --target's reference tone) on a
// MIDI synth, retuned exactly; --midi-in lets a keyboard set the root (a key)
// or the target (a key held with the root's key). MIDI runs on this thread.
// --record keeps the input as a take (ui/session/take_recording.h): FILE.flac with FILE.toml beside it, or in a
// folder (default: the data folder's takes/) named by date and time; takes cut short earlier are recovered first.
#include "audio/device.h"
#include "audio/engine.h"
#include "audio/sound_system.h"
#include "audio/timbre.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/measure/duo_advice.h"
#include "pitch/measure/two_voice.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/notes.h"
#include "ui/commands/commands.h"
#include "ui/session/json.h"
#include "ui/session/midi_session.h"
#include "ui/session/paths.h"
#include "ui/session/safe_file.h"
#include "ui/session/take_recording.h"
#include "ui/session/take_words.h"
#include "ui/session/target_files.h"
#include "ui/session/usage_error.h"
#include "ui/session/wording.h"

#include <atomic>
#include <chrono>
#include <cmath>
#include <csignal>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <memory>
#include <thread>

namespace beatless::ui {

namespace {

std::atomic<bool> g_interrupted{false};
extern "C" void on_sigint(int) { g_interrupted.store(true); }

enum class Printing { json, text };

struct ListenOptions {
    bool demo = false;
    std::string input_file;
    bool fast = false;
    std::string input_dev;
    std::string output_dev;
    std::string root = "A2";
    double a4_hz = pitch::kDefaultA4Hz;
    std::string targets = "7-limit";
    std::string target;
    std::string midi_out;  // --midi-out PORT
    std::string midi_in;   // --midi-in PORT
    std::string midi_tuning = "mts";
    double bend_range = 2.0;  // semitones
    double seconds = 0.0;     // 0 = until the end or Ctrl-C
    bool drone = false;
    bool no_drone = false;
    bool fifth = false;
    bool octave = false;
    std::string timbre = "round";
    double level_db = audio::kDroneStartLevelDbfs;
    bool no_removal = false;
    double rate_hz = 0.0;
    int block = 256;
    double hop_ms = 5.0;
    std::string lowest;
    std::uint64_t seed = 7;
    int voices = 1;                      // 2: two voices in one input (a double stop, a duet)
    bool record = false;                 // --record given
    std::string record_to;               // its FILE or folder; "" = the data folder's takes/
    std::string octaves = "equivalent";  // two voices: targets matched in every octave, or "exact"
    double in_tune_cents = 5.0;          // two voices: no move suggested within this
};

// Names of a reading's target in its octave (a Reading or a TwoVoiceFrame: both carry target_index and target_octaves).
struct TargetText {
    const pitch::TargetSet* set = nullptr;
    template <class R>
    std::string interval(const R& r) const {
        if (r.target_index < 0) return {};
        return pitch::shift_octaves(set->targets[static_cast<std::size_t>(r.target_index)].interval, r.target_octaves)
            .str();
    }
    template <class R>
    std::string name(const R& r) const {
        if (r.target_index < 0) return {};
        const pitch::Target& t = set->targets[static_cast<std::size_t>(r.target_index)];
        return pitch::target_name_in_octave(t, r.target_octaves, interval_names());
    }
};

std::string json_line(const pitch::Reading& r, const TargetText& tt) {
    JsonWriter j;
    j.begin_object();
    j.key("t").value(r.t_s, 4);
    if (r.voiced()) {
        j.key("f0_hz").value(r.f0_hz, 4);
        j.key("confidence").value(r.confidence, 3);
        j.key("ratio").value(r.ratio, 6);
        j.key("target").value(tt.interval(r));
        const std::string name = tt.name(r);
        if (name.empty())
            j.key("target_name").null();
        else
            j.key("target_name").value(name);
        j.key("dev_cents").value(r.dev_cents, 3);
        j.key("centre_dev_cents").value(r.centre_dev_cents, 3);
        j.key("beat_hz").value(r.heard_beat_hz, 3);
        if (r.heard_partial_root > 0)
            j.key("beat_partials").begin_array().value(r.heard_partial_root).value(r.heard_partial_voice).end_array();
        else
            j.key("beat_partials").null();
        j.key("beat_in_tune_hz").value(r.heard_beat_at_target_hz, 3);
        j.key("own_beat_hz").value(r.beat_hz, 3);
        if (r.beat_partial_root > 0)
            j.key("own_partials").begin_array().value(r.beat_partial_root).value(r.beat_partial_voice).end_array();
        else
            j.key("own_partials").null();
    } else {
        j.key("f0_hz").null().key("confidence").value(r.confidence, 3);
        for (const char* k : {"ratio", "target", "target_name", "dev_cents", "centre_dev_cents", "beat_hz",
                              "beat_partials", "beat_in_tune_hz", "own_beat_hz", "own_partials"})
            j.key(k).null();
    }
    j.end_object();
    return j.str();
}

// Two voices: each voice, the interval between them against the set, and
// its beat predicted and measured; with a drone each voice against the root too.
struct DuoText : TargetText {
    double root_hz = 0.0;
    bool judge_root = false;     // a drone sounds: each voice is also read against it
    double in_tune_cents = 5.0;  // no move within this (the settings' default width)
    pitch::DuoAdvice advice(const pitch::TwoVoiceFrame& f) const {
        return pitch::advise_duo(f, *set, judge_root ? root_hz : 0.0, in_tune_cents);
    }
};

std::string json_line(const pitch::TwoVoiceFrame& f, const DuoText& dt) {
    JsonWriter j;
    j.begin_object();
    j.key("t").value(f.t_s, 4);
    j.key("voices").begin_array();
    for (const double hz : {f.f_low_hz, f.f_high_hz}) {
        if (!(hz > 0.0)) continue;
        j.begin_object().key("f0_hz").value(hz, 4);
        if (dt.judge_root) {
            const double c = 1200.0 * std::log2(hz / dt.root_hz);
            const pitch::TargetMatch m = pitch::nearest_target(*dt.set, c, true);
            j.key("target").value(pitch::shift_octaves(dt.set->targets[m.index].interval, m.octaves).str());
            j.key("dev_cents").value(m.dev_cents, 3);
        }
        j.end_object();
    }
    j.end_array();
    j.key("confidence").value(f.confidence, 3);
    // Told apart: two voices (true), one series (false, and why), nothing heard (null).
    if (f.voices == 0)
        j.key("told_apart").null().key("blend").null();
    else if (f.voices == 2)
        j.key("told_apart").value(true).key("blend").null();
    else
        j.key("told_apart").value(false).key("blend").value(std::string(blend_key(f.blend)));
    if (f.voices == 2) {
        const pitch::DuoAdvice a = dt.advice(f);
        j.key("reference").value(a.against_root ? "root" : "lower voice");
        if (a.mover == pitch::DuoMover::none)
            j.key("move").null();
        else
            j.key("move")
                .begin_object()
                .key("voice")
                .value(a.mover == pitch::DuoMover::low ? "low" : "high")
                .key("cents")
                .value(a.move_cents, 2)
                .end_object();
        j.key("ratio").value(f.f_high_hz / f.f_low_hz, 6);
        j.key("interval_cents").value(f.interval_cents, 3);
        j.key("target").value(dt.interval(f));
        const std::string name = dt.name(f);
        if (name.empty())
            j.key("target_name").null();
        else
            j.key("target_name").value(name);
        j.key("dev_cents").value(f.dev_cents, 3);
        j.key("beat_hz").value(f.predicted_beat_hz, 3);
        if (f.partial_low > 0)
            j.key("beat_partials").begin_array().value(f.partial_low).value(f.partial_high).end_array();
        else
            j.key("beat_partials").null();
        j.key("measured_beat_hz").value(f.measured_beat_hz, 3);
    } else {
        for (const char* k : {"reference", "move", "ratio", "interval_cents", "target", "target_name", "dev_cents",
                              "beat_hz", "beat_partials", "measured_beat_hz"})
            j.key(k).null();
    }
    j.end_object();
    return j.str();
}

std::string signed_num(double v, int decimals) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%+.*f", decimals, v);
    return buf;
}

// "t 3.20 s  D4+12  7/5 lesser septimal tritone  -4.3 c (centre -2.1 c)  beat 1.8 Hz (7:5)"
std::string text_line(const pitch::Reading& r, const TargetText& tt, double a4_hz) {
    char head[32];
    std::snprintf(head, sizeof head, "t %5.2f s  ", r.t_s);
    std::string s = head;
    if (!r.voiced()) return s + "(no pitch)";
    const pitch::NearestNote n = pitch::hz_to_note(r.f0_hz, a4_hz);
    s += n.name + signed_num(n.offset_cents, 0) + "  " + tt.interval(r);
    if (const std::string name = tt.name(r); !name.empty()) s += " " + name;
    s += "  " + signed_num(r.dev_cents, 1) + " c";
    if (std::isfinite(r.centre_dev_cents)) s += " (centre " + signed_num(r.centre_dev_cents, 1) + " c)";
    if (std::isfinite(r.heard_beat_hz))
        s += "  beat " + pitch::format_trimmed(std::round(r.heard_beat_hz * 10.0) / 10.0, 1) + " Hz (" +
             std::to_string(r.heard_partial_root) + ":" + std::to_string(r.heard_partial_voice) + ")";
    return s;
}

// "t 3.20 s  G3-2 + F4-33  7/4 septimal minor seventh  -1.2 c narrow  beating 2.1 Hz (from the partials: 2.0 Hz)"
std::string text_line(const pitch::TwoVoiceFrame& f, const DuoText& dt, double a4_hz) {
    char head[32];
    std::snprintf(head, sizeof head, "t %5.2f s  ", f.t_s);
    std::string s = head;
    if (f.voices == 0) return s + "(no pitch)";
    auto note = [&](double hz) {
        const pitch::NearestNote n = pitch::hz_to_note(hz, a4_hz);
        return n.name + signed_num(n.offset_cents, 0);
    };
    if (f.voices == 1)
        return s + note(f.f_low_hz > 0.0 ? f.f_low_hz : f.f_high_hz) + "  " + std::string(blend_words(f.blend));
    s += note(f.f_low_hz) + " + " + note(f.f_high_hz) + "  " + dt.interval(f);
    if (const std::string name = dt.name(f); !name.empty()) s += " " + name;
    s += "  " + signed_num(f.dev_cents, 1) + " c " +
         (std::fabs(f.dev_cents) < 0.05 ? "just"
          : f.dev_cents > 0             ? "wide"
                                        : "narrow");
    if (std::isfinite(f.predicted_beat_hz)) {
        s += "  beating " + pitch::format_trimmed(std::round(f.predicted_beat_hz * 10.0) / 10.0, 1) + " Hz";
        if (std::isfinite(f.measured_beat_hz))
            s += " (from the partials: " + pitch::format_trimmed(std::round(f.measured_beat_hz * 10.0) / 10.0, 1) +
                 " Hz)";
    }
    if (const std::string m = move_words(dt.advice(f)); !m.empty()) s += "  " + m;
    return s;
}

void check_options(const ListenOptions& o) {
    const int sources = (o.demo ? 1 : 0) + (o.input_file.empty() ? 0 : 1) + (o.input_dev.empty() ? 0 : 1);
    if (sources > 1) throw UsageError("choose one input: --demo, --input-file or --input");
    if (o.fast && o.input_file.empty()) throw UsageError("--fast works with --input-file only");
    if (o.drone && o.no_drone) throw UsageError("--drone and --no-drone contradict each other");
    if (!o.target.empty() && o.targets != "7-limit")
        throw UsageError("--target and --targets contradict each other; give one");
    if (!(o.seconds >= 0.0 && o.seconds <= 24 * 3600.0))
        throw Error("--seconds " + pitch::format_trimmed(o.seconds, 3) + ": out of range (0 to 86400)");
    if (o.block < 16 || o.block > 8192)
        throw Error("--block " + std::to_string(o.block) + ": out of range (16 to 8192 frames)");
    if (!(o.hop_ms >= 1.0 && o.hop_ms <= 50.0))
        throw Error("--hop-ms " + pitch::format_trimmed(o.hop_ms, 2) + ": out of range (1 to 50)");
    if (o.voices != 1 && o.voices != 2) throw Error("--voices " + std::to_string(o.voices) + ": 1 or 2");
    if (o.octaves != "equivalent" && o.octaves != "exact")
        throw Error("--octaves " + o.octaves + ": equivalent or exact");
    if (o.octaves != "equivalent" && o.voices != 2) throw UsageError("--octaves works with --voices 2");
    if (!(o.in_tune_cents >= 0.0 && o.in_tune_cents <= 25.0))
        throw Error("--in-tune " + pitch::format_trimmed(o.in_tune_cents, 2) + ": out of range (0 to 25 cents)");
    if (o.rate_hz != 0.0 && !(o.rate_hz >= 8000.0 && o.rate_hz <= 192000.0))
        throw Error("--rate " + pitch::format_trimmed(o.rate_hz, 1) + ": out of range (8000 to 192000 Hz)");
}

pitch::TargetSet chosen_targets(const ListenOptions& o) {
    if (o.target.empty()) return load_target_set(o.targets);
    pitch::TargetSet s;
    s.id = "fixed";
    s.title = "Fixed target";
    pitch::Target t{pitch::parse_interval(o.target), ""};
    if (const std::string* n = interval_names().find(t.interval)) t.name = *n;
    s.targets.push_back(std::move(t));
    return s;
}

// Where --record writes: FILE.flac as given, or a new date-and-time name in a folder (default <data>/takes/).
std::filesystem::path take_target(const ListenOptions& o) {
    namespace fs = std::filesystem;
    std::error_code ec;
    if (!o.record_to.empty() && !fs::is_directory(o.record_to, ec)) {
        const fs::path p(o.record_to);
        if (p.extension() != ".flac")
            throw Error("--record " + pitch::quote(o.record_to) + ": a take is written as FLAC; name it .flac");
        if (fs::exists(p, ec)) throw Error(o.record_to + ": already exists; a take never replaces a file");
        check_output_path(p);
        return p;
    }
    const fs::path dir = o.record_to.empty() ? takes_dir() : fs::path(o.record_to);
    ensure_dir(dir);
    for (const RecoveredTake& r : recover_takes(dir)) {
        if (r.problem.empty())
            std::fprintf(stderr, "beatless: recovered a take cut short: %s (%s)\n", r.audio_path.c_str(),
                         duration_words(r.duration_s).c_str());
        else
            std::fprintf(stderr, "beatless: %s\n", r.problem.c_str());
    }
    return free_take_path(dir, std::time(nullptr));
}

std::string stream_text(const char* dir, const std::string& name, const audio::StreamInfo& s, double latency_s) {
    return std::string(dir) + " '" + name + "' (" + s.host_api + "): " + pitch::format_trimmed(s.sample_rate_hz, 0) +
           " Hz, " + std::to_string(s.block_len_frames) + "-frame blocks, device latency " +
           pitch::format_trimmed(1000.0 * latency_s, 1) + " ms";
}

int run_live(const ListenOptions& o, Printing printing) {
    check_options(o);
    pitch::check_a4(o.a4_hz);
    const double root_hz = pitch::parse_root(o.root, o.a4_hz);
    const pitch::TargetSet targets = chosen_targets(o);
    const audio::Timbre timbre = audio::parse_timbre(o.timbre);
    audio::DroneSettings ds;
    ds.on = o.drone;
    ds.root_hz = root_hz;
    ds.timbre = timbre;
    ds.fifth = o.fifth;
    ds.octave = o.octave;
    ds.level_dbfs = o.level_db;
    audio::check_drone_settings(ds);

    audio::EngineConfig ec;
    ec.sample_rate_hz = o.rate_hz;
    ec.block_len_frames = static_cast<std::size_t>(o.block);
    ec.hop_s = o.hop_ms / 1000.0;
    ec.drone_removal = !o.no_removal;
    if (!o.lowest.empty()) ec.f_min_hz = parse_lowest(o.lowest, o.a4_hz);

    const bool device_input = !o.demo && o.input_file.empty();
    const bool play_drone = o.drone && !o.fast && (device_input || o.demo || !o.output_dev.empty());
    std::unique_ptr<audio::AudioSystem> system;
    if (device_input || play_drone) system = audio::make_sound_system();
    audio::Engine engine(ec, system.get());
    engine.on_message([](const std::string& m) { std::fprintf(stderr, "beatless: %s\n", m.c_str()); });

    std::string what, input_why, output_why;
    int input_index = -1;
    double file_rate_hz = 0.0;
    if (o.demo && o.voices == 2) {
        audio::DemoDuoConfig vc;  // the demo violinist's double stops over the root
        vc.root_hz = root_hz;
        vc.seed = o.seed;
        engine.use_demo(vc);
        what = "the demo violinist";
    } else if (o.demo) {
        audio::DemoConfig dc;
        dc.root_hz = root_hz;
        dc.seed = o.seed;
        for (const auto& t : targets.targets) dc.target_cents.push_back(t.interval.cents());
        engine.use_demo(dc);
        what = "the demo performer";
    } else if (!o.input_file.empty()) {
        file_rate_hz = engine.use_file(o.input_file);
        engine.set_input_has_drone(o.drone);
        what = "'" + o.input_file + "'";
    } else {
        // Chosen here from one listing, so the start line can say why; the engine opens that index.
        const audio::DeviceChoice c = audio::choose_device_why(system->devices(), o.input_dev, audio::Direction::input);
        engine.open_input_device(std::to_string(c.index));
        input_index = c.index;
        what = "the input device";
        input_why = choice_text(c.why, audio::Direction::input);
    }
    if (play_drone) {
        try {
            const audio::DeviceChoice c = audio::choose_output_device(system->devices(), o.output_dev, input_index);
            engine.open_output_device(std::to_string(c.index));
            output_why = choice_text(c.why, audio::Direction::output);
        } catch (const Error& e) {
            if (!o.output_dev.empty() || device_input) throw;
            std::fprintf(stderr, "beatless: %s; the drone is not heard\n", e.what());
        }
    }
    pitch::ReadingConfig rc;
    rc.root_hz = root_hz;
    rc.a4_hz = o.a4_hz;
    rc.audible.partials_a = audio::timbre_highest_partial(timbre);
    if (o.voices == 2) {
        pitch::TwoVoiceConfig tc;  // a 10 ms hop: each frame analyses a 170 ms window
        tc.octave_equivalent = o.octaves == "equivalent";
        engine.set_two_voices(tc, targets);
    } else {
        engine.set_readings(rc, targets);
    }
    engine.set_drone(ds);
    if (o.drone && (play_drone || o.demo)) hearing_caution_once();

    // A file or the demo knows its rate now: the take starts with the first sample. A device's is known at start().
    std::unique_ptr<TakeRecording> take;
    const std::filesystem::path take_path = o.record ? take_target(o) : std::filesystem::path();
    TakeContext take_context;
    take_context.device = o.demo ? "the demo performer" : !o.input_file.empty() ? "file " + o.input_file : "";
    take_context.root = o.root;
    take_context.a4_hz = o.a4_hz;
    take_context.targets = o.target.empty() ? o.targets : "";
    take_context.target = o.target;
    take_context.voices = o.voices;
    auto start_take = [&](double rate_hz) {
        take = std::make_unique<TakeRecording>(engine, take_path, take_context, rate_hz, 1);
        std::fprintf(stderr, "beatless: recording to %s\n", take_path.c_str());
    };
    auto end_take = [&] {
        if (take) std::fprintf(stderr, "beatless: %s\n", take->stop().c_str());
    };
    if (o.record && !device_input) start_take(o.demo ? audio::DemoConfig{}.sample_rate_hz : file_rate_hz);

    std::unique_ptr<MidiSession> midi;
    if (!o.midi_out.empty() || !o.midi_in.empty()) {
        MidiSessionConfig mc;
        mc.out_port = o.midi_out;
        mc.in_port = o.midi_in;
        mc.retune = parse_midi_retune(o.midi_tuning);
        mc.bend_range_semitones = o.bend_range;
        mc.fifth = o.fifth;
        mc.octave = o.octave;
        mc.a4_hz = o.a4_hz;
        midi = std::make_unique<MidiSession>(mc, root_hz, targets,
                                             o.target.empty() ? std::nullopt : std::optional<std::size_t>(0));
        std::fprintf(stderr, "beatless: %s\n", midi->describe().c_str());
    }
    auto poll_midi = [&] {
        if (!midi) return;
        std::vector<std::string> lines;
        const MidiSession::Change c = midi->poll(lines);
        for (const auto& l : lines) std::fprintf(stderr, "beatless: %s\n", l.c_str());
        if (c.root_hz) {
            ds.root_hz = *c.root_hz;
            rc.root_hz = *c.root_hz;
            engine.set_drone(ds);
            engine.set_readings(rc, targets);
        }
    };

    TargetText tt{&targets};
    std::uint64_t printed = 0;
    double last_text_t = -1.0;
    auto emit = [&](const pitch::Reading& r) {
        if (o.seconds > 0.0 && r.t_s > o.seconds) return;
        if (printing == Printing::json) {
            std::fputs(json_line(r, tt).c_str(), stdout);
            std::fputc('\n', stdout);
        } else {
            if (r.t_s - last_text_t < 0.25) return;
            last_text_t = r.t_s;
            std::printf("%s\n", text_line(r, tt, o.a4_hz).c_str());
        }
        ++printed;
    };

    DuoText dt;
    dt.set = &targets;
    dt.root_hz = root_hz;
    dt.judge_root = o.drone;
    dt.in_tune_cents = o.in_tune_cents;
    auto emit_duo = [&](const pitch::TwoVoiceFrame& f) {
        if (o.seconds > 0.0 && f.t_s > o.seconds) return;
        if (printing == Printing::json) {
            std::fputs(json_line(f, dt).c_str(), stdout);
            std::fputc('\n', stdout);
        } else {
            if (f.t_s - last_text_t < 0.25) return;
            last_text_t = f.t_s;
            std::printf("%s\n", text_line(f, dt, o.a4_hz).c_str());
        }
        ++printed;
    };
    pitch::TwoVoiceFrame duo_buf[256];
    auto drain = [&] {
        pitch::Reading buf[512];
        if (o.voices == 2) {
            for (std::size_t k; (k = engine.take_readings(std::span<pitch::TwoVoiceFrame>(duo_buf))) > 0;)
                for (std::size_t i = 0; i < k; ++i) emit_duo(duo_buf[i]);
        } else {
            for (std::size_t k; (k = engine.take_readings(std::span<pitch::Reading>(buf))) > 0;)
                for (std::size_t i = 0; i < k; ++i) emit(buf[i]);
        }
    };

    if (o.fast) {
        std::fprintf(stderr, "beatless: analyzing %s as fast as possible\n", what.c_str());
        if (o.voices == 2)
            engine.run_fast(std::function<void(const pitch::TwoVoiceFrame&)>(emit_duo), o.seconds);
        else
            engine.run_fast(std::function<void(const pitch::Reading&)>(emit), o.seconds);
    } else {
        g_interrupted.store(false);
        std::signal(SIGINT, on_sigint);
        std::signal(SIGTERM, on_sigint);
        engine.start();
        if (o.record && device_input) {
            take_context.device = engine.input_name();
            start_take(engine.sample_rate_hz());
        }
        std::fprintf(stderr, "beatless: listening to %s at %s Hz; root %s, targets %s%s\n", what.c_str(),
                     pitch::format_trimmed(engine.sample_rate_hz(), 0).c_str(), root_echo(o.root, root_hz).c_str(),
                     targets.id.c_str(),
                     !o.drone               ? ""
                     : o.input_file.empty() ? ", drone on"
                                            : ", the recording's drone removed");
        if (device_input) {
            const audio::StreamInfo si = engine.input_info();
            std::fprintf(stderr, "beatless: %s; chosen as %s\n",
                         stream_text("input", si.input_name, si, si.input_latency_s).c_str(), input_why.c_str());
        }
        if (engine.output_info().sample_rate_hz > 0) {
            const audio::StreamInfo so = engine.output_info();
            std::fprintf(stderr, "beatless: %s; chosen as %s\n",
                         stream_text("output", so.output_name, so, so.output_latency_s).c_str(), output_why.c_str());
        }
        // --seconds counts audio heard; with a device that goes away the clock
        // ends the run too, a little after the same time (kLateS), so it ends on time either way.
        constexpr double kLateS = 1.0;
        const auto started = std::chrono::steady_clock::now();
        while (!g_interrupted.load()) {
            drain();
            std::fflush(stdout);
            engine.supervise();
            poll_midi();
            if (take && take->stopped_early()) {
                end_take();
                take.reset();
            }
            if (o.seconds > 0.0 && engine.stream_time_s() >= o.seconds + 0.1) break;
            if (o.seconds > 0.0 && device_input &&
                std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count() >=
                    o.seconds + kLateS) {
                std::fprintf(stderr,
                             "beatless: %s s passed with %.2f s of audio heard; the input was missing for the rest\n",
                             pitch::format_trimmed(o.seconds + kLateS, 2).c_str(), engine.stream_time_s());
                break;
            }
            if (engine.status().finished) {
                drain();
                break;
            }
            std::this_thread::sleep_for(std::chrono::milliseconds(20));
        }
        engine.stop();
        std::signal(SIGINT, SIG_DFL);
        std::signal(SIGTERM, SIG_DFL);
    }
    end_take();
    std::fflush(stdout);
    const audio::EngineStatus st = engine.status();
    std::fprintf(
        stderr,
        "beatless: %llu readings from %.2f s of audio; ring overflows %llu, device overflows %llu, underflows %llu; "
        "latency %.1f ms (max %.1f ms)\n",
        static_cast<unsigned long long>(printed), engine.stream_time_s(),
        static_cast<unsigned long long>(st.ring_overflow_events),
        static_cast<unsigned long long>(st.device_input_overflows),
        static_cast<unsigned long long>(st.device_output_underflows), 1000.0 * st.latency_s, 1000.0 * st.latency_max_s);
    return 0;
}

void add_live_options(CLI::App* sub, ListenOptions& o) {
    sub->add_option("--root", o.root, "Drone root as a note (A2) or in Hz (110); default A2");
    add_a4_option(*sub, o.a4_hz);
    sub->add_option("--targets", o.targets, "Target set: a built-in name (7-limit, tritones, ...) or a .toml file");
    sub->add_option("--target", o.target, "One fixed target instead of a set: 7/5, 600c, ...");
    sub->add_option("--seconds", o.seconds, "Stop after this much audio (default: until the end or Ctrl-C)");
    sub->add_option("--seed", o.seed, "Demo performer seed (default 7)");
}

}  // namespace

void register_listen(CLI::App& app, Runner& run) {
    auto o = std::make_shared<ListenOptions>();
    CLI::App* sub =
        app.add_subcommand("listen", "Listen live (device, --demo or --input-file) and print readings as JSON lines");
    add_live_options(sub, *o);
    sub->add_flag("--demo", o->demo, "Use the built-in demo performer instead of a microphone");
    sub->add_option("--input-file", o->input_file,
                    "Play this sound file through the live path instead of a microphone");
    sub->add_flag("--fast", o->fast, "With --input-file: as fast as possible instead of in real time");
    sub->add_option("--input", o->input_dev, "Input device: index or a unique part of its name (see beatless devices)");
    sub->add_option("--output", o->output_dev, "Output device for the drone: index or a unique part of its name");
    sub->add_flag("--drone", o->drone, "Play the drone (a file or the demo: the input holds the drone; it is removed)");
    sub->add_flag("--no-drone", o->no_drone, "No drone (the default)");
    sub->add_flag("--fifth", o->fifth, "Add the fifth (3/2) to the drone");
    sub->add_flag("--octave", o->octave, "Add the octave (2/1) to the drone");
    sub->add_option("--timbre", o->timbre, "Drone timbre: pure, soft, round, bright, hollow (default round)");
    sub->add_option("--level-db", o->level_db, "Drone level, RMS dBFS (-80 to -6, default -30)");
    sub->add_flag("--no-removal", o->no_removal, "Do not remove the drone's partials before tracking");
    sub->add_option("--rate", o->rate_hz, "Device sample rate to ask for (default: 48000, 44100 or the device's)");
    sub->add_option("--block", o->block, "Frames per audio callback to ask for (default 256)");
    sub->add_option("--hop-ms", o->hop_ms, "Time between readings in ms (default 5)");
    sub->add_option("--lowest", o->lowest, kLowestHelp);
    sub->add_option("--voices", o->voices,
                    "2: two voices in one input (a double stop, a duet): both pitches, the interval, its beat");
    CLI::Option* record =
        sub->add_option("--record", o->record_to,
                        "Record the input as a take: FILE.flac (a .toml with its context beside it), or into a folder; "
                        "alone: the data folder's takes/, named by date and time")
            ->expected(0, 1);
    sub->add_option("--octaves", o->octaves,
                    "With --voices 2: 'equivalent' matches the interval to a target in any octave (default), "
                    "'exact' only in the octave the set lists it");
    sub->add_option("--in-tune", o->in_tune_cents,
                    "With --voices 2: a deviation this small (cents) needs no move (default 5)");
    sub->add_option(
        "--midi-out", o->midi_out,
        "Play the drone (and a fixed --target) on this MIDI port, retuned exactly: number, name or part of it "
        "(see beatless devices)");
    sub->add_option(
        "--midi-tuning", o->midi_tuning,
        "How --midi-out retunes: mts (MIDI Tuning Standard, default) or bend (pitch bend per note, channels 2-16)");
    sub->add_option("--bend-range", o->bend_range,
                    "Pitch-bend range in semitones for --midi-tuning bend (1-24, default 2)");
    sub->add_option("--midi-in", o->midi_in,
                    "A MIDI keyboard: a key sets the root; a key held with the root's key, the target");
    sub->callback([o, &run, record] {
        o->record = record->count() > 0;
        run = [o] { return run_live(*o, Printing::json); };
    });
}

}  // namespace beatless::ui
