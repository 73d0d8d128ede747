// The screens' state without pixels: settings files (read back by Python's
// tomllib, an outside TOML parser), the beat pulse (phase arithmetic, the
// WCAG 2.1 three-flashes limit), hearing safety (caution before sound, the
// level capped at the limiter's -6 dBFS), root steps against the 12-TET
// formula f = 440 x 2^((m - 69)/12) (MIDI 69 = A4, ISO 16), settings saved
// after a change, and the keys of the help overlay driving the same state.
#include "tests/cli.h"
#include "ui/render/imgui_host.h"
#include "ui/screens/screen.h"
#include "ui/session/app_state.h"
#include "ui/session/beat_pulse.h"
#include "ui/session/settings.h"

#define GLFW_INCLUDE_NONE
#include <GLFW/glfw3.h>
#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <fstream>
#include <string>

using namespace beatless;
using beatless::test::TempDir;

namespace {

// Runs /usr/bin/python3 with tomllib on a file and prints one expression of `d`.
std::string toml_value(const std::string& file, const std::string& expr) {
    const std::string cmd = "/usr/bin/python3 -c \"import tomllib,sys; d=tomllib.load(open(sys.argv[1],'rb')); print(" +
                            expr + ")\" '" + file + "'";
    std::FILE* p = popen(cmd.c_str(), "r");
    REQUIRE(p != nullptr);
    std::string out;
    char buf[256];
    while (std::fgets(buf, sizeof buf, p)) out += buf;
    pclose(p);
    while (!out.empty() && (out.back() == '\n' || out.back() == '\r')) out.pop_back();
    return out;
}

ui::AppOptions sim_demo() {
    ui::AppOptions o;
    o.demo = true;
    o.simulated = true;
    o.save_settings = false;
    return o;
}

}  // namespace

TEST_CASE("settings: written, read back by Python's tomllib, and parsed again to the same values") {
    TempDir dir;
    ui::Settings s;
    s.screen = ui::ScreenId::practice;
    s.caution_acknowledged = true;
    s.a4_hz = 442.5;
    s.font_scale = 1.5f;
    s.in_tune_cents = 3.0;
    s.lowest_hz = 55.0;
    s.input_device = "USB \"Mic\" 2";
    s.root = "D3";
    s.timbre = audio::Timbre::bright;
    s.level_dbfs = -24.0;
    s.fifth = true;
    s.target_set = "tritones";
    s.midi_out = "Choir organ:in";
    s.midi_tuning = "bend";
    s.midi_in = "Director keys";
    const std::string file = dir.file("settings.toml");
    ui::save_settings(file, s);
    CHECK(toml_value(file, "d['midi_out']") == "Choir organ:in");
    CHECK(toml_value(file, "d['midi_tuning']") == "bend");
    CHECK(toml_value(file, "d['midi_in']") == "Director keys");
    CHECK(toml_value(file, "d['kind']") == "settings");
    CHECK(toml_value(file, "d['a4_hz']") == "442.5");
    CHECK(toml_value(file, "d['lowest_hz']") == "55");
    CHECK(toml_value(file, "d['input_device']") == "USB \"Mic\" 2");
    CHECK(toml_value(file, "d['drone']['root']") == "D3");
    CHECK(toml_value(file, "d['drone']['timbre']") == "bright");
    CHECK(toml_value(file, "d['drone']['level_dbfs']") == "-24");
    CHECK(toml_value(file, "d['drone']['fifth']") == "True");
    CHECK(toml_value(file, "d['targets']['set']") == "tritones");
    CHECK(toml_value(file, "d['caution_acknowledged']") == "True");
    const ui::LoadedSettings back = ui::load_settings(file);
    CHECK(back.warning.empty());
    CHECK(back.settings == s);
}

TEST_CASE("settings: a missing file is the defaults; a malformed one warns in one line with file and line") {
    TempDir dir;
    const ui::LoadedSettings none = ui::load_settings(dir.file("nothing.toml"));
    CHECK(none.warning.empty());
    CHECK(none.settings == ui::Settings{});
    CHECK(none.settings.level_dbfs == audio::kDroneStartLevelDbfs);
    CHECK_FALSE(none.settings.caution_acknowledged);

    // Syntax error: every value falls back.
    const auto bad = ui::parse_settings("kind = \"settings\"\na4_hz = 441\n[drone\n", "s.toml");
    CHECK(bad.warning.rfind("s.toml:3:", 0) == 0);
    CHECK(bad.settings == ui::Settings{});
    // Bad values: those fall back, the rest are kept; the first is named, the others counted.
    const auto some = ui::parse_settings(
        "kind = \"settings\"\na4_hz = 520\nfont_scale = 2\n[drone]\ntimbre = \"nasal\"\nfifth = 1\nroot = \"D3\"\n",
        "s.toml");
    CHECK(some.warning.rfind("s.toml:2: `a4_hz`: 520 is out of range", 0) == 0);
    CHECK(some.warning.find("and 2 more problems") != std::string::npos);
    CHECK(some.warning.find('\n') == std::string::npos);
    CHECK(some.settings.a4_hz == 440.0);
    CHECK(some.settings.font_scale == 2.0f);
    CHECK(some.settings.timbre == audio::Timbre::round);
    CHECK(some.settings.fifth == false);
    CHECK(some.settings.root == "D3");
    const auto low = ui::parse_settings("kind = \"settings\"\nlowest_hz = 10\n", "s.toml");
    CHECK(low.warning.rfind("s.toml:2: `lowest_hz`: 10 is out of range (30 to 200)", 0) == 0);
    CHECK(low.settings.lowest_hz == ui::kDefaultLowestHz);
    const auto midi = ui::parse_settings("kind = \"settings\"\nmidi_tuning = \"cents\"\n", "s.toml");
    CHECK(midi.warning.rfind("s.toml:2: `midi_tuning`: must be \"mts\" or \"bend\"", 0) == 0);
    CHECK(midi.settings.midi_tuning == "mts");
    // Another kind of file is refused as a whole.
    const auto other = ui::parse_settings("kind = \"targets\"\n", "t.toml");
    CHECK(other.warning.find("t.toml:1: `kind`: is \"targets\"") == 0);
    // The screen shown, the choice and the fixed target are a window's
    // transient state: an older file's keys are no longer read or written.
    const auto old = ui::parse_settings(
        "kind = \"settings\"\nscreen = \"drills\"\n[targets]\nchoice = \"fixed\"\nfixed = \"9/7\"\n", "s");
    CHECK(old.settings.screen == ui::ScreenId::practice);
    CHECK(old.settings.choice == ui::TargetChoice::nearest);
    CHECK(old.settings.fixed_target.empty());
    ui::Settings st;
    st.screen = ui::ScreenId::drills;
    st.choice = ui::TargetChoice::fixed;
    st.fixed_target = "9/7";
    const std::string text = ui::settings_toml(st);
    CHECK(text.find("screen") == std::string::npos);
    CHECK(text.find("fixed") == std::string::npos);
}

TEST_CASE(
    "beat view: the envelope of two equal partials b Hz apart is |cos(pi b t)| (sum-to-product; Helmholtz ch. VIII)") {
    ui::BeatPulse p;
    p.update(1.8, 0.0);
    CHECK(p.band() == pitch::BeatBand::countable);
    for (int i = 0; i < 60; ++i) p.update(1.8, 1.0 / 120.0);  // 0.5 s at 1.8 Hz = 0.9 beats
    CHECK(p.phase() == doctest::Approx(0.9).epsilon(1e-9));
    CHECK(p.envelope_ago(0.0) == doctest::Approx(std::fabs(std::cos(M_PI * 0.9))).epsilon(1e-9));
    // A quarter second back the phase was 0.45 beats: the envelope there, interpolated between frames.
    CHECK(p.envelope_ago(0.25) == doctest::Approx(std::fabs(std::cos(M_PI * 0.45))).epsilon(1e-6));
    CHECK(p.envelope_ago(0.253) == doctest::Approx(std::fabs(std::cos(M_PI * 1.8 * (0.5 - 0.253)))).epsilon(1e-6));
    // Silence records no envelope: it scrolls in as "no beat".
    for (int i = 0; i < 12; ++i) p.update(NAN, 1.0 / 120.0);
    CHECK(p.band() == pitch::BeatBand::none);
    CHECK(p.envelope_ago(0.0) < 0.0);
    CHECK(p.envelope_ago(0.2) >= 0.0);  // the beat before the silence is still in the history
    CHECK(p.envelope_ago(1000.0) < 0.0);
    p.update(0.1, 0.1);
    CHECK(p.band() == pitch::BeatBand::still);
    p.update(20.0, 0.1);
    CHECK(p.band() == pitch::BeatBand::rough);
}

TEST_CASE("beat rate at the vibrato centre: |q f_centre - p f_root| (Helmholtz), else the instantaneous rate") {
    pitch::Reading r;
    r.f0_hz = 310.0;
    r.root_hz = 220.0;
    r.beat_partial_root = 7;  // the target's own pair alone is no audible pair: nothing to show
    r.beat_partial_voice = 5;
    r.beat_hz = 12.0;
    CHECK(std::isnan(ui::cue_beat_hz(r)));
    r.heard_partial_root = 7;
    r.heard_partial_voice = 5;
    r.heard_beat_hz = 12.0;
    CHECK(ui::cue_beat_hz(r) == 12.0);
    r.centre_f0_hz = 220.0 * 1.4 * std::exp2(2.0 / 1200.0);
    CHECK(ui::cue_beat_hz(r) == doctest::Approx(7.0 * 220.0 * (std::exp2(2.0 / 1200.0) - 1.0)).epsilon(1e-9));
    r.f0_hz = 0.0;
    CHECK(std::isnan(ui::cue_beat_hz(r)));
}

TEST_CASE("hearing safety: no drone before the caution is acknowledged; the level is capped at the limiter's ceiling") {
    TempDir dir;
    ui::AppState app(ui::Settings{}, dir.file("settings.toml"), sim_demo());
    app.start();
    app.set_drone_on(true);
    CHECK_FALSE(app.drone_on());
    REQUIRE_FALSE(app.messages().empty());
    CHECK(app.messages().back().text.find("hearing caution") != std::string::npos);
    app.acknowledge_caution();
    app.set_drone_on(true);
    CHECK(app.drone_on());
    CHECK(app.settings().level_dbfs == audio::kDroneStartLevelDbfs);  // starts quiet: -30 dBFS
    app.set_drone_level(0.0);
    CHECK(app.settings().level_dbfs == audio::kDroneMaxLevelDbfs);
    CHECK(audio::kDroneMaxLevelDbfs == audio::kDroneCeilingDbfs);  // the control cannot go past the limiter
    app.set_drone_level(-200.0);
    CHECK(app.settings().level_dbfs == audio::kDroneMinLevelDbfs);
}

TEST_CASE("root steps follow 12-TET: A2 -> A#2 -> G2 (f = 440 x 2^((m-69)/12)); Hz roots move by 2^(1/12)") {
    TempDir dir;
    ui::AppState app(ui::Settings{}, dir.file("settings.toml"), sim_demo());
    CHECK(app.root_hz() == doctest::Approx(110.0));  // A2 = MIDI 45
    app.step_root(+1);
    CHECK(app.settings().root == "A#2");
    CHECK(app.root_hz() == doctest::Approx(440.0 * std::exp2((46 - 69) / 12.0)));
    app.step_root(-3);
    CHECK(app.settings().root == "G2");  // MIDI 43
    CHECK(app.set_root_text("150"));
    app.step_root(+2);
    CHECK(app.root_hz() == doctest::Approx(150.0 * std::exp2(2.0 / 12.0)).epsilon(1e-4));
    CHECK_FALSE(app.set_root_text("H9"));
    CHECK(app.root_hz() == doctest::Approx(150.0 * std::exp2(2.0 / 12.0)).epsilon(1e-4));
    app.set_a4(432.0);  // the note root follows the reference
    CHECK(app.set_root_text("A2"));
    CHECK(app.root_hz() == doctest::Approx(108.0));
}

TEST_CASE("readings flow in simulated time: the demo performer's note is the current reading, the trace fills") {
    TempDir dir;
    ui::AppOptions o = sim_demo();
    o.hold_dev_cents = 10.0;
    o.target = "7/5";
    o.root = "A3";
    ui::AppState app(ui::Settings{}, dir.file("settings.toml"), o);
    app.start();
    for (int i = 0; i < 120; ++i) app.update(1.0 / 60.0);
    REQUIRE(app.has_current());
    CHECK(app.target_ratio_text(app.current()) == "7/5");
    CHECK(app.current().dev_cents == doctest::Approx(10.0).epsilon(0.02));
    CHECK(app.trace().size() > 250);                        // 2 s at a 5 ms hop, less the breath before the note
    CHECK(app.pulse().band() == pitch::BeatBand::flutter);  // 7 x 220 x (2^(10/1200) - 1) = 8.9 Hz: 5 .. 15 Hz
}

TEST_CASE("settings are saved about a second after a change, and on shutdown") {
    TempDir dir;
    const std::string file = dir.file("settings.toml");
    ui::AppOptions o = sim_demo();
    o.save_settings = true;
    {
        ui::AppState app(ui::Settings{}, file, o);
        app.set_drone_level(-40.0);
        app.update(0.5);
        CHECK_FALSE(std::filesystem::exists(file));
        app.update(0.6);
        REQUIRE(std::filesystem::exists(file));
        CHECK(toml_value(file, "d['drone']['level_dbfs']") == "-40");
        app.set_target_set("tritones");
        app.step_target(+1);
    }
    CHECK(toml_value(file, "d['targets']['set']") == "tritones");  // a preference: kept
    // The fixed target is the window's transient state: not kept.
    CHECK(toml_value(file, "'choice' in d['targets'] or 'fixed' in d['targets']") == "False");
}

TEST_CASE("keys: Space needs the caution first; arrows move target and root; H opens the help") {
    TempDir dir;
    ui::AppState app(ui::Settings{}, dir.file("settings.toml"), sim_demo());
    ui::HostConfig hc;
    ui::ImGuiHost host(hc);
    ui::ScreenDeck deck(app);
    app.start();
    auto frame_with_key = [&](int key) {
        host.make_current();
        ImGuiIO& io = ImGui::GetIO();
        io.KeysDown[key] = true;
        host.new_frame(1.0f / 60.0f, hc.width_px, hc.height_px);
        app.update(1.0 / 60.0);
        deck.build_frame(1.0 / 60.0);
        host.render();
        io.KeysDown[key] = false;
        host.new_frame(1.0f / 60.0f, hc.width_px, hc.height_px);
        deck.build_frame(1.0 / 60.0);
        host.render();
    };
    frame_with_key(GLFW_KEY_SPACE);
    CHECK_FALSE(app.drone_on());
    app.acknowledge_caution();
    frame_with_key(GLFW_KEY_SPACE);
    CHECK(app.drone_on());
    frame_with_key(GLFW_KEY_SPACE);
    CHECK_FALSE(app.drone_on());
    const int before = app.fixed_index();
    frame_with_key(GLFW_KEY_RIGHT);
    CHECK(app.settings().choice == ui::TargetChoice::fixed);
    const int n = static_cast<int>(app.targets().targets.size());
    CHECK(app.fixed_index() == (before + 1) % n);
    frame_with_key(GLFW_KEY_LEFT);
    CHECK(app.fixed_index() == before);
    frame_with_key(GLFW_KEY_N);
    CHECK(app.settings().choice == ui::TargetChoice::nearest);
    frame_with_key(GLFW_KEY_UP);
    CHECK(app.settings().root == "A#2");
    frame_with_key(GLFW_KEY_DOWN);
    CHECK(app.settings().root == "A2");
    CHECK_FALSE(deck.help_open());
    frame_with_key(GLFW_KEY_H);
    CHECK(deck.help_open());
    frame_with_key(GLFW_KEY_ESCAPE);
    CHECK_FALSE(deck.help_open());
    frame_with_key(GLFW_KEY_TAB);
    CHECK(deck.current() == ui::ScreenId::drills);
    frame_with_key(GLFW_KEY_TAB);
    CHECK(deck.current() == ui::ScreenId::ensemble);
    frame_with_key(GLFW_KEY_TAB);
    CHECK(deck.current() == ui::ScreenId::review);
    frame_with_key(GLFW_KEY_TAB);
    CHECK(deck.current() == ui::ScreenId::settings);
    frame_with_key(GLFW_KEY_ESCAPE);
    CHECK(deck.current() == ui::ScreenId::practice);
}

TEST_CASE("screens: the five screens of the design are built, in tab order") {
    const auto ids = ui::built_screens();
    REQUIRE(ids.size() == 5);
    CHECK(ids[0] == ui::ScreenId::practice);
    CHECK(ids[1] == ui::ScreenId::drills);
    CHECK(ids[2] == ui::ScreenId::ensemble);
    CHECK(ids[3] == ui::ScreenId::review);
    CHECK(ids[4] == ui::ScreenId::settings);
    CHECK(ui::built_screen_keys() == "practice, drills, ensemble, review, settings");
    CHECK(ui::parse_screen_key("Drills") == ui::ScreenId::drills);
    CHECK_FALSE(ui::parse_screen_key("lobby").has_value());
}

TEST_CASE(
    "drills on the app state: caution first; the drill's drone never louder than the user's; the settings come back") {
    TempDir dir;
    ui::Settings st;
    st.level_dbfs = -36.0;  // the user keeps the drone quiet
    ui::AppState app(st, dir.file("settings.toml"), sim_demo());
    app.start();
    audio::DroneSettings drill;
    drill.on = true;
    drill.root_hz = 146.832;  // D3
    drill.fifth = true;
    drill.level_dbfs = -24.0;
    // Before the caution: no drill, no tone.
    CHECK_FALSE(app.begin_drill(drill));
    CHECK_FALSE(app.drill_active());
    CHECK_FALSE(app.drone_on());
    CHECK_FALSE(app.sound_tone(220.0, 1.0));
    app.acknowledge_caution();
    REQUIRE(app.begin_drill(drill));
    CHECK(app.drill_active());
    CHECK(app.drone_on());
    CHECK(app.root_hz() == doctest::Approx(146.832));
    for (int i = 0; i < 90; ++i) app.update(1.0 / 60.0);  // past the 1 s fade-in
    // The level: min(-24, -36) = -36 dBFS, the user's.
    CHECK(app.drone_sent().level_dbfs == doctest::Approx(-36.0));
    CHECK(app.drone_sent().fifth);
    CHECK(app.drone_sent().root_hz == doctest::Approx(146.832));
    // A tone asked for is carried in every later drone setting until rendered (never lost to a level change).
    CHECK_FALSE(app.sound_tone(220.0, 1.0));  // true only with an output device; the request is made all the same
    const std::uint32_t count = app.drone_sent().reference_count;
    app.set_drone_level(-40.0);
    CHECK(app.drone_sent().reference_count == count);
    CHECK(app.drone_sent().reference_hz == doctest::Approx(220.0));
    CHECK(app.drone_sent().level_dbfs == doctest::Approx(-40.0));
    // While it runs, the root and the targets are the drill's: changing them is refused with a message.
    CHECK_FALSE(app.set_root_text("E2"));
    CHECK(app.messages().back().text.find("a drill is running") != std::string::npos);
    CHECK(app.settings().root == "A2");
    pitch::TargetSet one;
    one.targets.push_back({pitch::parse_interval("7/5"), ""});
    app.set_drill_targets(one);
    for (int i = 0; i < 60; ++i) app.update(1.0 / 60.0);
    app.end_drill();
    CHECK_FALSE(app.drill_active());
    CHECK_FALSE(app.drone_on());  // it was off before the drill
    CHECK(app.root_hz() == doctest::Approx(110.0));
    CHECK_FALSE(app.drone_sent().fifth);
    CHECK(app.set_root_text("E2"));
}
