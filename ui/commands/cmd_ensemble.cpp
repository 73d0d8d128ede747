// beatless ensemble — the ensemble engine without a screen, for scripting.
//
//   beatless ensemble CHORD [--root NOTE|HZ] [--a4 HZ] [--reference drone|bass|best-fit]
//                     [--demo | --input-file FILE [--fast] | --input DEV]
//                     [--channels 1,2,3,4] [--names "S,A,T,B"] [--voices 4,3,2,1]
//                     [--seconds S] [--every S] [--format text|json]
//                     [--drone [--output DEV]] [--no-removal] [--seed N]
//
// Text: a line per player every --every seconds (default 0.5 s) while the
// chord sounds, then a per-player summary under the chosen reference: the
// median deviation of the vibrato centre, its spread, the share of time in
// tune (within --in-tune cents) and what went wrong (silent channel, same
// voice as another). JSON: one object per reading every --every seconds
// (default 0.1 s; 0 = every 5 ms reading), then one last object holding
// "summary". Messages about channels and devices go to stderr, one line each.
#include "audio/device.h"
#include "audio/engine.h"
#include "audio/sound_system.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "ui/commands/commands.h"
#include "ui/session/chord_files.h"
#include "ui/session/ensemble_plan.h"
#include "ui/session/json.h"
#include "ui/session/usage_error.h"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <csignal>
#include <cstdio>
#include <memory>
#include <optional>
#include <thread>

namespace beatless::ui {

namespace {

std::atomic<bool> g_stop{false};
extern "C" void on_stop_signal(int) { g_stop.store(true); }

struct EnsembleOptions {
    std::vector<std::string> chord;
    std::string root = "C3";
    double a4_hz = pitch::kDefaultA4Hz;
    std::string reference = "best-fit";
    bool demo = false;
    std::string input_file;
    bool fast = false;
    std::string input_dev;
    std::string output_dev;
    PlanLists lists;
    double seconds = 0.0;
    std::optional<double> every_s;  // empty: the format's default
    double in_tune_cents = 5.0;
    Format format = Format::text;
    bool drone = false;
    bool no_removal = false;
    std::uint64_t seed = 11;
};

const char* state_key(pitch::PlayerState s) {
    switch (s) {
        case pitch::PlayerState::sounding: return "sounding";
        case pitch::PlayerState::resting: return "resting";
        case pitch::PlayerState::silent: return "silent";
        case pitch::PlayerState::copy: return "copy";
        case pitch::PlayerState::off_voice: return "other_note";
    }
    return "resting";
}

std::string signed1(double v) {
    char b[32];
    std::snprintf(b, sizeof b, "%+.1f", v);
    return b;
}

// Per-player figures over the run, under the chosen reference.
struct Tally {
    std::vector<double> devs;  // centre deviations while sounding
    std::size_t frames = 0, silent = 0, copy = 0, other = 0;
    int copy_of = -1;
    std::vector<std::size_t> near;  // per chord voice: frames on another note near it
    bool warned = false;            // the far-from-assigned warning was printed
    int most_near() const {         // the voice most often sat near; -1 none
        const auto it = std::max_element(near.begin(), near.end());
        return it == near.end() || *it == 0 ? -1 : static_cast<int>(it - near.begin());
    }
};

// Sustained this long near another voice, a player is warned (0.5 s, common practice).
constexpr double kNearWarnS = 0.5;

double median(std::vector<double> v) {
    if (v.empty()) return NAN;
    std::sort(v.begin(), v.end());
    const std::size_t n = v.size();
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

double quantile(std::vector<double> v, double q) {
    if (v.empty()) return NAN;
    std::sort(v.begin(), v.end());
    const double pos = q * static_cast<double>(v.size() - 1);
    const auto i = static_cast<std::size_t>(pos);
    const double f = pos - static_cast<double>(i);
    return i + 1 < v.size() ? v[i] * (1 - f) + v[i + 1] * f : v[i];
}

int run_ensemble(const EnsembleOptions& o) {
    const int sources = (o.demo ? 1 : 0) + (o.input_file.empty() ? 0 : 1) + (o.input_dev.empty() ? 0 : 1);
    if (sources > 1) throw UsageError("choose one input: --demo, --input-file or --input");
    if (o.fast && o.input_file.empty()) throw UsageError("--fast works with --input-file only");
    if (!(o.seconds >= 0.0 && o.seconds <= 24 * 3600.0))
        throw Error("--seconds " + pitch::format_trimmed(o.seconds, 3) + ": out of range (0 to 86400)");
    if (o.every_s && !(*o.every_s >= 0.0 && *o.every_s <= 60.0))
        throw Error("--every " + pitch::format_trimmed(*o.every_s, 3) + ": out of range (0 to 60 s)");
    if (!(o.in_tune_cents >= 1.0 && o.in_tune_cents <= 25.0))
        throw Error("--in-tune " + pitch::format_trimmed(o.in_tune_cents, 2) + ": out of range (1 to 25 cents)");
    pitch::check_a4(o.a4_hz);
    const pitch::ChordReference ref = pitch::parse_reference(o.reference);
    const ChordFile chord = chord_from_argument(join_args(o.chord));
    const double root_hz = pitch::parse_root(o.root, o.a4_hz);
    const std::vector<pitch::Player> players = plan_players(chord, o.lists);

    audio::EnsembleSetup setup;
    setup.chord = chord.chord;
    setup.players = players;
    setup.analysis.root_hz = root_hz;
    setup.analysis.a4_hz = o.a4_hz;
    audio::DroneSettings ds;
    ds.on = o.drone;
    ds.root_hz = root_hz;
    audio::check_drone_settings(ds);

    audio::EngineConfig ec;
    ec.drone_removal = !o.no_removal;
    const bool device_input = !o.demo && o.input_file.empty();
    const bool play_drone = o.drone && !o.fast && (device_input || !o.output_dev.empty());
    std::unique_ptr<audio::AudioSystem> system;
    if (device_input || play_drone) system = audio::make_sound_system();
    audio::Engine engine(ec, system.get());
    engine.on_message([](const std::string& m) { std::fprintf(stderr, "beatless: %s\n", m.c_str()); });
    engine.set_ensemble(setup);
    if (o.demo) {
        audio::DemoEnsembleConfig dc;
        dc.seed = o.seed;
        engine.use_demo(dc);
    } else if (!o.input_file.empty()) {
        engine.use_file(o.input_file);
        engine.set_input_has_drone(o.drone);
    } else {
        engine.open_input_device(o.input_dev);
    }
    if (play_drone) {
        engine.open_output_device(o.output_dev);
        std::fprintf(stderr,
                     "beatless: caution: the drone is a sustained tone; keep the level low, especially on headphones, "
                     "and take breaks\n");
    }
    engine.set_drone(ds);

    const double every = o.every_s ? *o.every_s : o.format == Format::json ? 0.1 : 0.5;
    std::vector<Tally> tally(players.size());
    for (Tally& t : tally) t.near.assign(chord.chord.size(), 0);
    double next_print = 0.0;
    const std::size_t np = players.size();
    std::vector<std::string> ratio_text;
    for (const auto& p : players) ratio_text.push_back(chord.chord.voice_ratio(p.voice).str());

    auto print_json = [&](const pitch::EnsembleReading& r) {
        JsonWriter j;
        j.begin_object().key("t").value(r.t_s, 4).key("reference").value(pitch::reference_key(ref));
        j.key("root_hz").value(r.root_hz[pitch::reference_index(ref)], 4);
        j.key("roots").begin_object();
        for (pitch::ChordReference k :
             {pitch::ChordReference::fixed_root, pitch::ChordReference::sounding_bass, pitch::ChordReference::best_fit})
            j.key(pitch::reference_key(k)).value(r.root_hz[pitch::reference_index(k)], 4);
        j.end_object().key("players").begin_array();
        for (std::size_t i = 0; i < np; ++i) {
            const pitch::PlayerReading& p = r.p[i];
            j.begin_object().key("name").value(players[i].name).key("channel").value(players[i].channel + 1);
            j.key("voice")
                .value(static_cast<int>(players[i].voice + 1))
                .key("ratio")
                .value(ratio_text[i])
                .key("octaves")
                .value(p.octaves);
            j.key("state").value(state_key(p.state));
            if (p.copy_of >= 0)
                j.key("same_as_channel").value(players[static_cast<std::size_t>(p.copy_of)].channel + 1);
            else
                j.key("same_as_channel").null();
            j.key("f0_hz");
            if (p.f0_hz > 0.0)
                j.value(p.f0_hz, 3);
            else
                j.null();
            j.key("centre_hz").value(p.centre_f0_hz, 3);
            j.key("dev_cents").value(r.dev(i, ref, false), 2).key("centre_dev_cents").value(r.dev(i, ref, true), 2);
            j.key("level_dbfs").value(p.level_dbfs, 1).end_object();
        }
        j.end_array().key("beats").begin_array();
        for (std::size_t a = 0; a < np; ++a)
            for (std::size_t b = a + 1; b < np; ++b) {
                const pitch::PairBeat& pb = r.pair(a, b);
                if (pb.partial_a < 0) continue;
                j.begin_object()
                    .key("channels")
                    .begin_array()
                    .value(players[a].channel + 1)
                    .value(players[b].channel + 1)
                    .end_array();
                j.key("partials")
                    .begin_array()
                    .value(static_cast<int>(pb.partial_a))
                    .value(static_cast<int>(pb.partial_b))
                    .end_array();
                j.key("beat_hz").value(pb.beat_hz, 3).end_object();
            }
        j.end_array().end_object();
        std::printf("%s\n", j.str().c_str());
    };
    auto print_text = [&](const pitch::EnsembleReading& r) {
        std::string line;
        char head[32];
        std::snprintf(head, sizeof head, "t %6.2f s ", r.t_s);
        line = head;
        for (std::size_t i = 0; i < np; ++i) {
            const pitch::PlayerReading& p = r.p[i];
            line += " " + players[i].name + " ";
            const double d = r.dev(i, ref);
            if (p.state == pitch::PlayerState::sounding && std::isfinite(d))
                line += signed1(d);
            else
                line += "(" + std::string(player_state_word(p.state)) + ")";
        }
        std::printf("%s\n", line.c_str());
    };
    bool any_sound = false;
    auto take = [&](const pitch::EnsembleReading& r) {
        if (o.seconds > 0.0 && r.t_s > o.seconds) return;
        for (std::size_t i = 0; i < np; ++i) {
            const pitch::PlayerReading& p = r.p[i];
            Tally& t = tally[i];
            ++t.frames;
            if (p.state == pitch::PlayerState::sounding && std::isfinite(r.dev(i, ref)))
                t.devs.push_back(r.dev(i, ref));
            if (p.state == pitch::PlayerState::silent) ++t.silent;
            if (p.state == pitch::PlayerState::copy) {
                ++t.copy;
                t.copy_of = p.copy_of;
            }
            if (p.state == pitch::PlayerState::off_voice) ++t.other;
            if (p.state == pitch::PlayerState::off_voice && p.near_voice >= 0) {
                const std::size_t v = static_cast<std::size_t>(p.near_voice);
                if (++t.near[v] * ec.hop_s >= kNearWarnS && !t.warned) {
                    t.warned = true;
                    std::fprintf(stderr,
                                 "beatless: %s is singing near %s, assigned %s (a list of names is read top voice "
                                 "first; %s=%s assigns it)\n",
                                 players[i].name.c_str(), chord.chord.voice_ratio(v).str().c_str(),
                                 ratio_text[i].c_str(), players[i].name.c_str(),
                                 chord.chord.voice_ratio(v).str().c_str());
                }
            }
        }
        bool sounds = false;
        for (std::size_t i = 0; i < np; ++i) sounds = sounds || r.p[i].state == pitch::PlayerState::sounding;
        any_sound = any_sound || sounds;
        if (r.t_s + 1e-9 < next_print) return;
        if (o.format == Format::text && !sounds) return;
        next_print = r.t_s + every;
        if (o.format == Format::json)
            print_json(r);
        else
            print_text(r);
    };

    std::fprintf(stderr, "beatless: ensemble %s on %s Hz (%s), %zu players from %s; reference %s\n",
                 chord.chord.terms_text().c_str(), pitch::format_trimmed(root_hz, 3).c_str(), o.root.c_str(), np,
                 engine.input_name().c_str(), std::string(pitch::reference_key(ref)).c_str());
    std::string who;
    for (std::size_t i = 0; i < np; ++i)
        who +=
            (i ? ", " : "") + players[i].name + "=" + ratio_text[i] + " ch " + std::to_string(players[i].channel + 1);
    std::fprintf(stderr, "beatless: players: %s\n", who.c_str());
    if (o.fast) {
        engine.run_fast(take, o.seconds);
        engine.supervise();
    } else {
        g_stop.store(false);
        std::signal(SIGINT, on_stop_signal);
        std::signal(SIGTERM, on_stop_signal);
        engine.start();
        std::vector<pitch::EnsembleReading> buf(128);
        while (!g_stop.load()) {
            for (std::size_t k; (k = engine.take_readings(buf)) > 0;)
                for (std::size_t i = 0; i < k; ++i) take(buf[i]);
            std::fflush(stdout);
            engine.supervise();
            if (o.seconds > 0.0 && engine.stream_time_s() >= o.seconds + 0.1) break;
            if (engine.status().finished) {
                for (std::size_t k; (k = engine.take_readings(buf)) > 0;)
                    for (std::size_t i = 0; i < k; ++i) take(buf[i]);
                engine.supervise();
                break;
            }
            std::this_thread::sleep_for(std::chrono::milliseconds(20));
        }
        engine.stop();
        std::signal(SIGINT, SIG_DFL);
        std::signal(SIGTERM, SIG_DFL);
    }

    // The summary.
    const audio::EngineStatus st = engine.status();
    if (o.format == Format::json) {
        JsonWriter j;
        j.begin_object().key("summary").begin_object();
        j.key("chord")
            .value(chord.chord.terms_text())
            .key("root_hz")
            .value(root_hz, 4)
            .key("reference")
            .value(pitch::reference_key(ref));
        j.key("seconds").value(engine.stream_time_s(), 3).key("in_tune_cents").value(o.in_tune_cents, 2);
        j.key("players").begin_array();
        for (std::size_t i = 0; i < np; ++i) {
            const Tally& t = tally[i];
            const double in =
                t.devs.empty()
                    ? NAN
                    : static_cast<double>(std::count_if(t.devs.begin(), t.devs.end(),
                                                        [&](double d) { return std::fabs(d) <= o.in_tune_cents; })) /
                          static_cast<double>(t.devs.size());
            j.begin_object().key("name").value(players[i].name).key("channel").value(players[i].channel + 1);
            j.key("voice").value(static_cast<int>(players[i].voice + 1)).key("ratio").value(ratio_text[i]);
            j.key("median_dev_cents").value(median(t.devs), 2);
            j.key("spread_cents")
                .value(t.devs.size() > 1 ? 0.5 * (quantile(t.devs, 0.9) - quantile(t.devs, 0.1)) : NAN, 2);
            j.key("in_tune_share").value(in, 3);
            j.key("sounding_s").value(static_cast<double>(t.devs.size()) * ec.hop_s, 2);
            j.key("silent_s").value(static_cast<double>(t.silent) * ec.hop_s, 2);
            j.key("same_voice_s").value(static_cast<double>(t.copy) * ec.hop_s, 2);
            j.end_object();
        }
        j.end_array()
            .key("ring_overflows")
            .value(static_cast<std::int64_t>(st.ring_overflow_events))
            .end_object()
            .end_object();
        std::printf("%s\n", j.str().c_str());
    } else {
        std::printf("\n%s on %s = %.3f Hz, reference: %s; %.2f s of %s\n", chord.chord.terms_text().c_str(),
                    o.root.c_str(), root_hz, std::string(reference_title(ref)).c_str(), engine.stream_time_s(),
                    engine.input_name().c_str());
        std::size_t name_w = 6;
        for (const auto& p : players) name_w = std::max(name_w, p.name.size());
        std::printf("  %-*s %4s %6s %7s  %10s  %8s  %8s\n", static_cast<int>(name_w), "player", "ch", "voice", "ratio",
                    "median", "spread", "in tune");
        for (std::size_t i = 0; i < np; ++i) {
            const Tally& t = tally[i];
            const double med = median(t.devs);
            std::string word, note;
            if (std::isfinite(med)) word = std::fabs(med) <= o.in_tune_cents ? "in tune" : med > 0 ? "sharp" : "flat";
            if (t.silent > 0)
                note =
                    "silent channel for " + pitch::format_trimmed(static_cast<double>(t.silent) * ec.hop_s, 1) + " s";
            if (t.copy > 0)
                note = "same voice as channel " +
                       std::to_string(players[static_cast<std::size_t>(std::max(0, t.copy_of))].channel + 1) + " for " +
                       pitch::format_trimmed(static_cast<double>(t.copy) * ec.hop_s, 1) + " s";
            if (t.other > t.devs.size())
                note = t.most_near() >= 0
                           ? "mostly near " + chord.chord.voice_ratio(static_cast<std::size_t>(t.most_near())).str() +
                                 ", not its voice"
                           : "mostly another note than its voice";
            char med_s[32] = "-", spread_s[32] = "-", in_s[32] = "-";
            if (std::isfinite(med)) {
                std::snprintf(med_s, sizeof med_s, "%+.1f c", med);
                std::snprintf(spread_s, sizeof spread_s, "%.1f c",
                              0.5 * (quantile(t.devs, 0.9) - quantile(t.devs, 0.1)));
                const auto in = std::count_if(t.devs.begin(), t.devs.end(),
                                              [&](double d) { return std::fabs(d) <= o.in_tune_cents; });
                std::snprintf(in_s, sizeof in_s, "%.0f %%",
                              100.0 * static_cast<double>(in) / static_cast<double>(t.devs.size()));
            }
            std::printf("  %-*s %4d %6zu %7s  %10s  %8s  %8s  %s%s%s\n", static_cast<int>(name_w),
                        players[i].name.c_str(), players[i].channel + 1, players[i].voice + 1, ratio_text[i].c_str(),
                        med_s, spread_s, in_s, word.c_str(), note.empty() || word.empty() ? "" : "; ", note.c_str());
        }
        std::printf(
            "  median and spread (half the 10-90 %% range) of each vibrato centre while sounding; + is sharp.\n");
        if (!any_sound) std::printf("  (no player sounded)\n");
    }
    std::fprintf(stderr, "beatless: %llu readings from %.2f s of audio; ring overflows %llu, device overflows %llu\n",
                 static_cast<unsigned long long>(st.readings), engine.stream_time_s(),
                 static_cast<unsigned long long>(st.ring_overflow_events),
                 static_cast<unsigned long long>(st.device_input_overflows));
    return 0;
}

}  // namespace

void register_ensemble(CLI::App& app, Runner& run) {
    auto o = std::make_shared<EnsembleOptions>();
    CLI::App* sub = app.add_subcommand(
        "ensemble", "One microphone per player: each player's deviation from their voice of a just chord");
    sub->footer(
        "Deviations are measured under a reference the director chooses. Text prints a line per player every --every s "
        "and a\n"
        "summary (median, spread, time in tune); JSON prints one object per reading, {\"t\", \"reference\", "
        "\"root_hz\", \"roots\",\n"
        "\"players\": [{\"name\", \"channel\", \"voice\", \"ratio\", \"state\", \"centre_dev_cents\", ...}], "
        "\"beats\": [{\"channels\",\n"
        "\"partials\", \"beat_hz\"}]}, then one {\"summary\": ...}.\n"
        "Who sings what: player k is on channel k (or --channels). A plain --names list is read top voice first, as "
        "parts are\n"
        "listed in a score; name=ratio says each voice; --voices numbers them from the lowest. A player who sits near "
        "another\n"
        "voice than their own for half a second is named in a warning on stderr.");
    sub->add_option("CHORD", o->chord, "A chord: 4:5:6:7, \"1/1 5/4 3/2\", a built-in chord name or a .toml chord file")
        ->required();
    sub->add_option("--root", o->root, "Chord root (the drone) as a note (C3) or in Hz; default C3");
    add_a4_option(*sub, o->a4_hz);
    sub->add_option("--reference", o->reference,
                    "What deviations are measured against: drone (the fixed root), bass (the lowest voice as it "
                    "sounds) or best-fit "
                    "(the root needing the least total movement, least squares); default best-fit");
    sub->add_flag("--demo", o->demo, "Use the built-in demo ensemble instead of microphones");
    sub->add_option("--input-file", o->input_file,
                    "A multi-channel sound file, one channel per player, instead of a device");
    sub->add_flag("--fast", o->fast, "With --input-file: as fast as possible instead of in real time");
    sub->add_option("--input", o->input_dev,
                    "Multi-channel input device: index or a unique part of its name (see beatless devices)");
    sub->add_option("--output", o->output_dev, "Output device for the drone (with --drone)");
    sub->add_option("--channels", o->lists.channels,
                    "Input channel of each player, from 1: 1,2,3,4 (default 1, 2, ...)");
    sub->add_option("--names", o->lists.names,
                    "Players' names, top voice first as in a score: \"S,A,T,B\" over 4:5:6:7 sing 7/4, 3/2, 5/4, 1/1; "
                    "or each with its "
                    "voice: \"S=7/4,A=3/2,T=5/4,B=1/1\" (default the chord file's parts, or Voice N)");
    sub->add_option("--voices", o->lists.voices,
                    "Chord voice each player sings, 1 = lowest: 4,3,2,1 (default: from --names, else 1, 2, ...)");
    sub->add_option("--seconds", o->seconds, "Stop after this much audio (default: the end of the file, or Ctrl-C)");
    sub->add_option("--every", o->every_s,
                    "Seconds between printed readings (default 0.5 text, 0.1 JSON; 0 = every reading)");
    sub->add_option("--in-tune", o->in_tune_cents,
                    "Within this many cents counts as in tune in the summary (1-25, default 5)");
    sub->add_flag(
        "--drone", o->drone,
        "Play the drone at the root (a file or the demo: the input holds it); each microphone's drone is removed");
    sub->add_flag("--no-removal", o->no_removal, "Do not remove the drone's partials before tracking");
    sub->add_option("--seed", o->seed, "Demo ensemble seed (default 11)");
    add_format_option(*sub, o->format, {Format::text, Format::json});
    sub->callback([o, &run] { run = [o] { return run_ensemble(*o); }; });
}

}  // namespace beatless::ui
