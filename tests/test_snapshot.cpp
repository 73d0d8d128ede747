// Snapshot tests: `beatless snapshot` renders the Practice screen with the
// demo performer held at a known deviation; the PNG it writes is read back
// with stb_image (libstb-dev, an independent decoder) and checked by pixels
// only, never by the program's internals:
//   - the lane is found by its in-tune window (a colour only the lane uses)
//     and its band edges, which the screen documents as -50 and +50 cents;
//     the marker (the one solid run of the state's colour across the band)
//     must stand where cents -> pixels puts the held deviation, in the
//     state's colour (Okabe & Ito 2008 orange for sharp, sky blue for flat,
//     bluish green for in tune);
//   - the beat cue's text is rendered offscreen with the same font and
//     colours and searched pixel-exactly in the cue panel; the expected rate
//     comes from Helmholtz's formula for the coinciding partials, p f_root
//     |2^(d/1200) - 1| (On the Sensations of Tone, ch. VIII), not from the
//     program.
// Also: the first-run caution, the no-display message, bad sizes, and a
// malformed settings file (one warning naming file and line, still renders).
#include "tests/cli.h"
#include "tests/snapshot_pixels.h"
#include "ui/render/imgui_host.h"
#include "ui/render/raster.h"
#include "ui/screens/palette.h"
#include "ui/session/take_file.h"

#include <doctest/doctest.h>
#include <stb_image.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <optional>
#include <string>
#include <vector>

using namespace beatless;
using beatless::test::run_program;
using beatless::test::TempDir;
using namespace beatless::test;

namespace {

// ---------------------------------------------------------------------------
// [SECTION] The lane: find it, read the marker
// ---------------------------------------------------------------------------

struct Lane {
    int row = 0;         // a row across the band, clear of ticks, trail and captions
    double left_x = 0;   // pixel column of -50 cents (the band's first pixel)
    double right_x = 0;  // of +50 cents (one past the band's last pixel)
    double x_of(double cents) const { return 0.5 * (left_x + right_x) + cents * (right_x - left_x) / 100.0; }
};

Lane find_lane(const Image& img) {
    // The in-tune window is drawn only in the lane.
    const Box zone = find_colour(img, ui::palette::kInTuneZone);
    REQUIRE_MESSAGE(!zone.empty(), "no in-tune window in the picture");
    Lane lane;
    lane.row = zone.y0 + static_cast<int>(0.4 * (zone.y1 - zone.y0));
    // Walk out from the window along the row while the band's colour (or a
    // marker crossing it) continues.
    int x = zone.x0;
    while (x > 0 && img.at(x - 1, lane.row) != ui::palette::kBackground) --x;
    lane.left_x = x;
    x = zone.x1;
    while (x + 1 < img.w && img.at(x + 1, lane.row) != ui::palette::kBackground) ++x;
    lane.right_x = x + 1;
    CHECK(img.at(static_cast<int>(lane.left_x), lane.row) == ui::palette::kPanelRaised);
    CHECK(img.at(static_cast<int>(lane.right_x) - 1, lane.row) == ui::palette::kPanelRaised);
    return lane;
}

// The marker: the columns of the row that carry the given colour exactly.
std::optional<double> marker_centre(const Image& img, const Lane& lane, std::uint32_t colour, int& width) {
    int first = -1, last = -1, count = 0;
    for (int x = static_cast<int>(lane.left_x); x < static_cast<int>(lane.right_x); ++x)
        if (img.at(x, lane.row) == colour) {
            if (first < 0) first = x;
            last = x;
            ++count;
        }
    width = count;
    if (first < 0) return std::nullopt;
    CHECK_MESSAGE(count == last - first + 1, "the marker's colour appears in more than one place on the lane");
    return 0.5 * (first + last + 1);  // the run's centre, in pixel-edge coordinates
}

}  // namespace

TEST_CASE("snapshot: the marker stands at the held deviation on the lane, in the state's colour") {
    TempDir home;
    struct Case {
        double hold_cents;
        std::uint32_t colour;
        const char* state;
        const char* scale;
        const char* size;
    } cases[] = {
        {20.0, ui::palette::kSharp, "sharp", "1", "1280x800"},
        {-12.0, ui::palette::kFlat, "flat", "1", "1280x800"},
        {2.0, ui::palette::kInTune, "in tune", "1", "1280x800"},
        {-31.0, ui::palette::kFlat, "flat, 2x DPI", "2", "2560x1600"},
        {37.0, ui::palette::kSharp, "sharp, 1920x1080", "1", "1920x1080"},
    };
    int n = 0;
    for (const Case& c : cases) {
        CAPTURE(c.state);
        char args[256];
        std::snprintf(args, sizeof args,
                      "--demo --hold %g --targets tritones --target 7/5 --root A3 --seconds 3 --scale %s --size %s",
                      c.hold_cents, c.scale, c.size);
        const Image img = read_png(snapshot(home, args, "lane" + std::to_string(n++) + ".png"));
        const Lane lane = find_lane(img);
        const double px_per_cent = (lane.right_x - lane.left_x) / 100.0;
        CHECK(px_per_cent > 8.0);  // wide enough to read a cent or two
        int width = 0;
        const auto x = marker_centre(img, lane, c.colour, width);
        REQUIRE_MESSAGE(x.has_value(), "no marker of the state's colour on the lane");
        CHECK(width >= 3);
        // The tracker's reading may differ from the held value by a fraction
        // of a cent; allow 0.4 cents plus a pixel of rounding.
        CHECK(std::fabs(*x - lane.x_of(c.hold_cents)) <= 0.4 * px_per_cent + 1.0);
    }
}

TEST_CASE("snapshot: far off the lane, the value replaces the end's word, and the trace widens to show the pitch") {
    // 80 cents sharp of 7/5 (582.5 c) is 662.5 c above the root: beyond the
    // lane's +-50 and above the family's highest target, 16/11 (648.7 c).
    TempDir home;
    const Image img =
        read_png(snapshot(home, "--demo --hold 80 --targets tritones --target 7/5 --root D3 --seconds 3", "far.png"));
    const Box zone = find_colour(img, ui::palette::kInTuneZone);
    REQUIRE(!zone.empty());
    const Box band = rows(img, zone.y0, zone.y1);
    const Image value = render_text("+80 c", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanelRaised, 1.0f);
    CHECK(find_exact(img, value, band).size() == 1);
    const Image sharp =
        render_text("sharp", ui::FontFace::body, ui::palette::kTextDim, ui::palette::kPanelRaised, 1.0f);
    CHECK(find_exact(img, sharp, band).empty());  // the pinned end shows the value, not the word
    const Image flat = render_text("flat", ui::FontFace::body, ui::palette::kTextDim, ui::palette::kPanelRaised, 1.0f);
    CHECK(find_exact(img, flat, band).size() == 1);
    // The trace: the pitch line (the trace colour, exact in its core) is drawn
    // in the trace panel's plot (its left half holds nothing else of that
    // colour) rather than clipped away above it.
    int line_px = 0;
    for (int y = img.h * 9 / 20; y < img.h * 5 / 6; ++y)
        for (int x = img.w / 10; x < img.w / 2; ++x) line_px += img.at(x, y) == ui::palette::kTraceLine;
    CHECK(line_px > 50);
}

TEST_CASE("snapshot: the beat cue shows the rate of the coinciding partials and names them") {
    TempDir home;
    // 7/5 over A3 (220 Hz): the 7th partial of the root against the 5th of
    // the voice, beating at 7 x 220 x (2^(d/1200) - 1) Hz (Helmholtz).
    struct Case {
        double hold_cents;
        const char* ratio;
        int p;  // root partial
        int q;  // voice partial
        const char* p_text;
        const char* q_text;
    } cases[] = {
        {2.0, "7/5", 7, 5, "7th", "5th"},
        {4.0, "3/2", 3, 2, "3rd", "2nd"},
    };
    for (const Case& c : cases) {
        CAPTURE(c.ratio);
        const double root_hz = 220.0;
        const double beat_hz = c.p * root_hz * (std::exp2(c.hold_cents / 1200.0) - 1.0);
        char expected[32];
        std::snprintf(expected, sizeof expected, "%.1f Hz", std::round(beat_hz * 10.0) / 10.0);
        CAPTURE(expected);
        char args[256];
        std::snprintf(args, sizeof args, "--demo --hold %g --target %s --root A3 --seconds 3", c.hold_cents, c.ratio);
        const Image img = read_png(snapshot(home, args, std::string("beat-") + c.p_text + ".png"));
        // The cue panel: the right part of the screen, below the lane.
        Box right;
        right.x0 = img.w * 2 / 3;
        right.x1 = img.w - 1;
        right.y0 = img.h / 3;
        right.y1 = img.h - 1;
        const Image value = render_text(expected, ui::FontFace::large, ui::palette::kText, ui::palette::kPanel, 1.0f);
        const auto hits = find_exact(img, value, right);
        CHECK_MESSAGE(hits.size() == 1, "'" << expected << "' found " << hits.size() << " times in the beat cue");
        const std::string pair = std::string(c.p_text) + " partial of the root";
        const Image pair_img = render_text(pair, ui::FontFace::body, ui::palette::kText, ui::palette::kPanel, 1.0f);
        CHECK(find_exact(img, pair_img, right).size() == 1);
        const std::string voice = std::string("against the ") + c.q_text + " of the voice";
        const Image voice_img = render_text(voice, ui::FontFace::body, ui::palette::kText, ui::palette::kPanel, 1.0f);
        CHECK(find_exact(img, voice_img, right).size() == 1);
    }
}

TEST_CASE("snapshot: the hearing caution shows on first run only, and the screen still renders") {
    TempDir home;
    const Image first = read_png(snapshot(home, "--demo --first-run --seconds 1", "first.png"));
    const Image later = read_png(snapshot(home, "--demo --seconds 1", "later.png"));
    const Image caution =
        render_text("Hearing caution", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
    const Box all = rows(first, 0, first.h / 3);
    CHECK(find_exact(first, caution, all).size() == 1);
    CHECK(find_exact(later, caution, all).empty());
    // The banner has the warning colour (vermillion) as its border; the later picture has none up there.
    CHECK(!find_colour(first, ui::palette::kWarning, 0, first.h / 3).empty());
    CHECK(find_colour(later, ui::palette::kWarning, 0, later.h / 3).empty());
}

TEST_CASE("snapshot: a window smaller than the layout shrinks the text so the screen still fits") {
    // 960x600 against the 1180x700 the screens are laid out for: text at 0.8.
    TempDir home;
    const Image small = read_png(snapshot(home, "--demo --first-run --seconds 1 --size 960x600", "small.png"));
    REQUIRE(small.w == 960);
    const Image at_08 =
        render_text("Hearing caution", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 0.8f);
    const Image at_10 =
        render_text("Hearing caution", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
    const Box top = rows(small, 0, small.h / 3);
    CHECK(find_exact(small, at_08, top).size() == 1);
    CHECK(find_exact(small, at_10, top).empty());
}

TEST_CASE("snapshot: bad values give one line naming the value, exit 1 or 2") {
    TempDir home;
    struct Case {
        std::string args;
        int code;
        std::string says;
    } cases[] = {
        {"--size 10x10 --out " + home.file("x.png"), 1, "--size 10x10"},
        {"--size big --out " + home.file("x.png"), 1, "--size big"},
        {"--scale 9 --out " + home.file("x.png"), 1, "--scale 9"},
        {"--screen lobby --out " + home.file("x.png"), 2,
         "--screen lobby: no such screen (choose from practice, drills, "
         "ensemble, review, settings)"},
        {"--hold 5 --out " + home.file("x.png"), 2, "--hold works with --demo only"},
        {"--demo --target 9/0 --out " + home.file("x.png"), 1, "9/0"},
        {"--out /nonexistent-dir/x.png", 1, "/nonexistent-dir/x.png"},
    };
    for (const Case& c : cases) {
        CAPTURE(c.args);
        const auto r = run_program("snapshot " + c.args, {"BEATLESS_HOME=" + home.path()});
        CHECK(r.exit_code == c.code);
        CHECK(r.err.find(c.says) != std::string::npos);
        CHECK(test::line_count(r.err) == 1);
    }
}

TEST_CASE("a malformed settings file: one warning naming the file and line; the picture is still made") {
    TempDir home;
    std::filesystem::create_directories(home.path() + "/config");
    const std::string file = home.path() + "/config/settings.toml";
    {
        std::ofstream f(file);
        f << "kind = \"settings\"\n\n[drone]\nlevel_dbfs = \"loud\"\n";
    }
    const auto r =
        run_program("snapshot --settings " + file + " --out " + home.file("s.png"), {"BEATLESS_HOME=" + home.path()});
    CHECK(r.exit_code == 0);
    CHECK(r.err.find(file + ":4:") != std::string::npos);
    CHECK(r.err.find("level_dbfs") != std::string::npos);
    CHECK(test::line_count(r.err) == 1);
    {
        std::ofstream f(file);
        f << "kind = \"settings\"\nscreen = [unclosed\n";
    }
    const auto r2 =
        run_program("snapshot --settings " + file + " --out " + home.file("s2.png"), {"BEATLESS_HOME=" + home.path()});
    CHECK(r2.exit_code == 0);
    CHECK(r2.err.find(file + ":2:") != std::string::npos);
    CHECK(r2.err.find("default settings") != std::string::npos);
}

TEST_CASE("beatless with no display says so in one line, points to snapshot and listen --demo, exit 1") {
    TempDir home;
    const auto r = run_program(std::vector<std::string>{"--demo"},
                               {"BEATLESS_HOME=" + home.path(), "DISPLAY=", "WAYLAND_DISPLAY="});
    CHECK(r.exit_code == 1);
    CHECK(test::line_count(r.err) == 1);
    CHECK(r.err.find("no display") != std::string::npos);
    CHECK(r.err.find("beatless snapshot") != std::string::npos);
    CHECK(r.err.find("beatless listen --demo") != std::string::npos);
    CHECK(r.out.empty());
}

// ---------------------------------------------------------------------------
// [SECTION] The Drills screen
// ---------------------------------------------------------------------------
// The demo performer holds every target 3 cents flat (no vibrato) in the
// drill "7/5 against 10/7" (±6 c, 5 s holds). Its first hold runs from 5.0 s
// (1.5 s of drone alone, a 1.5 s announcement, a 2 s count-in: the schedule
// of ui/session/drill_runner.h) to 10.0 s; she starts 0.3 s in, so the result the
// screen must show at 10.8 s, worked from the score's definitions, reads
// "locked in 0.3 s, held 3 cents flat, 100 % within ±6 c".

TEST_CASE(
    "snapshot: the Drills screen shows a finished hold's result in words, with its trace against the target line") {
    TempDir home;
    const std::string log = home.file("p.sqlite3");
    const Image img = read_png(snapshot(
        home, "--demo --hold -3 --drill hold-septimal-tritones --seconds 10.8 --log " + log, "drill-result.png"));
    const Image words = render_text(
        "locked in 0.3 s, held 3 cents flat, 100 % within \xC2\xB1"
        "6 c",
        ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
    const Box all = whole(img);
    CHECK(find_exact(img, words, all).size() == 1);
    // Hold 1 ends at 10 s and the drill's 1.5 s rest follows (rest_s in
    // hold-septimal-tritones.toml): at 10.8 s the next hold, 10/7, is shown.
    const Image next = render_text("7/5 against 10/7  \xC2\xB7  hold 2 of 8 next", ui::FontFace::body,
                                   ui::palette::kTextDim, ui::palette::kPanel, 1.0f);
    CHECK(find_exact(img, next, all).size() == 1);
    const Image rest = render_text("rest \xC2\xB7 this one is next", ui::FontFace::body, ui::palette::kTextDim,
                                   ui::palette::kPanel, 1.0f);
    CHECK(find_exact(img, rest, all).size() == 1);
    // The trace: the target line (the current-target yellow) runs across the
    // attempt's plot inside the tolerance band (the in-tune window's colour),
    // and the pitch (white) runs below it: flat.
    const auto hits = find_exact(img, words, all);
    REQUIRE(hits.size() == 1);
    // Walk down one column of the plot, from the band's top: the band's
    // colour, the yellow target line, the white pitch (its core: the line is
    // anti-aliased at its edges), until the band ends.
    const int below = hits[0].second + words.h;
    int band_top = -1, band_x = -1;
    for (int y = below; y < img.h && band_top < 0; ++y)
        for (int x = 0; x < img.w; ++x)
            if (img.at(x, y) == ui::palette::kInTuneZone) {
                band_top = y;
                band_x = x;
                break;
            }
    REQUIRE(band_top > 0);
    const int col = band_x + (img.w - band_x) / 2;  // the middle of the hold
    auto whitish = [&](std::uint32_t c) {
        const int r = static_cast<int>(c & 0xFF), g = static_cast<int>((c >> 8) & 0xFF),
                  b = static_cast<int>((c >> 16) & 0xFF);
        return r > 200 && g > 200 && b > 200;
    };
    int y = band_top, yellow_sum = 0, yellow_n = 0, white_sum = 0, white_n = 0;
    for (; y < img.h; ++y) {
        const std::uint32_t c = img.at(col, y);
        if (c == ui::palette::kCurrentTarget)
            yellow_sum += y, ++yellow_n;
        else if (whitish(c))
            white_sum += y, ++white_n;
        else if (c == ui::palette::kBackground)
            break;  // the plot below the band (anti-aliased fringes are neither)
    }
    const int band_h = y - band_top;
    REQUIRE(yellow_n > 0);
    REQUIRE(white_n > 0);
    const double px_per_cent = band_h / 12.0;  // the band is ±6 c
    const double drop_cents =
        (static_cast<double>(white_sum) / white_n - static_cast<double>(yellow_sum) / yellow_n) / px_per_cent;
    CAPTURE(band_h);
    CHECK(std::fabs(drop_cents - 3.0) <= 1.0);  // below the line: flat
    // The log was written: no warning anywhere.
    CHECK(find_colour(img, ui::palette::kWarning).empty());
}

TEST_CASE("snapshot: a practice log that cannot be written shows one warning line, and the drill still runs") {
    TempDir home;
    { std::ofstream(home.file("blocker")) << "a file where the data folder should be"; }
    const std::string log = home.file("blocker") + "/d/p.sqlite3";
    const std::string png = home.file("drill-warning.png");
    const auto run =
        run_program("snapshot --demo --hold -3 --drill hold-septimal-tritones --seconds 10.8 --size 1920x1080 --log " +
                        log + " --out " + png,
                    {"BEATLESS_HOME=" + home.path(), "TMPDIR=" + home.path()});
    REQUIRE_MESSAGE(run.exit_code == 0, run.err);
    // On closing, what could not be saved goes to a CSV in the temporary folder: nothing is lost.
    CHECK(run.err.find("written to " + home.path() + "/beatless-unsaved-") != std::string::npos);
    const Image img = read_png(png);
    const std::string text =
        "practice log " + log +
        ": cannot write (cannot open or create it); 1 attempt kept and will be saved when possible";
    const Image warning = render_text(text, ui::FontFace::body, ui::palette::kText, ui::palette::kPanelRaised, 1.0f);
    const Box top = rows(img, 0, img.h / 6);
    CHECK(find_exact(img, warning, top).size() == 1);
    CHECK(!find_colour(img, ui::palette::kWarning, 0, img.h / 6).empty());
    // The result is there all the same.
    const Image words = render_text(
        "locked in 0.3 s, held 3 cents flat, 100 % within \xC2\xB1"
        "6 c",
        ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
    const Box all = whole(img);
    CHECK(find_exact(img, words, all).size() == 1);
}

TEST_CASE("snapshot: the history panel plots each target's mean deviation per day, from the practice log") {
    TempDir home;
    const std::string log = home.file("p.sqlite3");
    const auto r = run_program("drill hold-septimal-tritones --demo --hold -3 --attempts 2 --log " + log,
                               {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    const Image img =
        read_png(snapshot(home, "--demo --drill hold-septimal-tritones --seconds 1 --log " + log, "drill-history.png"));
    // One small plot per target of the drill, each labelled, each with today's
    // mean: -3.0 c (held 3 cents flat, within ±6 c: in the in-tune colour).
    // The history panel: below the drill list, whose selected row also says 7/5.
    const Box lower = rows(img, img.h * 3 / 5, img.h - 1);
    const Image value = render_text(
        "\xE2\x88\x92"
        "3.0 c",
        ui::FontFace::bold, ui::palette::kInTune, ui::palette::kPanelRaised, 1.0f);
    CHECK(find_exact(img, value, lower).size() == 2);
    for (const char* t : {"7/5", "10/7"}) {
        CAPTURE(t);
        const Image label = render_text(t, ui::FontFace::bold, ui::palette::kText, ui::palette::kPanelRaised, 1.0f);
        CHECK(find_exact(img, label, lower).size() == 1);
    }
}

TEST_CASE("snapshot: what a window left behind does not change the picture; --settings applies preferences only") {
    // DESIGN, "One reading, one verdict": transient window state (screen
    // shown, fixed target, chosen drill) never changes what a command-line
    // run prints, and snapshot depends on no settings file unless given one.
    TempDir home;
    const std::string args = "--demo --targets tritones --root D3 --seconds 2";
    const Image clean = read_png(snapshot(home, args, "clean.png"));
    std::filesystem::create_directories(home.path() + "/config");
    const std::string file = home.path() + "/config/settings.toml";
    {
        std::ofstream f(file);
        f << "kind = \"settings\"\nscreen = \"drills\"\na4_hz = 442\n[drone]\nroot = \"C3\"\n[targets]\nset = "
             "\"7-limit\"\nchoice = \"fixed\"\nfixed = \"9/7\"\n";
    }
    const Image after = read_png(snapshot(home, args, "after.png"));
    CHECK(after.px == clean.px);
    // With --settings the preferences apply (the root box shows the saved
    // root when the command line names none), the window's state does not:
    // still the Practice screen.
    const auto r = run_program("snapshot --demo --seconds 1 --settings " + file + " --out " + home.file("with.png"),
                               {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    CHECK(r.out.find("practice screen") != std::string::npos);
    const auto bad =
        run_program("snapshot --demo --seconds 1 --settings " + home.file("none.toml") + " --out " + home.file("x.png"),
                    {"BEATLESS_HOME=" + home.path()});
    CHECK(bad.exit_code == 1);
    CHECK(bad.err.find("none.toml: no such settings file") != std::string::npos);
    CHECK(!std::filesystem::exists(home.file("x.png")));
}

namespace {

std::string signed_whole(double v) {
    const long r = std::lround(v);
    if (r == 0) return "0";
    return (r < 0 ? std::string("\xE2\x88\x92") : std::string("+")) + std::to_string(std::labs(r));
}

}  // namespace

TEST_CASE("Practice screen: at every moment the big number, word, colour, marker and note show the one verdict") {
    // DESIGN, "One reading, one verdict". The model the screen draws from is
    // printed by --print-verdict; the pixels must say the same thing.
    TempDir home;
    struct Moment {
        const char* what;
        const char* args;
        const char* state;
    } moments[] = {
        {"held note with vibrato", "--demo --targets tritones --root D3 --drone --seconds 11.5", "live"},
        {"note onset", "--demo --targets harmonics-8-16 --root D3 --drone --seconds 9", "live"},
        {"silence between notes", "--demo --targets tritones --root D3 --drone --seconds 4.1", "silent"},
        {"far off, pinned", "--demo --hold 80 --targets tritones --target 7/5 --root D3 --seconds 3", "live"},
    };
    int n = 0;
    for (const Moment& m : moments) {
        CAPTURE(m.what);
        const std::string png = home.file("moment" + std::to_string(n++) + ".png");
        const auto r = run_program(std::string("snapshot ") + m.args + " --print-verdict --out " + png,
                                   {"BEATLESS_HOME=" + home.path()});
        REQUIRE_MESSAGE(r.exit_code == 0, r.err);
        const std::string json = r.out.substr(r.out.find('{'));
        CHECK(test::json_value(json, "d['state']") == m.state);
        const double dev = std::stod(test::json_value(json, "d['dev_cents']"));
        const std::string word = test::json_value(json, "d['word']");
        const Image img = read_png(png);
        const Box header = rows(img, 0, img.h / 4);
        const bool live = std::string(m.state) == "live";
        // The word's colour is the state's (in tune green, sharp orange, flat blue); dim when not current.
        const std::uint32_t col = !live               ? ui::palette::kTextDim
                                  : word == "in tune" ? ui::palette::kInTune
                                  : word == "sharp"   ? ui::palette::kSharp
                                                      : ui::palette::kFlat;
        // The big number: the verdict rounded, in that colour.
        const std::string num = (live ? "" : "last ") + signed_whole(dev);
        const Image num_img =
            render_text(num, live ? ui::FontFace::large : ui::FontFace::medium, col, ui::palette::kBackground, 1.0f);
        CHECK_MESSAGE(find_exact(img, num_img, header).size() == 1, "'" << num << "' is not the header's number");
        const std::string shown_word = live ? word : std::string("silent");
        const Image word_img = render_text(shown_word, ui::FontFace::medium, col, ui::palette::kBackground, 1.0f);
        CHECK_MESSAGE(find_exact(img, word_img, header).size() == 1, "'" << shown_word << "' is not the header's word");
        if (std::fabs(dev) > 50.0) {
            // Pinned at the lane's edge: the value printed there is the verdict's.
            const Image pin = render_text(signed_whole(dev) + " c", ui::FontFace::bold, live ? ui::palette::kText : col,
                                          ui::palette::kPanelRaised, 1.0f);
            CHECK_MESSAGE(find_exact(img, pin, rows(img, 0, img.h / 3)).size() == 1,
                          "the pinned value is not the verdict's");
            continue;
        }
        // The lane's marker stands at the verdict.
        const Lane lane = find_lane(img);
        const double px_per_cent = (lane.right_x - lane.left_x) / 100.0;
        if (live) {
            int width = 0;
            const auto x = marker_centre(img, lane, col, width);
            REQUIRE_MESSAGE(x.has_value(), "no marker of the state's colour on the lane");
            CHECK(std::fabs(*x - lane.x_of(dev)) <= 0.5 * px_per_cent + 1.5);
            // The note below names the same pitch.
            const double off = std::stod(test::json_value(json, "d['note_offset_cents']"));
            const std::string note = test::json_value(json, "d['note']") + " " + signed_whole(off) + " c";
            const Image note_img =
                render_text(note, ui::FontFace::bold, ui::palette::kText, ui::palette::kBackground, 1.0f);
            CHECK_MESSAGE(find_exact(img, note_img, rows(img, 0, img.h / 2)).size() == 1,
                          "'" << note << "' is not shown");
        } else {
            // Not current: no marker in any state colour on the lane.
            int width = 0;
            for (std::uint32_t c : {ui::palette::kInTune, ui::palette::kSharp, ui::palette::kFlat})
                CHECK_FALSE(marker_centre(img, lane, c, width).has_value());
        }
    }
}

TEST_CASE("snapshot: the drill list scrolls to show the running drill when the drills outnumber its rows") {
    // The built-in drills (targets/*.toml of kind "drill") are more than the
    // left column holds at 1280x800; the running drill sorts late in the list.
    // Its title must be drawn highlighted (the selected row's colours) inside
    // the left column. Layout rule of the screen: the chosen drill is always
    // visible (common practice for a list with a selection).
    TempDir home;
    const Image img =
        read_png(snapshot(home, "--demo --screen drills --drill hold-tritones --seconds 6", "list.png"));
    Box left;
    left.add(0, 40);
    left.add(img.w / 3, img.h - 40);
    const Image title =
        render_text("Tritone family, held", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanelRaised, 1.0f);
    CHECK(find_exact(img, title, left).size() == 1);
}

TEST_CASE("snapshot --record: REC, the time and a red Stop at the right of the status bar; the take is kept") {
    // The time is what was recorded: 3 s of simulated time less the first frame reads 0:02 (minutes:seconds, whole
    // seconds shown as a clock shows them); the take in the data folder holds the same audio (common practice).
    TempDir home;
    const Image img = read_png(snapshot(home, "--demo --record --seconds 3 --size 1600x900", "rec.png"));
    const Box bar = rows(img, img.h - img.h / 16, img.h - 1);
    const Image rec = render_text("REC", ui::FontFace::bold, ui::palette::kRecording, ui::palette::kPanel, 1.0f);
    const Image clock = render_text("0:02", ui::FontFace::mono, ui::palette::kText, ui::palette::kPanel, 1.0f);
    const auto at_rec = find_exact(img, rec, bar);
    const auto at_clock = find_exact(img, clock, bar);
    REQUIRE(at_rec.size() == 1);
    REQUIRE(at_clock.size() == 1);
    CHECK(at_rec[0].first > img.w / 2);          // at the right end
    CHECK(at_clock[0].first > at_rec[0].first);  // the time after REC
    const Box red = find_colour(img, ui::palette::kRecording, bar.y0, bar.y1 + 1);
    CHECK(red.x1 > at_clock[0].first);  // the red Stop button right of the time
    const auto takes = beatless::ui::list_takes(home.path() + "/data/takes");
    REQUIRE(takes.size() == 1);
    CHECK(takes[0].complete);
    REQUIRE(takes[0].duration_s);
    CHECK(*takes[0].duration_s > 2.9);
    CHECK(*takes[0].duration_s <= 3.0);
    // Without --record nothing records and the button says Record.
    const Image idle = read_png(snapshot(home, "--demo --seconds 1 --size 1600x900", "idle.png"));
    CHECK(find_exact(idle, rec, rows(idle, idle.h - idle.h / 16, idle.h - 1)).empty());
    const Image record = render_text("Record", ui::FontFace::body, ui::palette::kText, ui::palette::kPanelRaised, 1.0f);
    CHECK(find_exact(idle, record, rows(idle, idle.h - idle.h / 16, idle.h - 1)).size() == 1);
}

// Two voices (the demo violinist's double stops): the lane's marker stands at the interval's deviation the
// verdict reports, in the word's colour; the trace draws the upper voice's just place; in the lift between double stops
// the verdict is "silent" and no tuning-coloured marker is left on the lane. Lane geometry as above (-50 .. +50 c).
TEST_CASE("snapshot --voices 2: the marker is the interval's verdict; silence clears it") {
    TempDir home;
    auto verdict_of = [](const std::string& out) {
        const auto k = out.find("{\"state\"");
        REQUIRE(k != std::string::npos);
        return out.substr(k);
    };
    auto num = [](const std::string& j, const std::string& key) {
        const auto k = j.find("\"" + key + "\": ");
        return k == std::string::npos ? NAN : std::stod(j.substr(k + key.size() + 4));
    };
    // 3.0 s: the first double stop, corrected; 4.45 s: the lift after it (stop_s 4, from 0.3 s).
    for (const char* secs : {"3.0", "2.2", "4.55"}) {
        CAPTURE(secs);
        const std::string png = home.file(std::string("duo") + secs + ".png");
        const auto r = run_program(
            std::string("snapshot --demo --voices 2 --root G3 --seconds ") + secs + " --print-verdict --out " + png,
            {"BEATLESS_HOME=" + home.path()});
        REQUIRE_MESSAGE(r.exit_code == 0, r.err);
        const std::string v = verdict_of(r.out);
        CAPTURE(v);
        const Image img = read_png(png);
        const Lane lane = find_lane(img);
        const double px_per_cent = (lane.right_x - lane.left_x) / 100.0;
        if (std::string(secs) == "4.55") {
            CHECK(v.find("\"state\": \"silent\"") != std::string::npos);
            int w = 0;
            for (std::uint32_t c : {ui::palette::kSharp, ui::palette::kFlat, ui::palette::kInTune})
                CHECK(!marker_centre(img, lane, c, w).has_value());
            continue;
        }
        REQUIRE(v.find("\"state\": \"live\"") != std::string::npos);
        CHECK(v.find("\"target\": \"3/2\"") != std::string::npos);  // her first double stop is a fifth
        const double dev = num(v, "dev_cents");
        const std::uint32_t colour = v.find("\"word\": \"in tune\"") != std::string::npos ? ui::palette::kInTune
                                     : dev > 0                                            ? ui::palette::kSharp
                                                                                          : ui::palette::kFlat;
        int width = 0;
        const auto x = marker_centre(img, lane, colour, width);
        REQUIRE_MESSAGE(x.has_value(), "no marker of the verdict's colour on the lane");
        CHECK(std::fabs(*x - lane.x_of(std::clamp(dev, -50.0, 50.0))) <= 0.5 * px_per_cent + 1.5);
        // The trace: the upper voice's just place (the current target's colour) below the lane.
        CHECK(!find_colour(img, ui::palette::kCurrentTarget, lane.row + 40).empty());
    }
}

TEST_CASE("snapshot --screen review: every target of the take has its line in the per-target summary") {
    // The demo performer sings six targets of the tritone family, one note each; the summary panel must name all
    // six (one line each when two-line rows do not fit), none cut off silently (common practice: a summary lists
    // what it sums).
    TempDir home;
    const auto rec = run_program("listen --demo --targets tritones --root D3 --seconds 24 --record",
                                 {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(rec.exit_code == 0, rec.err);
    const Image img = read_png(snapshot(home, "--screen review", "review.png"));
    Box left;
    left.add(0, img.h / 2);
    left.add(img.w / 3, img.h - 40);
    for (const char* t : {"15/11", "11/8", "7/5", "45/32", "600c", "64/45"}) {
        CAPTURE(t);
        const Image label = render_text(t, ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
        CHECK(find_exact(img, label, left).size() == 1);
    }
}
