// The Review screen drawn in-process: its takes listed newest first, a take opened, zoomed and a note selected; the
// trace and the note marks sit where the take's known numbers put them.
//
// Sources: the takes are generated (tests/mix_signals.h: a drone with 1/n partials and a voice whose vibrato is a
// sine in cents, common practice) and written as FLAC through the take writer with a sidecar; cents by Ellis (1885),
// 1200 log2(f / root). The screen's axes (ui/screens/screen_review.h ReviewView) map time and cents to pixels
// linearly; the checks read the rasterizer's own pixels back. Bars: a mark within 1.5 px of its true centre and of
// its true start and end (0.03 s, the analysis's own bar, tests/test_cli_analyze.cpp), in the colour of its state
// (ui/screens/palette.h: sharp orange, flat sky blue, in tune bluish green); the trace within 6 px of the voice's
// vibrato peak.
#include "audio/take_writer.h"
#include "tests/cli.h"
#include "tests/mix_signals.h"
#include "tests/take_fixture.h"
#include "ui/render/imgui_host.h"
#include "ui/render/png.h"
#include "ui/render/raster.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/screen_review.h"
#include "ui/screens/take_report.h"
#include "ui/screens/widgets.h"
#include "ui/session/app_state.h"
#include "ui/session/settings.h"
#include "ui/session/take_file.h"
#include "ui/session/take_words.h"

#include <doctest/doctest.h>

#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::testsig;

namespace {

constexpr double kFs = 44100.0;

// A take in `dir` named for `stem`, with its sidecar: the 7-limit set, root A2.
void write_take(const std::filesystem::path& dir, const std::string& stem, const Take& take) {
    beatless::test::write_test_take(dir, stem, take.samples, kFs, take.dur_s);
}

// A take over a drone in the data folder's takes/ (BEATLESS_HOME set by the caller), read as `voices`; its FLAC path.
std::string drone_take_in_home(const std::string& stem, const Take& take, int voices) {
    const std::filesystem::path takes = ui::takes_dir();
    std::filesystem::create_directories(takes);
    beatless::test::write_test_take(takes, stem, take.samples, kFs, take.dur_s, true, voices);
    return (takes / (stem + ".flac")).string();
}

struct ReviewRig {
    ui::AppState app;
    ui::ImGuiHost host;
    ui::Rasterizer raster;
    ui::PixelBuffer buf;
    std::unique_ptr<ui::Screen> screen = ui::make_review_screen();
    static ui::AppOptions options(int note, double span_s, bool simulated) {
        ui::AppOptions o;
        o.simulated = simulated;
        o.no_input = true;
        o.save_settings = false;
        o.review_note = note;
        o.review_span_s = span_s;
        return o;
    }
    static ui::HostConfig host_config() {
        ui::HostConfig hc;
        hc.width_px = 1280;
        hc.height_px = 800;
        return hc;
    }
    static ui::Settings settings() {
        ui::Settings s;
        s.caution_acknowledged = true;
        return s;
    }
    ReviewRig(int note, double span_s, bool simulated = true)
        : app(settings(), std::filesystem::temp_directory_path() / "beatless-never-written.toml",
              options(note, span_s, simulated)),
          host(host_config()) {
        app.start();
    }
    ~ReviewRig() { app.shutdown(); }
    void frames(int n) {
        constexpr double dt = 1.0 / 60.0;
        for (int i = 0; i < n; ++i)
            ui::render_offscreen(host, raster, buf, static_cast<float>(dt), [&] {
                app.update(dt);
                const ImVec2 disp = ImGui::GetIO().DisplaySize;
                const float u = ui::ui_unit();
                const float top = std::round(2.3f * u), status_h = std::round(1.9f * u);  // as the deck lays out
                screen->build(app, ui::ScreenArea{ImVec2(0, top), ImVec2(disp.x, disp.y - top - status_h)}, dt);
            });
    }
};

bool bright(std::uint32_t c) {
    const unsigned r = c & 0xFF, g = (c >> 8) & 0xFF, b = (c >> 16) & 0xFF;
    return r > 150 && g > 150 && b > 150;
}

}  // namespace

TEST_CASE("Review: takes newest first; a take opened, zoomed, a note selected; marks and trace where the numbers say") {
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    const std::filesystem::path takes = ui::takes_dir();
    std::filesystem::create_directories(takes);
    // 7/5 sung 9 c sharp, 3/2 12 c flat, 5/4 3 c sharp, an octave above A2 (mix_signals.h take_notes: vibrato
    // 20-45 c at 5-6.5 Hz); each is nearest its own target in the 7-limit set (10/7 and 9/7 are 26 and 46 c away).
    const Take newest = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 9.0}, {3.0 / 2.0, -12.0}, {5.0 / 4.0, 3.0}}, 41);
    const Take older = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 0.0}}, 43);
    write_take(takes, "2026-12-02_090000", older);
    write_take(takes, "2026-12-03_161502", newest);

    ReviewRig rig(2, 3.0);
    rig.frames(3);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.takes.size() == 2);
    CHECK(v.takes[0].rfind("2026-12-03 16:15", 0) == 0);
    CHECK(v.takes[1].rfind("2026-12-02 09:00", 0) == 0);
    REQUIRE(v.open);
    CHECK(v.title == "2026-12-03_161502.flac");
    CHECK(v.selected == 1);
    // Zoomed to 3 s around the second note.
    CHECK(std::fabs((v.t1_s - v.t0_s) - 3.0) < 1e-9);
    const Note& second = newest.notes[1];
    CHECK(std::fabs(0.5 * (v.t0_s + v.t1_s) - 0.5 * (second.start_s + second.end_s)) < 0.05);

    const std::uint32_t want_colour[] = {ui::palette::kSharp, ui::palette::kFlat, ui::palette::kInTune};
    REQUIRE(!v.marks.empty());
    bool saw_selected = false;
    for (const ui::ReviewMarkView& m : v.marks) {
        CAPTURE(m.note);
        REQUIRE(m.note >= 0);
        REQUIRE(m.note < 3);
        const Note& n = newest.notes[static_cast<std::size_t>(m.note)];
        const double truth_cents = 1200.0 * std::log2(n.centre_hz / 110.0);
        CHECK(std::fabs(m.y - v.y_of(truth_cents)) < 1.5);
        const float px_per_s = (v.plot_x1 - v.plot_x0) / static_cast<float>(v.t1_s - v.t0_s);
        if (n.start_s > v.t0_s) CHECK(std::fabs(m.x0 - v.x_of(n.start_s)) < 0.03f * px_per_s + 1.5f);
        if (n.end_s < v.t1_s) CHECK(std::fabs(m.x1 - v.x_of(n.end_s)) < 0.03f * px_per_s + 1.5f);
        CHECK(m.colour == want_colour[m.note]);
        // The bar's own pixels, a quarter in from its visible left end.
        const float a = std::max(m.x0, v.plot_x0), b = std::min(m.x1, v.plot_x1);
        const int x = static_cast<int>(a + 0.25f * (b - a)), y = static_cast<int>(std::floor(m.y));
        CHECK(rig.buf.at(x, y) == want_colour[m.note]);
        saw_selected = saw_selected || m.note == 1;
    }
    CHECK(saw_selected);

    // The trace: at a crest of the selected note's vibrato, the line passes the crest's pitch.
    const double centre_cents = 1200.0 * std::log2(second.centre_hz / 110.0);
    int crests = 0;
    for (int k = 0; k < 20; ++k) {
        // sin(2 pi rate u + phase) = 1 at u = (pi/2 - phase + 2 pi k) / (2 pi rate).
        const double u = (0.5 * M_PI - second.vib_phase + kTwoPi * k) / (kTwoPi * second.vib_rate_hz);
        const double t = second.start_s + u;
        if (u < 0.3 || t > second.end_s - 0.1 || t < v.t0_s || t > v.t1_s) continue;
        if (std::fabs(t - 0.5 * (second.start_s + second.end_s)) < 0.2) continue;  // under the deviation's label
        const double crest = centre_cents + note_offset_cents(second, t);
        const int x = static_cast<int>(std::round(v.x_of(t)));
        const int y = static_cast<int>(std::round(v.y_of(crest)));
        bool found = false;
        for (int dy = -6; dy <= 6 && !found; ++dy) found = bright(rig.buf.at(x, y + dy));
        CAPTURE(t);
        CHECK(found);
        ++crests;
    }
    CHECK(crests >= 3);
    unsetenv("BEATLESS_HOME");
}

TEST_CASE(
    "Review of a two-voice take: both voices' bars where their pitches say, each interval's deviation in its "
    "colour") {
    // Double stops (mix_signals.h held_dyads): 3/2 8 c wide over 196 Hz, 5/4 10 c narrow over 220 Hz, 4/3 in tune
    // over 247 Hz; recorded with --voices 2 (the sidecar says so). No drone: the reference is the sidecar's root,
    // A2 = 110 Hz, the marks in cents above it (Ellis 1885). Colours: wide as sharp (orange), narrow as flat (sky
    // blue), in tune (green).
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    const std::filesystem::path takes = ui::takes_dir();
    std::filesystem::create_directories(takes);
    std::vector<HeldDyad> dyads(3);
    dyads[0].f_low_hz = 196.0, dyads[0].off_cents = 8.0;
    dyads[1].p = 5, dyads[1].q = 4, dyads[1].f_low_hz = 220.0, dyads[1].off_cents = -10.0;
    dyads[2].p = 4, dyads[2].q = 3, dyads[2].f_low_hz = 247.0, dyads[2].off_cents = 0.0;
    const std::vector<float> x = held_dyads(kFs, dyads, 1.6, 0.5, 1e-3, 17);
    beatless::test::write_test_take(takes, "2026-12-03_170000", x, kFs, static_cast<double>(x.size()) / kFs, false, 2);
    ReviewRig rig(1, 0.0);
    rig.frames(3);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.open);
    REQUIRE(v.marks.size() == 3);
    const std::uint32_t want_colour[] = {ui::palette::kSharp, ui::palette::kFlat, ui::palette::kInTune};
    for (const ui::ReviewMarkView& m : v.marks) {
        CAPTURE(m.note);
        REQUIRE(m.note >= 0);
        REQUIRE(m.note < 3);
        const HeldDyad& d = dyads[static_cast<std::size_t>(m.note)];
        CHECK(std::fabs(m.y - v.y_of(1200.0 * std::log2(d.f_high_hz() / 110.0))) < 1.5);
        CHECK(std::fabs(m.y_low - v.y_of(1200.0 * std::log2(d.f_low_hz / 110.0))) < 1.5);
        CHECK(std::fabs(m.dev_cents - d.off_cents) < 0.5);  // the interval's deviation, within the review's 0.5 c bar
        CHECK(m.colour == want_colour[m.note]);
        const int px = static_cast<int>(0.5f * (m.x0 + m.x1)) + 20, py = static_cast<int>(std::floor(m.y));
        CHECK(rig.buf.at(px, py) == want_colour[m.note]);
        CHECK(std::fabs(m.x0 - v.x_of(d.start_s)) <
              0.05f * (v.plot_x1 - v.plot_x0) / static_cast<float>(v.t1_s - v.t0_s) + 1.5f);
    }
    CHECK(v.selected == 0);
    unsetenv("BEATLESS_HOME");
}

TEST_CASE("Review in real time: the list and the plot say 'reading' while the worker reads; then the take is there") {
    // A 40 s take takes the analysis much longer than it takes to draw one frame (analyze's bench: 1.3 s of CPU for
    // ten minutes): the first frame shows the list's row and the plot as being read; later ones, the take.
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    const std::filesystem::path takes = ui::takes_dir();
    std::filesystem::create_directories(takes);
    Take take = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 9.0}, {3.0 / 2.0, -12.0}}, 41);
    const std::vector<float> once = take.samples;
    while (take.samples.size() < static_cast<std::size_t>(40.0 * kFs))
        take.samples.insert(take.samples.end(), once.begin(), once.end());
    take.dur_s = static_cast<double>(take.samples.size()) / kFs;
    write_take(takes, "2026-12-03_161502", take);
    ReviewRig rig(0, 0.0, false);
    rig.frames(1);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.takes.size() == 1);
    CHECK(v.takes[0].find("reading\u2026") != std::string::npos);
    CHECK(!v.open);
    bool done = false;
    for (int i = 0; i < 3000 && !done; ++i) {  // up to a minute of frames
        rig.frames(1);
        done = v.open && v.takes[0].find("notes") != std::string::npos;
        if (!done) usleep(20000);
    }
    CHECK(done);
    CHECK(v.takes[0].find("reading") == std::string::npos);
    unsetenv("BEATLESS_HOME");
}

TEST_CASE("snapshot --screen review --take: a PNG; bad --take, --note and --span are refused with one line") {
    beatless::test::TempDir dir;
    const Take take = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 5.0}, {10.0 / 7.0, -4.0}}, 47);
    write_take(dir.path(), "2026-12-03_170000", take);
    const std::string flac = dir.file("2026-12-03_170000.flac");
    const std::vector<std::string> env = {"BEATLESS_HOME=" + dir.path()};
    const auto r = beatless::test::run_program(
        {"snapshot", "--screen", "review", "--take", flac, "--note", "2", "--span", "2", "--out", dir.file("r.png")},
        env);
    CHECK_MESSAGE(r.exit_code == 0, r.err);
    CHECK(std::filesystem::file_size(dir.file("r.png")) > 1000);
    const auto missing = beatless::test::run_program(
        {"snapshot", "--screen", "review", "--take", dir.file("none.flac"), "--out", dir.file("x.png")}, env);
    CHECK(missing.exit_code == 1);
    CHECK(missing.err == "beatless: " + dir.file("none.flac") + ": no such file\n");
    const auto zero =
        beatless::test::run_program({"snapshot", "--screen", "review", "--note", "0", "--out", dir.file("x.png")}, env);
    CHECK(zero.exit_code == 1);
    CHECK(zero.err == "beatless: --note 0: notes are numbered from 1\n");
    const auto span = beatless::test::run_program(
        {"snapshot", "--screen", "review", "--span", "0.1", "--out", dir.file("x.png")}, env);
    CHECK(span.exit_code == 1);
    CHECK(span.err == "beatless: --span 0.1: out of range (0.5 to 36000 s)\n");
}

TEST_CASE("a take's length: rounded to the nearest second alike in the takes list and in analyze") {
    // Rounding to the nearest whole second (common practice; half a second rounds up, as std::llround does), then
    // minutes and seconds as on a clock. The old list cut 11.984 s down to 0:11 while analyze said 12 s, and analyze
    // wrote 119.97 s as "1:60.0".
    CHECK(ui::duration_words(11.984) == "12 s");
    CHECK(ui::duration_words(11.4) == "11 s");
    CHECK(ui::duration_words(0.4) == "0 s");
    CHECK(ui::duration_words(59.6) == "1:00");
    CHECK(ui::duration_words(119.97) == "2:00");
    CHECK(ui::duration_words(754.5) == "12:35");
    CHECK(ui::duration_words(3599.6) == "1:00:00");
    CHECK(ui::duration_words(3725.2) == "1:02:05");
    CHECK(ui::duration_words(NAN) == "?");
    CHECK(ui::duration_words(-1.0) == "?");

    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    const std::filesystem::path takes = ui::takes_dir();
    std::filesystem::create_directories(takes);
    Take take = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 5.0}, {5.0 / 4.0, -3.0}}, 53);
    const double dur_s = 11.984;
    take.samples.resize(static_cast<std::size_t>(std::lround(dur_s * kFs)), 0.0f);  // the rest after the notes
    beatless::test::write_test_take(takes, "2026-12-03_180000", take.samples, kFs, dur_s);
    ReviewRig rig(1, 0.0);
    rig.frames(3);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.takes.size() == 1);
    CAPTURE(v.takes[0]);
    CHECK(v.takes[0].find(" | 12 s   7-limit | ") != std::string::npos);
    const auto r = beatless::test::run_program({"analyze", (takes / "2026-12-03_180000.flac").string()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    CHECK(r.out.find(": 12 s at 44100 Hz, one voice against a drone\n") != std::string::npos);
    unsetenv("BEATLESS_HOME");
}

TEST_CASE("Review of a two-voice take over a drone: intervals named in their octave; exported as analyze prints them") {
    // A voice an octave above 5/4 and 7/4 over a 110 Hz drone (mix_signals.h drone_and_voice, voice_octaves 1):
    // the intervals between the two are 5/2 and 7/2 (5/4 x 2/1, 7/4 x 2/1), named so as `listen --voices 2` names
    // them, never octave-reduced to 5/4 and 7/4.
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    const Take take = drone_and_voice(kFs, 110.0, {{5.0 / 4.0, 6.0}, {7.0 / 4.0, -4.0}}, 59);
    const std::string flac = drone_take_in_home("2026-12-03_190000", take, 2);
    ReviewRig rig(1, 0.0);
    rig.frames(3);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.open);
    REQUIRE(v.marks.size() == 2);
    CHECK(v.heading.rfind("Interval 1 of 2   ", 0) == 0);
    CHECK(v.against.rfind("against 5/2", 0) == 0);
    ui::review_select(*rig.screen, 1, 0.0);
    rig.frames(1);
    CHECK(v.heading.rfind("Interval 2 of 2   ", 0) == 0);
    CHECK(v.against.rfind("against 7/2", 0) == 0);

    const auto json = beatless::test::run_program({"analyze", flac, "--voices", "2", "--format", "json"});
    REQUIRE_MESSAGE(json.exit_code == 0, json.err);
    CHECK(beatless::test::json_words(json.out, "[n['target'] for n in d['intervals']]") ==
          std::vector<std::string>{"5/2", "7/2"});
    const auto text = beatless::test::run_program({"analyze", flac, "--voices", "2"});
    CHECK(text.out.find("  5/2  ") != std::string::npos);
    CHECK(text.out.find("  7/2  ") != std::string::npos);
    const auto csv = beatless::test::run_program({"analyze", flac, "--voices", "2", "--format", "csv"});

    // Export: the CSV and JSON beside the take are what analyze prints for it; the report page is a PNG of the
    // report's size (PNG signature and IHDR width and height, ISO/IEC 15948).
    ui::review_export(*rig.screen, rig.app);
    auto read = [](const std::filesystem::path& p) {
        std::ifstream in(p, std::ios::binary);
        return std::string(std::istreambuf_iterator<char>(in), {});
    };
    const std::filesystem::path takes = ui::takes_dir();
    CHECK(read(takes / "2026-12-03_190000.csv") == csv.out);
    CHECK(read(takes / "2026-12-03_190000.json") == json.out);
    const std::string png = read(takes / "2026-12-03_190000.report.png");
    REQUIRE(png.size() > 24);
    CHECK(png.substr(0, 8) == "\x89PNG\r\n\x1a\n");
    auto be32 = [&](std::size_t at) {
        return (static_cast<unsigned>(static_cast<unsigned char>(png[at])) << 24) |
               (static_cast<unsigned>(static_cast<unsigned char>(png[at + 1])) << 16) |
               (static_cast<unsigned>(static_cast<unsigned char>(png[at + 2])) << 8) |
               static_cast<unsigned>(static_cast<unsigned char>(png[at + 3]));
    };
    CHECK(be32(16) == static_cast<unsigned>(ui::kReportWidthPx));
    CHECK(be32(20) == static_cast<unsigned>(ui::kReportHeightPx));
    unsetenv("BEATLESS_HOME");
}

TEST_CASE("Review: every name of a target agrees, detail and Per target alike, on the screen and in analyze") {
    // Ratio arithmetic (common practice): 5/4 x 2/1 = 5/2 and 3/2 x 2/1 = 3/1. A voice over a 110 Hz drone (mix_signals.h
    // drone_and_voice, voice_octaves 1) at 5/4 x 2 and at 5/8 x 2: the intervals 5/2 (+6 c) and 5/4 (-4 c); read as
    // one voice, at 3/4 x 2 and 3/2 x 2: the notes 3/2 and 3/2 an octave up. Each summary row names the target its
    // notes were judged against, as their own lines do: never 5/4 for an interval the detail calls 5/2.
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    const std::filesystem::path takes = ui::takes_dir();
    std::filesystem::create_directories(takes);
    auto names = [](const std::string& json, const char* list) {
        std::vector<std::string> v = beatless::test::json_words(json, list);
        std::sort(v.begin(), v.end());
        return v;
    };
    {
        const Take duo = drone_and_voice(kFs, 110.0, {{5.0 / 4.0, 6.0}, {5.0 / 8.0, -4.0}}, 61);
        const std::string flac = drone_take_in_home("2026-12-04_100000", duo, 2);
        ReviewRig rig(1, 0.0);
        rig.frames(3);
        const ui::ReviewView& v = *ui::review_view(*rig.screen);
        REQUIRE(v.open);
        REQUIRE(v.marks.size() == 2);
        CHECK(v.against.rfind("against 5/2, ", 0) == 0);
        ui::review_select(*rig.screen, 1, 0.0);
        rig.frames(1);
        CHECK(v.against.rfind("against 5/4, ", 0) == 0);
        CHECK(v.summary_rows == std::vector<std::string>{"5/4", "5/2"});  // the lower octave first
        const auto json = beatless::test::run_program({"analyze", flac, "--voices", "2", "--format", "json"});
        REQUIRE_MESSAGE(json.exit_code == 0, json.err);
        const auto detail = names(json.out, "[n['target'] for n in d['intervals']]");
        CHECK(detail == std::vector<std::string>{"5/2", "5/4"});
        CHECK(names(json.out, "[s['target'] for s in d['summary']]") == detail);
        // Each row's words say its own deviation's sense: 5/4 held 4 c narrow, 5/2 6 c wide.
        CHECK(beatless::test::json_words(json.out,
                                         "[s['text'].split(' (')[0].split(' ')[0] + ':' + "
                                         "s['text'].split(' (')[0].split(' ')[-1] for s in d['summary']]") ==
              std::vector<std::string>{"5/4:narrow", "5/2:wide"});
        const auto text = beatless::test::run_program({"analyze", flac, "--voices", "2"});
        CHECK(text.out.find("\n  5/2 averages ") != std::string::npos);
        CHECK(text.out.find("\n  5/4 averages ") != std::string::npos);
        CHECK(text.out.find("wide (1 interval) - just major third + octave\n") != std::string::npos);
    }
    std::filesystem::remove_all(takes);
    std::filesystem::create_directories(takes);
    {
        const Take solo = drone_and_voice(kFs, 110.0, {{3.0 / 4.0, 3.0}, {3.0 / 2.0, -5.0}}, 62);
        const std::string flac = drone_take_in_home("2026-12-04_110000", solo, 1);
        ReviewRig rig(2, 0.0);
        rig.frames(3);
        const ui::ReviewView& v = *ui::review_view(*rig.screen);
        REQUIRE(v.open);
        REQUIRE(v.marks.size() == 2);
        CHECK(v.against == "against 3/2 +1oct, the nearest target");  // as analyze's target column says it
        CHECK(v.summary_rows == std::vector<std::string>{"3/2", "3/2 +1oct"});
        const auto text = beatless::test::run_program({"analyze", flac});
        REQUIRE_MESSAGE(text.exit_code == 0, text.err);
        CHECK(text.out.find("  3/2 +1oct   ") != std::string::npos);
        CHECK(text.out.find("\n  3/2 +1oct averages ") != std::string::npos);
        CHECK(text.out.find("\n  3/2 averages ") != std::string::npos);
        CHECK(text.out.find("flat (1 note) - perfect fifth\n") != std::string::npos);  // the 3/2 +1oct, 5 c flat
        const auto json = beatless::test::run_program({"analyze", flac, "--format", "json"});
        REQUIRE_MESSAGE(json.exit_code == 0, json.err);
        // A note's "target" is the set's ratio with its "target_octaves"; a summary row's the same pair.
        CHECK(names(json.out, "[n['target'] + ':' + str(n['target_octaves']) for n in d['notes']]") ==
              std::vector<std::string>{"3/2:0", "3/2:1"});
        CHECK(names(json.out, "[n['target'] + ':' + str(n['target_octaves']) for n in d['notes']]") ==
              names(json.out, "[s['target'] + ':' + str(s['target_octaves']) for s in d['summary']]"));
    }
    unsetenv("BEATLESS_HOME");
}

TEST_CASE("the remarks name a target in the octave it was matched at") {
    // 3/2 x 2/1 = 3/1 (common practice): a note an octave up meant as 3/2 is "meant 3/2 +1oct"; between two voices
    // the interval is "meant 3/1".
    const pitch::TargetSet set = target_set({"3/2", "4/3"});
    const int fifth = 0, fourth = 1;
    pitch::NoteJudgement j;
    j.meant_index = fifth;
    j.meant_octaves = 1;
    j.meant_dev_cents = -40.0;
    j.nearest.index = static_cast<std::size_t>(fourth);
    j.nearest.octaves = 1;
    j.nearest.dev_cents = 12.0;
    j.nearer_other = true;
    CHECK(ui::judgement_words(j, set, false) == "meant 3/2 +1oct, sung 40 c flat: that is 12 c from 4/3 +1oct");
    CHECK(ui::judgement_words(j, set, true) == "meant 3/1, sung 40 c narrow: that is 12 c from 8/3");
    j.meant_index = -1;
    j.nearer_other = false;
    j.between = true;
    CHECK(ui::judgement_words(j, set, false) == "between targets: 12 c sharp of 4/3 +1oct, the nearest");
}

TEST_CASE("Review: a note an octave up sits on a target line labelled in its octave, on the screen and in the report") {
    // Ratio arithmetic (common practice): 3/2 x 2/1 = 3/1, 1200 cents per octave (Ellis 1885). A voice over a 110 Hz
    // drone (mix_signals.h drone_and_voice, voice_octaves 1) at 3/4 x 2 and 3/2 x 2: the notes 3/2 (+3 c) and 3/2 an
    // octave up (-5 c), which `analyze` names "3/2" and "3/2 +1oct". Each note's mark lies on the line whose label
    // says the note's own name; the label's pixels are drawn where the view says.
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    const Take solo = drone_and_voice(kFs, 110.0, {{3.0 / 4.0, 3.0}, {3.0 / 2.0, -5.0}}, 62);
    const std::string flac = drone_take_in_home("2026-12-04_120000", solo, 1);
    const auto json = beatless::test::run_program({"analyze", flac, "--format", "json"});
    REQUIRE_MESSAGE(json.exit_code == 0, json.err);
    // Each note's target and octave, as analyze's target column names it ("3/2 +1oct").
    std::vector<std::string> names;
    for (const std::string& w :
         beatless::test::json_words(json.out, "[n['target'] + ':' + str(n['target_octaves']) for n in d['notes']]")) {
        const int oct = std::stoi(w.substr(w.find(':') + 1));
        names.push_back(w.substr(0, w.find(':')) +
                        (oct == 0 ? "" : (oct > 0 ? " +" : " ") + std::to_string(oct) + "oct"));
    }
    const auto text = beatless::test::run_program({"analyze", flac});
    REQUIRE_MESSAGE(text.exit_code == 0, text.err);
    CHECK(text.out.find("  3/2 +1oct   ") != std::string::npos);
    REQUIRE(names == std::vector<std::string>{"3/2", "3/2 +1oct"});

    ReviewRig rig(2, 0.0);
    rig.frames(3);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.open);
    REQUIRE(v.marks.size() == 2);
    if (const char* out = std::getenv("BEATLESS_TEST_PNG")) ui::write_png(std::string(out) + "-screen.png", rig.buf);
    for (const ui::ReviewMarkView& m : v.marks) {
        CAPTURE(m.note);
        const std::string& name = names[static_cast<std::size_t>(m.note)];
        // The line nearest the mark: within the note's deviation (5 c) plus 1.5 px, and labelled with its name.
        const ui::ReviewLineView* nearest = nullptr;
        for (const ui::ReviewLineView& ln : v.lines)
            if (!nearest || std::fabs(ln.y - m.y) < std::fabs(nearest->y - m.y)) nearest = &ln;
        REQUIRE(nearest != nullptr);
        const float px_per_cent = (v.plot_y1 - v.plot_y0) / static_cast<float>(v.cents_hi - v.cents_lo);
        CHECK(std::fabs(nearest->y - m.y) <= 5.5f * px_per_cent + 1.5f);
        CHECK(nearest->label == name);
        // The line's pixels at the plot's left edge (grey, brighter than the panel; the selected note's target is
        // drawn over in the current target's colour) and the label's ink in its box.
        const int lx = static_cast<int>(v.plot_x0) + 2, ly = static_cast<int>(std::floor(nearest->y));
        const std::uint32_t px = rig.buf.at(lx, ly), panel = rig.buf.at(lx, static_cast<int>(v.plot_y0) + 1);
        auto lum = [](std::uint32_t c) { return (c & 0xFF) + ((c >> 8) & 0xFF) + ((c >> 16) & 0xFF); };
        if (m.note == v.selected)
            CHECK(px == ui::palette::kCurrentTarget);
        else
            CHECK(lum(px) > lum(panel) + 60);
        int ink = 0;
        for (int yy = static_cast<int>(nearest->label_y0); yy < static_cast<int>(nearest->label_y1); ++yy)
            for (int xx = static_cast<int>(nearest->label_x0); xx < static_cast<int>(nearest->label_x1); ++xx)
                ink += bright(rig.buf.at(xx, yy)) ? 1 : 0;
        CHECK(ink > 20);
        // Every line labelled "3/2 +1oct" lies 1200 c above one labelled "3/2".
        if (m.note == 1) CHECK(std::fabs(nearest->cents - (1200.0 + 1200.0 * std::log2(3.0 / 2.0))) < 1e-6);
    }
    // No label names a target in another octave than its line's: the base line of "3/2" at 702 c, "+1oct" at 1902 c.
    for (const ui::ReviewLineView& ln : v.lines) {
        if (ln.label == "3/2") CHECK(std::fabs(ln.cents - 1200.0 * std::log2(1.5)) < 1e-6);
        if (ln.label.find("+1oct") != std::string::npos)
            CHECK(ln.cents > 1200.0 - 1e-6);
        else if (!ln.label.empty())
            CHECK(ln.cents < 1200.0 + 1e-6);
    }

    // The report page (analyze --report): the same names beside the same lines; each mark's bar on the line named
    // as the note is, and that line's pixels drawn.
    const ui::ReviewedTake r = ui::review_take(flac, "7-limit");
    REQUIRE(r.error.empty());
    const ui::ReportData d = ui::one_voice_report_data(r.set, r.analysis);
    const ui::ReportLayout l = ui::report_layout(d);
    const std::vector<ui::ReportLineLabel> labels = ui::report_line_labels(d, l);
    ui::PixelBuffer page;
    ui::render_report(d, page);
    if (const char* out = std::getenv("BEATLESS_TEST_PNG")) ui::write_png(std::string(out) + "-report.png", page);
    REQUIRE(d.marks.size() == 2);
    for (std::size_t i = 0; i < d.marks.size(); ++i) {
        CAPTURE(i);
        const float y = l.y_of(d.marks[i].cents);
        const ui::ReportLineLabel* nearest = nullptr;
        for (const ui::ReportLineLabel& a : labels)
            if (!nearest || std::fabs(a.line_y - y) < std::fabs(nearest->line_y - y)) nearest = &a;
        REQUIRE(nearest != nullptr);
        CHECK(std::fabs(nearest->line_y - l.y_of(d.marks[i].target_cents)) < 0.5f);
        CHECK(nearest->ratio == names[i]);
        // The target line (used: dark) in the plot, left of the first note.
        const int px = static_cast<int>(l.plot_x0) + 4, py = static_cast<int>(std::round(nearest->line_y));
        bool line = false;
        for (int dy = -1; dy <= 1; ++dy) line = line || page.at(px, py + dy) != ui::kReportPaper;
        CHECK(line);
    }
    unsetenv("BEATLESS_HOME");
}

TEST_CASE("a steady voice exactly on a drone partial is not lost: analyze and the Review screen say where it was") {
    // A 110 Hz drone (mix_signals.h add_tone, 1/n partials) under a voice holding 308 Hz (14/5, between the drone's
    // partials 2 and 3), then exactly 330 Hz (3 x 110, the drone's third partial: 3/1 = 3/2 +1oct, ratio arithmetic,
    // common practice), then 275 Hz (5/2), steady, 0.25 s rests. The comb x(t) - x(t - 1/110 s) (J. O. Smith,
    // "Feedforward Comb Filters") cancels any sound of period 1/(3 x 110) s: the second note leaves nothing to track,
    // but the raw level rises about 5 dB over the drone's while the comb's output does not. A voice between the
    // partials (308 and 275 Hz, whose upper partials do meet the drone's) is tracked and never flagged.
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    Take take;
    take.dur_s = 6.3;
    take.samples.assign(static_cast<std::size_t>(take.dur_s * kFs), 0.0f);
    add_tone(take.samples, kFs, 110.0, 0.0, take.dur_s, 0.15, rolloff(8), {0.3, 1.1, 2.0, 0.7, 2.9, 1.6, 0.2, 2.4});
    for (const auto& [t0, f] : {std::pair{0.4, 308.0}, {2.25, 330.0}, {4.1, 275.0}}) {
        Note n;
        n.start_s = t0;
        n.end_s = t0 + 1.6;
        n.centre_hz = f;
        n.level = 0.2;
        take.notes.push_back(n);
    }
    add_voice(take.samples, kFs, take.notes, {1.0, 0.6, 0.45, 0.3, 0.2, 0.15, 0.1, 0.08});
    add_noise(take.samples, 1e-3, 71);
    const std::string flac = drone_take_in_home("2026-12-04_130000", take, 1);

    const auto json = beatless::test::run_program({"analyze", flac, "--format", "json"});
    REQUIRE_MESSAGE(json.exit_code == 0, json.err);
    CHECK(beatless::test::json_words(json.out, "[round(n['f0_hz']) for n in d['notes']]") ==
          std::vector<std::string>{"308", "275"});
    CHECK(beatless::test::json_words(json.out, "[p['partial'] for p in d['on_drone_partials']]") ==
          std::vector<std::string>{"3"});
    // Where it sounded, within the tracker's 0.05 s (the notes' start and end bar, tests/test_cli_analyze.cpp).
    const std::vector<std::string> when =
        beatless::test::json_words(json.out, "[x for p in d['on_drone_partials'] for x in (p['start_s'], p['end_s'])]");
    REQUIRE(when.size() == 2);
    CHECK(std::fabs(std::stod(when[0]) - 2.25) < 0.05);
    CHECK(std::fabs(std::stod(when[1]) - 3.85) < 0.05);
    const auto text = beatless::test::run_program({"analyze", flac});
    REQUIRE_MESSAGE(text.exit_code == 0, text.err);
    CHECK(text.out.find("a steady voice on the drone's partial 3 (330 Hz, 3/2 +1oct) is hidden with the drone") !=
          std::string::npos);
    // Read as two voices, the drone is the low one: the same voice, named as the interval 3/1.
    const auto duo = beatless::test::run_program({"analyze", flac, "--voices", "2"});
    REQUIRE_MESSAGE(duo.exit_code == 0, duo.err);
    CHECK(duo.out.find("a steady voice on the drone's partial 3 (330 Hz, 3/1) is hidden with the drone") !=
          std::string::npos);

    // The screen: an outline at 3 x 110 Hz over the same stretch, and the line analyze prints.
    ReviewRig rig(1, 0.0);
    rig.frames(3);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.open);
    REQUIRE(v.hidden.size() == 1);
    REQUIRE(v.hidden_words.size() == 1);
    CHECK(text.out.find(v.hidden_words[0]) != std::string::npos);
    const ui::ReviewMarkView& h = v.hidden[0];
    CHECK(std::fabs(h.y - v.y_of(1200.0 * std::log2(3.0))) < 1.5);
    const float px_per_s = (v.plot_x1 - v.plot_x0) / static_cast<float>(v.t1_s - v.t0_s);
    CHECK(std::fabs(h.x0 - v.x_of(2.25)) < 0.05f * px_per_s + 1.5f);
    CHECK(std::fabs(h.x1 - v.x_of(3.85)) < 0.05f * px_per_s + 1.5f);
    // Its outline's pixels: the top edge, a third of the way along.
    const float r = std::round(0.22f * ui::ui_unit());
    const int x = static_cast<int>(h.x0 + (h.x1 - h.x0) / 3.0f), y = static_cast<int>(h.y - r);
    bool edge = false;
    for (int dy = -1; dy <= 1; ++dy) edge = edge || rig.buf.at(x, y + dy) == ui::palette::kTextDim;
    CHECK(edge);
    if (const char* out = std::getenv("BEATLESS_TEST_PNG")) ui::write_png(std::string(out) + "-hidden.png", rig.buf);

    // The same take recorded with --voices 2 (the newest, so the screen opens it, as two voices): the same outline,
    // in cents above the drone (the reference), and the line `analyze --voices 2` prints.
    drone_take_in_home("2026-12-04_130001", take, 2);
    ReviewRig duo_rig(1, 0.0);
    duo_rig.frames(3);
    const ui::ReviewView& dv = *ui::review_view(*duo_rig.screen);
    REQUIRE(dv.open);
    CHECK(dv.heading.rfind("Interval ", 0) == 0);
    REQUIRE(dv.hidden.size() == 1);
    REQUIRE(dv.hidden_words.size() == 1);
    CHECK(duo.out.find(dv.hidden_words[0]) != std::string::npos);
    CHECK(std::fabs(dv.hidden[0].y - dv.y_of(1200.0 * std::log2(3.0))) < 1.5);
    CHECK(std::fabs(dv.hidden[0].x0 - dv.x_of(2.25)) < 0.05f * px_per_s + 1.5f);
    if (const char* out = std::getenv("BEATLESS_TEST_PNG"))
        ui::write_png(std::string(out) + "-hidden-duo.png", duo_rig.buf);
    unsetenv("BEATLESS_HOME");
}

TEST_CASE("Review: a note whose vibrato crests drop out in noise is 'unsure', as analyze says, with the same number") {
    // The five tritone-family notes over a 110 Hz drone in white noise at 4 dB SNR (voice power over noise variance,
    // the definition): the last, 16/11 an octave up (320 Hz), has its vibrato's crests near the drone comb's notch at
    // 330 Hz (gain 2 |sin(pi f / 110)|, J. O. Smith, "Feedforward Comb Filters") and loses them in the noise.
    beatless::test::TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    double power = 0.0;
    for (const double a : {1.0, 0.6, 0.45, 0.3, 0.2, 0.15, 0.1, 0.08}) power += 0.5 * (0.2 * a) * (0.2 * a);
    const Take take = drone_and_voice(kFs, 110.0, tritone_notes(), 7, 1, 1.6, std::sqrt(power / std::pow(10.0, 0.4)));
    const std::string flac = drone_take_in_home("2026-12-04_210000", take, 1);
    const auto json = beatless::test::run_program({"analyze", flac, "--format", "json"});
    REQUIRE_MESSAGE(json.exit_code == 0, json.err);
    const auto unsure = beatless::test::json_words(json.out, "[n['unsure'] for n in d['notes']]");
    REQUIRE(unsure.size() == 5);
    CHECK(unsure == std::vector<std::string>{"False", "False", "False", "False", "True"});
    const std::string cents = beatless::test::json_value(json.out, "'%.1f' % d['notes'][4]['unsure_cents']");

    ReviewRig rig(5, 0.0);
    rig.frames(3);
    const ui::ReviewView& v = *ui::review_view(*rig.screen);
    REQUIRE(v.open);
    REQUIRE(v.marks.size() == 5);
    for (int i = 0; i < 4; ++i) CHECK(!v.marks[static_cast<std::size_t>(i)].unsure);
    CHECK(v.marks[4].unsure);
    CHECK(!std::isfinite(v.marks[4].dev_cents));
    CHECK(v.against == "dropouts in noise may move it " + cents + " c");  // analyze's remark, after "unsure: "
    CHECK(v.remark.empty());
}
