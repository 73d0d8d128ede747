// The screens from the command line: `beatless` (the window) and
// `beatless snapshot` (no window, no display: simulated time into a PNG).
//
//   beatless [--demo [--hold CENTS]] [--input DEV] [--output DEV] [--root NOTE|HZ]
//            [--a4 HZ] [--targets SET] [--target R] [--screen NAME] [--frames N]
//   beatless snapshot [--demo [--hold CENTS]] [--screen NAME] [--seconds S]
//            [--size WxH] [--scale F] [--drone] [--first-run] [--help-keys] --out FILE.png
//
// The window loads the performer's preferences (ui/session/settings.h), says on
// start which differ from the defaults, and saves them; a snapshot starts
// from the defaults and the command line alone unless given --settings FILE,
// so what a window left behind never changes its picture. With
// no display the window is not tried: one line says so and points to the
// commands that work without one (exit 1). A snapshot runs the very same
// AppState and ScreenDeck as the window, frame by frame at --fps, with the
// demo performer rendered in step (no audio thread, no devices), so the same
// command gives the same picture. It shows the screen as after the hearing
// caution was acknowledged unless --first-run is given.
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/measure/duo_advice.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/spelling.h"
#include "ui/commands/commands.h"
#include "ui/render/imgui_host.h"
#include "ui/render/png.h"
#include "ui/render/raster.h"
#include "ui/render/render_error.h"
#include "ui/render/window.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"
#include "ui/session/app_state.h"
#include "ui/session/drill_files.h"
#include "ui/session/json.h"
#include "ui/session/listener_model.h"
#include "ui/session/midi_link.h"
#include "ui/session/safe_file.h"
#include "ui/session/target_files.h"
#include "ui/session/usage_error.h"
#include "ui/session/wording.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <memory>

namespace beatless::ui {

namespace {

struct Loaded {
    Settings settings;
    std::filesystem::path file;
    bool can_save = true;
};

// Reads a settings file into l, printing its one warning line if any.
void read_settings_into(Loaded& l) {
    LoadedSettings got = load_settings(l.file);
    if (!got.warning.empty()) std::fprintf(stderr, "beatless: warning: %s\n", got.warning.c_str());
    l.settings = std::move(got.settings);
}

Loaded load_user_settings() {
    Loaded l;
    try {
        l.file = settings_path();
    } catch (const Error& e) {
        std::fprintf(stderr, "beatless: %s; settings are not saved\n", e.what());
        l.can_save = false;
        return l;
    }
    read_settings_into(l);
    return l;
}

// One line naming the preferences in effect that differ from the defaults.
void say_preferences(const Loaded& l) {
    const std::vector<std::string> changed = changed_preferences(l.settings);
    if (changed.empty()) return;
    std::string line;
    for (const std::string& c : changed) line += (line.empty() ? "" : ", ") + c;
    std::fprintf(stderr, "beatless: preferences from %s: %s\n", l.file.string().c_str(), line.c_str());
}

ScreenId screen_from(const std::string& key, ScreenId fallback) {
    if (key.empty()) return fallback;
    const auto id = parse_screen_key(key);
    const std::vector<ScreenId> built = built_screens();
    if (!id || std::find(built.begin(), built.end(), *id) == built.end())
        throw UsageError("--screen " + key + ": no such screen (choose from " + built_screen_keys() + ")");
    return *id;
}

void check_common(const ScreenCommand& c) {
    if (!c.listener.empty()) (void)parse_listener(c.listener, c.seed);
    if (c.hold_dev_cents && !(std::fabs(*c.hold_dev_cents) <= 600.0))
        throw Error("--hold " + pitch::format_trimmed(*c.hold_dev_cents, 2) + ": out of range (-600 to 600 cents)");
    if (c.hold_dev_cents && !c.demo) throw UsageError("--hold works with --demo only");
    if (c.demo && !c.input_device.empty()) throw UsageError("--demo and --input contradict each other; give one");
    if (c.voices != 1 && c.voices != 2) throw Error("--voices " + std::to_string(c.voices) + ": 1 or 2");
    if (c.voices == 2 && c.hold_dev_cents) throw UsageError("--hold works with one voice (the demo performer)");
    // Files named on the command line are checked before any window: a bad one stops the run (exit 1).
    if (!c.root.empty()) (void)pitch::parse_root(c.root, c.a4_hz.value_or(pitch::kDefaultA4Hz));
    if (!c.target_set.empty()) (void)load_target_set(c.target_set);
    if (!c.drill.empty()) (void)load_drill(c.drill);
    if (!c.take.empty()) {
        std::error_code ec;
        if (!std::filesystem::is_regular_file(c.take, ec)) throw Error(c.take + ": no such file");
    }
    if (c.review_note && *c.review_note < 1)
        throw Error("--note " + std::to_string(*c.review_note) + ": notes are numbered from 1");
    if (c.review_span_s && !(*c.review_span_s >= 0.5 && *c.review_span_s <= 36000.0))
        throw Error("--span " + pitch::format_trimmed(*c.review_span_s, 3) + ": out of range (0.5 to 36000 s)");
}

AppOptions options_of(const ScreenCommand& c) {
    AppOptions o;
    o.demo = c.demo;
    o.hold_dev_cents = c.hold_dev_cents;
    o.seed = c.seed;
    o.input_device = c.input_device;
    o.output_device = c.output_device;
    o.root = c.root;
    o.a4_hz = c.a4_hz;
    if (!c.lowest.empty()) o.lowest_hz = parse_lowest(c.lowest, c.a4_hz.value_or(440.0));
    o.target_set = c.target_set;
    o.target = c.target;
    o.drone = c.drone;
    o.drill = c.drill;
    o.listener = c.listener;
    o.log_file = c.log_file;
    o.record = c.record;
    o.take = c.take;
    o.review_note = c.review_note;
    o.review_span_s = c.review_span_s;
    o.voices = c.voices;
    return o;
}

// Two voices: the interval's verdict, both pitches, the beat (measured and predicted) and who should move.
std::string duo_verdict_json(const AppState& app) {
    const DuoVerdict& v = app.duo();
    static constexpr const char* kStates[] = {"idle", "live", "silent", "one_series", "uncertain"};
    JsonWriter j;
    j.begin_object();
    j.key("state").value(kStates[static_cast<int>(v.state)]);
    if (v.state == DuoState::one_series) j.key("blend").value(std::string(blend_key(v.blend)));
    if (v.known()) {
        const pitch::TwoVoiceFrame& f = v.pair;
        pitch::Reading r;
        r.target_index = f.target_index;
        r.target_octaves = f.target_octaves;
        j.key("voices").begin_array().value(f.f_low_hz, 4).value(f.f_high_hz, 4).end_array();
        j.key("target").value(app.target_ratio_text(r));
        j.key("dev_cents").value(f.dev_cents, 3);
        j.key("word").value(interval_word(f.dev_cents, app.settings().in_tune_cents));
        j.key("beat_hz").value(f.predicted_beat_hz, 3);
        j.key("measured_beat_hz").value(f.measured_beat_hz, 3);
        j.key("cue_beat_hz").value(v.beat_hz(), 3);
        const pitch::DuoAdvice a = pitch::advise_duo(f, app.targets(), app.drone_sounding() ? app.root_hz() : 0.0,
                                                     app.settings().in_tune_cents);
        j.key("move").value(move_words(a));
    }
    j.end_object();
    return j.str();
}

// The model the screen drew from, for tests and scripts: the one verdict.
std::string verdict_json(const AppState& app) {
    if (app.two_voices()) return duo_verdict_json(app);
    const Verdict& v = app.verdict();
    static constexpr const char* kStates[] = {"idle", "live", "silent", "uncertain", "unpitched"};
    JsonWriter j;
    j.begin_object();
    j.key("state").value(kStates[static_cast<int>(v.state)]);
    if (v.known()) {
        const Tuning t = tuning_of(v.dev_cents, app.settings().in_tune_cents);
        const pitch::NoteAboveRoot n = pitch::spell_hz_above_root(app.settings().root, v.f0_hz, app.settings().a4_hz);
        j.key("source").value(v.source == VerdictSource::centre ? "centre" : "instant");
        j.key("target").value(app.target_ratio_text(v.reading));
        j.key("dev_cents").value(v.dev_cents, 3);
        j.key("word").value(tuning_word(t));
        j.key("note").value(n.name);
        j.key("note_offset_cents").value(n.offset_cents, 3);
        j.key("f0_hz").value(v.f0_hz, 4);
        j.key("beat_hz").value(v.beat_hz, 3);
        j.key("instant_dev_cents").value(v.reading.dev_cents, 3);
    }
    j.end_object();
    return j.str();
}

bool have_display() {
    const char* x = std::getenv("DISPLAY");
    const char* w = std::getenv("WAYLAND_DISPLAY");
    return (x != nullptr && *x != '\0') || (w != nullptr && *w != '\0');
}

}  // namespace

void add_screen_options(CLI::App& app, ScreenCommand& c) {
    app.add_flag("--demo", c.demo, "Use the built-in demo performer instead of a microphone");
    app.add_option("--hold", c.hold_dev_cents,
                   "With --demo: the performer holds the chosen target this many cents off (no vibrato)");
    app.add_option("--seed", c.seed, "Demo performer seed (default 7)");
    app.add_option("--voices", c.voices,
                   "2: two voices in one input (double stops, a duet) on the Practice screen (V toggles), and hold "
                   "drills score the interval between them; with --demo the demo violinist plays double stops");
    app.add_option("--root", c.root, "Drone root as a note (A2) or in Hz (110); default from the settings (A2)");
    app.add_option("--a4", c.a4_hz, "A4 reference in Hz (400-480); default from the settings (440)");
    app.add_option(
        "--lowest", c.lowest,
        "Lowest note to track live: a note (A1) or Hz, 30-200; default from the settings (60, a cello's C; 55 "
        "for a bass voice, 38 for double bass)");
    app.add_option("--targets", c.target_set, "Target set: a built-in name (7-limit, tritones, ...) or a .toml file");
    app.add_option("--target", c.target, "Fix this target (7/5, 600c, ...); it joins the set when it is not in it");
    app.add_option("--screen", c.screen, "Screen to show: " + built_screen_keys());
    app.add_option("--take", c.take, "The Review screen opens this sound file (default: the newest take)");
    app.add_option("--drill", c.drill,
                   "Choose and start this drill on the Drills screen (a built-in name or a .toml file)");
    app.add_option(
        "--listener", c.listener,
        "Ear drills on the Drills screen: a simulated listener answers: perfect, guess, or its threshold in cents");
    app.add_option("--log", c.log_file,
                   "Practice log file (default: the data folder's; a snapshot writes none unless given)");
    app.add_flag("--record", c.record,
                 "Record a take from the start into the data folder's takes/ (R starts and stops one on the screens)");
}

void add_window_midi_options(CLI::App& app, ScreenCommand& c) {
    app.add_option("--midi-out", c.midi_out,
                   "Play the drone and the fixed target on this MIDI port, retuned exactly (default from the settings; "
                   "\"\" for none)");
    app.add_option("--midi-tuning", c.midi_tuning,
                   "How --midi-out retunes: mts (MIDI Tuning Standard) or bend (pitch bend per note)");
    app.add_option("--midi-in", c.midi_in,
                   "A MIDI keyboard: a key sets the root; a key held with the root's key, the target");
}

int run_screens(const ScreenCommand& c, int frames) {
    check_common(c);
    if (frames < 0) throw Error("--frames " + std::to_string(frames) + ": must not be negative");
    if (c.a4_hz) pitch::check_a4(*c.a4_hz);
    if (!have_display()) {
        std::fprintf(stderr,
                     "beatless: no display (DISPLAY is not set): the Practice screen needs one; without a window try "
                     "`beatless snapshot --demo --out practice.png` or `beatless listen --demo`\n");
        return 1;
    }
    Loaded l = load_user_settings();
    say_preferences(l);
    AppOptions o = options_of(c);
    o.save_settings = l.can_save;
    const ScreenId first =
        screen_from(c.screen, !c.drill.empty() && c.screen.empty() ? ScreenId::drills : l.settings.screen);
    AppState app(l.settings, l.file, o);
    ScreenDeck deck(app);
    deck.show(first);
    if (c.midi_tuning) (void)parse_midi_retune(*c.midi_tuning);  // a bad word stops before the window opens
    MidiLink midi(MidiOverride{c.midi_out, c.midi_tuning, c.midi_in});

    WindowConfig wc;
    wc.title = "Beatless";
    wc.max_frames = frames;
    wc.clear_color = palette::kBackground;
    wc.host.font_scale = app.settings().font_scale;
    bool started = false;
    WindowReport report;
    try {
        report = run_window(wc, [&](float dt_s) {
            if (!started) {
                started = true;
                app.start();
            }
            app.update(dt_s);
            midi.update(app);
            deck.build_frame(dt_s);
        });
    } catch (const RenderError& e) {
        app.shutdown();
        if (started) throw;
        throw Error(std::string(e.what()) + " (or `beatless listen --demo` for readings as text)");
    }
    app.shutdown();
    if (frames > 0)
        std::fprintf(stderr, "beatless: %d frames in %.2f s (%.1f frames/s)\n", report.frames, report.wall_s,
                     report.wall_s > 0 ? report.frames / report.wall_s : 0.0);
    return 0;
}

void register_snapshot(CLI::App& app, Runner& run) {
    struct Options {
        ScreenCommand c;
        double seconds = 4.0;
        std::string size = "1280x800";
        float scale = 1.0f;
        double fps = 60.0;
        bool first_run = false;
        bool help_keys = false;
        bool print_verdict = false;
        std::string settings_file;
        std::string out;
    };
    auto o = std::make_shared<Options>();
    CLI::App* sub = app.add_subcommand(
        "snapshot", "Render a screen in simulated time without a window and write the last frame as PNG");
    add_screen_options(*sub, o->c);
    sub->add_option("--seconds", o->seconds, "Simulated time before the picture is taken (default 4)");
    sub->add_option("--note", o->c.review_note, "Review screen: select this note of the take (from 1)");
    sub->add_option("--span", o->c.review_span_s, "Review screen: show this many seconds around the selected note");
    sub->add_option("--size", o->size, "Picture size in pixels, WIDTHxHEIGHT (default 1280x800)");
    sub->add_option("--scale", o->scale, "DPI scale: 2 for a high-density screen (default 1)");
    sub->add_option("--fps", o->fps, "Frames per simulated second (default 60)");
    sub->add_flag("--drone", o->c.drone, "Start the drone (in the simulation the demo's microphone hears it)");
    sub->add_flag("--first-run", o->first_run,
                  "Show the screen as on first run, before the hearing caution is acknowledged");
    sub->add_flag("--help-keys", o->help_keys, "Show the help overlay with the keys");
    sub->add_flag(
        "--print-verdict", o->print_verdict,
        "Also print, as one JSON line, the verdict the picture shows (state, source, cents, word, note, Hz, beat)");
    sub->add_option("--settings", o->settings_file,
                    "Take preferences from this settings file (default: none, the program's defaults)");
    sub->add_option("--out", o->out, "PNG file to write")->required();
    sub->callback([o, &run] {
        run = [o] {
            const ScreenCommand& c = o->c;
            check_common(c);
            if (c.a4_hz) pitch::check_a4(*c.a4_hz);
            int w = 0, h = 0;
            parse_size(o->size, w, h);
            if (!(o->scale >= 0.5f && o->scale <= 4.0f))
                throw Error("--scale " + pitch::format_trimmed(o->scale, 2) + ": out of range (0.5 to 4)");
            if (!(o->seconds >= 0.0 && o->seconds <= 600.0))
                throw Error("--seconds " + pitch::format_trimmed(o->seconds, 3) + ": out of range (0 to 600)");
            if (!(o->fps >= 10.0 && o->fps <= 240.0))
                throw Error("--fps " + pitch::format_trimmed(o->fps, 2) + ": out of range (10 to 240)");
            (void)check_output_path(o->out);  // refuse a device, folder or missing folder before rendering
            Loaded l;
            if (!o->settings_file.empty()) {
                l.file = o->settings_file;
                std::error_code ec;
                if (!std::filesystem::exists(l.file, ec)) throw Error(o->settings_file + ": no such settings file");
                read_settings_into(l);
            }
            l.can_save = false;
            if (!o->first_run) l.settings.caution_acknowledged = true;
            AppOptions ao = options_of(c);
            ao.simulated = true;
            ao.no_input = !c.demo;
            ao.save_settings = false;
            ao.log = !c.log_file.empty();
            const ScreenId first =
                screen_from(c.screen, !c.drill.empty() && c.screen.empty() ? ScreenId::drills : l.settings.screen);
            AppState app(l.settings, l.file, ao);
            ScreenDeck deck(app);
            deck.show(first);
            deck.set_help(o->help_keys);
            HostConfig hc;
            hc.width_px = w;
            hc.height_px = h;
            hc.dpi_scale = o->scale;
            hc.font_scale = app.settings().font_scale;
            ImGuiHost host(hc);
            Rasterizer raster;
            PixelBuffer buf;
            app.start();
            const int frames = std::max(2, static_cast<int>(std::lround(o->seconds * o->fps)));
            const double dt = o->seconds > 0.0 ? o->seconds / frames : 1.0 / o->fps;
            auto build = [&] {
                app.update(dt);
                deck.build_frame(dt);
            };
            for (int i = 0; i + 1 < frames; ++i) {  // ImGui settles its layout over these; only the last is drawn
                host.new_frame(static_cast<float>(dt), w, h);
                build();
                host.render();
            }
            render_offscreen(host, raster, buf, static_cast<float>(dt), build, palette::kBackground);
            app.shutdown();
            write_file_safely(o->out, encode_png(buf, o->out));
            std::printf("%s: %dx%d, %s screen after %s s of simulated time\n", o->out.c_str(), w, h,
                        std::string(screen_key(deck.current())).c_str(), pitch::format_trimmed(o->seconds, 3).c_str());
            if (o->print_verdict) std::printf("%s\n", verdict_json(app).c_str());
            return 0;
        };
    });
}

}  // namespace beatless::ui
