// Snapshot test of the Ensemble screen: `beatless snapshot --demo --hold 0
// --screen ensemble` renders the demo group holding known deviations
// (audio/demo_ensemble.h: +6, -4, +2, -8 cents for the four singers, no
// vibrato); the PNG is read back with stb_image and checked by pixels only:
//   - each player's lane is found by its in-tune window (a colour only the
//     lanes use) and its edges, which the screen documents as +30 (top) and
//     -30 cents (bottom); the centre's bar (the run of the state's colour in
//     the lane's last column) must stand where cents -> pixels puts the
//     expected deviation under the chosen reference: against the drone the
//     held amounts, against the best-fit root the amounts minus their mean
//     (the least-squares root of pitch/chord.h, equal weights);
//   - the deviation and the state's word ("sharp", "flat", "in tune") are
//     rendered offscreen with the same font and colour (Okabe & Ito 2008
//     orange, sky blue, bluish green) and found pixel for pixel in that
//     player's strip: the state is told by word and shape, not only colour.
#include "tests/cli.h"
#include "tests/snapshot_pixels.h"
#include "ui/app_state.h"
#include "ui/ensemble_session.h"
#include "ui/screen.h"
#include "ui/settings.h"

#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::test;

namespace {

struct LaneBox {
    int x0 = 0, x1 = 0;   // the in-tune window's columns (inclusive)
    int top = 0;          // the lane's first row (+30 cents)
    int bottom = 0;       // one past its last row (-30 cents)
    double y_of(double cents) const {
        const double mid = std::round(0.5 * (top + bottom));
        return std::round(mid - cents * (bottom - top) / 60.0);
    }
};

// The lanes, left to right: runs of columns holding the in-tune window's colour.
std::vector<LaneBox> find_lanes(const Image& img) {
    std::vector<int> count(static_cast<std::size_t>(img.w), 0);
    for (int y = 0; y < img.h; ++y)
        for (int x = 0; x < img.w; ++x)
            if (img.at(x, y) == ui::palette::kInTuneZone) ++count[static_cast<std::size_t>(x)];
    std::vector<LaneBox> lanes;
    for (int x = 0; x < img.w; ++x) {
        if (count[static_cast<std::size_t>(x)] < 4) continue;
        if (lanes.empty() || x > lanes.back().x1 + 1) lanes.push_back({x, x, 0, 0});
        lanes.back().x1 = x;
    }
    for (LaneBox& l : lanes) {
        // Walk up and down the lane's last column from the window to the strip's panel.
        const int x = l.x1;
        int y = 0;
        while (y < img.h && img.at(x, y) != ui::palette::kInTuneZone) ++y;
        int t = y;
        while (t > 0 && img.at(x, t - 1) != ui::palette::kPanel) --t;
        int b = y;
        while (b + 1 < img.h && img.at(x, b + 1) != ui::palette::kPanel) ++b;
        l.top = t;
        l.bottom = b + 1;
    }
    return lanes;
}

// The centre of the run of `colour` in the lane's last column; NaN when absent.
double bar_row(const Image& img, const LaneBox& l, std::uint32_t colour) {
    int first = -1, last = -1;
    for (int y = l.top; y < l.bottom; ++y)
        if (img.at(l.x1, y) == colour) {
            if (first < 0) first = y;
            last = y;
        }
    return first < 0 ? NAN : 0.5 * (first + last);
}

std::uint32_t colour_of(double dev, double in_tune) {
    return std::fabs(dev) <= in_tune ? ui::palette::kInTune : dev > 0 ? ui::palette::kSharp : ui::palette::kFlat;
}
const char* word_of(double dev, double in_tune) { return std::fabs(dev) <= in_tune ? "in tune" : dev > 0 ? "sharp" : "flat"; }

std::string signed_whole(double v) {
    const long r = std::lround(v);
    return (r < 0 ? std::string("\xE2\x88\x92") : std::string("+")) + std::to_string(std::labs(r));
}

void check_screen(const std::string& reference, const std::vector<double>& expected) {
    TempDir home;
    std::filesystem::create_directories(home.path() + "/config");
    std::ofstream(home.path() + "/config/settings.toml") << "kind = \"settings\"\n[drone]\nroot = \"G2\"\n[ensemble]\nchord = \"4:5:6:7\"\nreference = \""
                                                           << reference << "\"\n";
    const std::string png = snapshot(home, "--demo --hold 0 --screen ensemble --seconds 3", "ensemble-" + reference + ".png");
    const Image img = read_png(png);
    const std::vector<LaneBox> lanes = find_lanes(img);
    REQUIRE(lanes.size() == expected.size());
    for (std::size_t i = 0; i < lanes.size(); ++i) {
        const LaneBox& l = lanes[i];
        CAPTURE(i);
        CAPTURE(expected[i]);
        // The lane spans 60 cents over its height; bars are a few pixels per cent.
        CHECK(l.bottom - l.top > 120);
        const std::uint32_t col = colour_of(expected[i], 5.0);
        const double row = bar_row(img, l, col);
        REQUIRE_MESSAGE(std::isfinite(row), "no bar in the state's colour in lane " << i);
        const double px_per_cent = (l.bottom - l.top) / 60.0;
        CHECK(std::fabs(row - l.y_of(expected[i])) <= 1.5);  // a pixel and a half: under half a cent
        CHECK(px_per_cent > 3.0);
        // The number and the word in that strip (between this lane and the next).
        Box strip;
        strip.x0 = l.x0;
        strip.x1 = i + 1 < lanes.size() ? lanes[i + 1].x0 - 1 : img.w - 1;
        strip.y0 = l.top;
        strip.y1 = l.bottom;
        const Image num = render_text(signed_whole(expected[i]), ui::FontFace::large, col, ui::palette::kPanel, 1.0f);
        CHECK_MESSAGE(!find_exact(img, num, strip).empty(), "the deviation " << signed_whole(expected[i]) << " is not shown in strip " << i);
        const Image word = render_text(word_of(expected[i], 5.0), ui::FontFace::medium, col, ui::palette::kPanel, 1.0f);
        CHECK_MESSAGE(!find_exact(img, word, strip).empty(), "the word '" << word_of(expected[i], 5.0) << "' is not shown in strip " << i);
    }
    // The status bar names the group's input, not the Practice screen's.
    const Box bar = rows(img, img.h - img.h / 12, img.h - 1);
    const Image input = render_text("the demo ensemble", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
    CHECK_MESSAGE(!find_exact(img, input, bar).empty(), "the status bar does not name the demo ensemble");
}

}  // namespace

TEST_CASE("Ensemble snapshot: against the drone, every bar and number at the held deviation") {
    check_screen("drone", {+6.0, -4.0, +2.0, -8.0});
}

TEST_CASE("Ensemble snapshot: against the best-fit root, the held deviations minus their mean") {
    const std::vector<double> held = {+6.0, -4.0, +2.0, -8.0};
    double mean = 0.0;
    for (double d : held) mean += d / 4.0;
    std::vector<double> expected;
    for (double d : held) expected.push_back(d - mean);  // +7, -3, +3, -7
    check_screen("best-fit", expected);
}

// ---------------------------------------------------------------------------
// The [ensemble] settings: saved, read back, and a bad value named
// ---------------------------------------------------------------------------

TEST_CASE("[ensemble] settings: written, read back equal, and a bad reference is named by file and line") {
    ui::Settings s;
    s.ensemble.chord = "4:5:6:7";
    s.ensemble.reference = pitch::ChordReference::sounding_bass;
    s.ensemble.input_device = "Quad \"box\"";
    s.ensemble.channels = "3,4,5,6";
    s.ensemble.names = "Bass,Tenor,Alto,Soprano";
    s.ensemble.voices = "1,2,3,4";
    const ui::LoadedSettings back = ui::parse_settings(ui::settings_toml(s), "settings.toml");
    CHECK(back.warning.empty());
    CHECK(back.settings == s);
    const ui::LoadedSettings bad = ui::parse_settings("kind = \"settings\"\n[ensemble]\nchord = \"4:5:6\"\nreference = \"tenor\"\n", "my.toml");
    CHECK(bad.warning == "my.toml:4: `reference`: reference 'tenor': expected drone, bass or best-fit; using its default");
    CHECK(bad.settings.ensemble.chord == "4:5:6");
    CHECK(bad.settings.ensemble.reference == pitch::ChordReference::best_fit);
}

TEST_CASE("the Ensemble screen's edits reach the settings file; a bad edit changes nothing and says why") {
    TempDir home;
    const std::string file = home.file("settings.toml");
    ui::AppOptions o;
    o.demo = true;
    o.simulated = true;
    ui::AppState app(ui::Settings{}, file, o);
    app.start();
    ui::EnsembleSession session;
    session.update(app, 0.1);
    REQUIRE(session.ready());
    CHECK(session.players().size() == 4);  // the built-in harmonic seventh's four parts
    ui::EnsembleSettings e = app.settings().ensemble;
    e.names = "Bass,Tenor,Alto,Soprano";
    e.voices = "1,2,3,4";
    e.channels = "1,2,3,4";
    CHECK(session.apply(app, e));
    CHECK(session.players()[3].name == "Soprano");
    session.set_reference(app, pitch::ChordReference::fixed_root);
    for (int i = 0; i < 20; ++i) {
        app.update(0.1);
        session.update(app, 0.1);
    }
    CHECK(session.has_current());
    const ui::LoadedSettings saved = ui::load_settings(file);
    CHECK(saved.warning.empty());
    CHECK(saved.settings.ensemble.names == "Bass,Tenor,Alto,Soprano");
    CHECK(saved.settings.ensemble.reference == pitch::ChordReference::fixed_root);
    ui::EnsembleSettings bad = app.settings().ensemble;
    bad.voices = "1,2,3,7";
    CHECK_FALSE(session.apply(app, bad));
    CHECK(app.settings().ensemble.voices == "1,2,3,4");
    REQUIRE_FALSE(app.messages().empty());
    CHECK(app.messages().back().text == "Ensemble: --voices '1,2,3,7': '7' is not a voice of 4:5:6:7 (1 to 4)");
    app.shutdown();
}

TEST_CASE("Ensemble screen: left for another screen and shown again, the group's engine runs again") {
    // In-process, with the deck: the Ensemble screen stops the group's engine
    // when it is left; coming back must start it again (the status bar then
    // names the demo ensemble, not "no input").
    ui::Settings s;
    s.caution_acknowledged = true;
    ui::AppOptions o;
    o.demo = true;
    o.simulated = true;
    o.save_settings = false;
    ui::AppState app(s, std::filesystem::temp_directory_path() / "beatless-never-written.toml", o);
    ui::HostConfig hc;
    ui::ImGuiHost host(hc);
    ui::Rasterizer raster;
    ui::PixelBuffer buf;
    ui::ScreenDeck deck(app);
    app.start();
    auto frames = [&](int n) {
        for (int i = 0; i < n; ++i)
            ui::render_offscreen(host, raster, buf, 1.0f / 60.0f, [&] {
                app.update(1.0 / 60.0);
                deck.build_frame(1.0 / 60.0);
            });
    };
    auto status_names_group = [&] {
        Image img;
        img.w = buf.width_px;
        img.h = buf.height_px;
        img.px = buf.pixels;
        const Image input = render_text("the demo ensemble", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
        return !find_exact(img, input, rows(img, img.h - img.h / 12, img.h - 1)).empty();
    };
    deck.show(ui::ScreenId::ensemble);
    frames(30);
    CHECK(status_names_group());
    deck.show(ui::ScreenId::practice);
    frames(10);
    CHECK_FALSE(status_names_group());
    deck.show(ui::ScreenId::ensemble);
    frames(30);
    CHECK(status_names_group());
    app.shutdown();
}
