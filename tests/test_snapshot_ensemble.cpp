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
//     (the least-squares root of pitch/theory/chord.h, equal weights);
//   - the deviation and the state's word ("sharp", "flat", "in tune") are
//     rendered offscreen with the same font and colour (Okabe & Ito 2008
//     orange, sky blue, bluish green) and found pixel for pixel in that
//     player's strip: the state is told by word and shape, not only colour.
#include "audio/demo_ensemble.h"
#include "pitch/base/text.h"
#include "tests/cli.h"
#include "tests/snapshot_pixels.h"
#include "ui/screens/screen.h"
#include "ui/screens/screen_ensemble.h"
#include "ui/session/app_state.h"
#include "ui/session/ensemble_session.h"
#include "ui/session/settings.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <memory>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::test;

namespace {

struct LaneBox {
    int x0 = 0, x1 = 0;  // the in-tune window's columns (inclusive)
    int top = 0;         // the lane's first row (+30 cents)
    int bottom = 0;      // one past its last row (-30 cents)
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
const char* word_of(double dev, double in_tune) {
    return std::fabs(dev) <= in_tune ? "in tune" : dev > 0 ? "sharp" : "flat";
}

std::string signed_whole(double v) {
    const long r = std::lround(v);
    return (r < 0 ? std::string("\xE2\x88\x92") : std::string("+")) + std::to_string(std::labs(r));
}

void check_screen(const std::string& reference, const std::vector<double>& expected) {
    TempDir home;
    std::filesystem::create_directories(home.path() + "/config");
    std::ofstream(home.path() + "/config/settings.toml")
        << "kind = \"settings\"\n[drone]\nroot = \"G2\"\n[ensemble]\nchord = \"4:5:6:7\"\nreference = \"" << reference
        << "\"\n";
    const std::string png = snapshot(
        home, "--demo --hold 0 --screen ensemble --seconds 3 --settings " + home.path() + "/config/settings.toml",
        "ensemble-" + reference + ".png");
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
        CHECK_MESSAGE(!find_exact(img, num, strip).empty(),
                      "the deviation " << signed_whole(expected[i]) << " is not shown in strip " << i);
        const Image word = render_text(word_of(expected[i], 5.0), ui::FontFace::medium, col, ui::palette::kPanel, 1.0f);
        CHECK_MESSAGE(!find_exact(img, word, strip).empty(),
                      "the word '" << word_of(expected[i], 5.0) << "' is not shown in strip " << i);
    }
    // The status bar names the group's input, not the Practice screen's.
    const Box bar = rows(img, img.h - img.h / 12, img.h - 1);
    const Image input =
        render_text("the demo ensemble", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
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
// [SECTION] The [ensemble] settings: saved, read back, and a bad value named
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
    const ui::LoadedSettings bad =
        ui::parse_settings("kind = \"settings\"\n[ensemble]\nchord = \"4:5:6\"\nreference = \"tenor\"\n", "my.toml");
    CHECK(bad.warning ==
          "my.toml:4: `reference`: reference 'tenor': expected drone, bass or best-fit; using its default");
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
        const Image input =
            render_text("the demo ensemble", ui::FontFace::bold, ui::palette::kText, ui::palette::kPanel, 1.0f);
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

// ---------------------------------------------------------------------------
// The screen's own view: each card agrees with its table row, no text
// overlaps another or leaves its panel, for 1, 4, 5 and 8 players at
// 1280x800 and at the smallest window (DEVELOPERS.md: 0.6 of 1180x700).
// ---------------------------------------------------------------------------

namespace {

// The Ensemble screen alone, in-process, with the deck's bars' heights.
struct ScreenRig {
    ui::AppState app;
    ui::ImGuiHost host;
    ui::Rasterizer raster;
    ui::PixelBuffer buf;
    std::unique_ptr<ui::Screen> screen = ui::make_ensemble_screen();
    double t_s = 0.0;
    static ui::AppOptions options(bool hold) {
        ui::AppOptions o;
        o.demo = true;
        o.simulated = true;
        o.save_settings = false;
        if (hold) o.hold_dev_cents = 0.0;
        return o;
    }
    static ui::HostConfig host_config(int w, int h) {
        ui::HostConfig hc;
        hc.width_px = w;
        hc.height_px = h;
        return hc;
    }
    ScreenRig(const ui::Settings& s, int w, int h, bool hold)
        : app(s, std::filesystem::temp_directory_path() / "beatless-never-written.toml", options(hold)),
          host(host_config(w, h)) {
        app.start();
    }
    ~ScreenRig() { app.shutdown(); }
    void run_to(double until_s) {
        constexpr double dt = 1.0 / 60.0;
        while (t_s < until_s - 1e-9) {
            ui::render_offscreen(host, raster, buf, static_cast<float>(dt), [&] {
                app.update(dt);
                const ImVec2 disp = ImGui::GetIO().DisplaySize;
                const float u = ui::ui_unit();
                const float top = std::round(2.3f * u),
                            status_h = std::round(1.9f * u);  // as ui/screens/screen.cpp lays out the deck
                screen->build(app, ui::ScreenArea{ImVec2(0, top), ImVec2(disp.x, disp.y - top - status_h)}, dt);
            });
            t_s += dt;
        }
    }
    const ui::EnsembleView& view() const { return *ui::ensemble_view(*screen); }
};

ui::Settings group_settings(const std::string& chord, const std::string& names) {
    ui::Settings s;
    s.caution_acknowledged = true;
    s.root = "C3";
    s.ensemble.chord = chord;
    s.ensemble.names = names;
    s.ensemble.reference = pitch::ChordReference::fixed_root;
    return s;
}

std::string octave_words(int octaves) {
    if (octaves == 0) return "";
    return (octaves > 0 ? "+" : "\xE2\x88\x92") + std::to_string(std::abs(octaves)) + " oct";
}

bool overlap(const ui::ViewBox& a, const ui::ViewBox& b) {
    return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1;
}
bool inside(const ui::ViewBox& a, const ui::ViewBox& p) {
    return a.x0 >= p.x0 - 0.5f && a.y0 >= p.y0 - 0.5f && a.x1 <= p.x1 + 0.5f && a.y1 <= p.y1 + 0.5f;
}

// No two texts overlap; none leaves its panel (so none is cut by it).
void check_texts(const ui::EnsembleView& v) {
    REQUIRE(!v.texts.empty());
    for (std::size_t a = 0; a < v.texts.size(); ++a) {
        CHECK_MESSAGE(inside(v.texts[a].box, v.texts[a].panel), "'" << v.texts[a].text << "' leaves its panel");
        for (std::size_t b = a + 1; b < v.texts.size(); ++b)
            CHECK_MESSAGE(!overlap(v.texts[a].box, v.texts[b].box),
                          "'" << v.texts[a].text << "' overlaps '" << v.texts[b].text << "'");
    }
}

struct Group {
    std::string chord, names;
    std::vector<std::string> ratios;  // each player's voice, in player order
    std::size_t voices;
};

void check_group(const Group& g, int w, int h) {
    ScreenRig rig(group_settings(g.chord, g.names), w, h, true);
    rig.run_to(3.0);
    const ui::EnsembleView& v = rig.view();
    CAPTURE(g.chord);
    CAPTURE(w);
    REQUIRE(v.cards.size() == g.ratios.size());
    // The table: every voice has a row or is counted in "+N more"; rows top voice first.
    CHECK(static_cast<std::size_t>(v.rows.size()) + static_cast<std::size_t>(v.rows_hidden) == g.voices);
    if (w >= 1280) CHECK(v.rows_hidden == 0);  // at 1280x800 every row is shown
    for (std::size_t k = 1; k < v.rows.size(); ++k)
        CHECK(pitch::parse_ratio(v.rows[k - 1].ratio).cents() > pitch::parse_ratio(v.rows[k].ratio).cents());
    CHECK(v.legend == (g.ratios.size() > 1));
    const double tol = rig.app.settings().in_tune_cents;
    for (std::size_t i = 0; i < v.cards.size(); ++i) {
        const ui::EnsembleCardView& c = v.cards[i];
        CAPTURE(i);
        CAPTURE(c.name);
        // The mapping: a plain list of names takes the voices top voice first
        // (parts are listed soprano to bass in a score: common practice); name=ratio says it.
        CHECK(c.ratio == g.ratios[i]);
        // The verdict: the demo singer k holds kHoldOffsetsCents[k] against the drone (audio/demo_ensemble.h).
        REQUIRE(c.state == ui::CardState::sounding);
        CHECK(std::fabs(c.dev_cents - audio::kHoldOffsetsCents[i]) <= 1.5);
        // Number, word and colour all say that one verdict (DESIGN.md "One reading, one verdict";
        // colours Okabe & Ito 2008 as the palette names them).
        CHECK(c.number == signed_whole(c.dev_cents));
        CHECK(c.word == word_of(c.dev_cents, tol));
        CHECK(c.colour == colour_of(c.dev_cents, tol));
        // Card and table agree: the card's ratio is its voice's row, and the
        // row names this player with the same octave the card shows.
        const std::string who = c.name + (c.octaves ? " " + octave_words(c.octaves) : "");
        bool found = false;
        for (const ui::EnsembleRowView& r : v.rows)
            if (r.ratio == c.ratio) {
                found = true;
                bool named = false;  // one of the row's comma-separated players is exactly this card's
                pitch::for_each_part(r.who, ',',
                                     [&](std::string_view part) { named = named || pitch::trim(part) == who; });
                CHECK_MESSAGE(named, "row " << r.ratio << " says '" << r.who << "', card says '" << who << "'");
            }
        CHECK((found || v.rows_hidden > 0));
    }
    check_texts(v);
}

const std::vector<Group> kGroups = {
    {"4:5:6:7", "Solo=3/2", {"3/2"}, 4},
    {"4:5:6:7", "S,A,T,B", {"7/4", "3/2", "5/4", "1/1"}, 4},
    {"4:5:6:7:8", "S1,S2,A,T,B", {"2/1", "7/4", "3/2", "5/4", "1/1"}, 5},
    {"8:9:10:11:12:13:14:15",
     "S1,S2,A1,A2,T1,T2,B1,B2",
     {"15/8", "7/4", "13/8", "3/2", "11/8", "5/4", "9/8", "1/1"},
     8},
};

}  // namespace

TEST_CASE(
    "Ensemble view at 1280x800: 1, 4, 5 and 8 players, cards agree with the table, no text overlaps or leaves its "
    "panel") {
    for (const Group& g : kGroups) check_group(g, 1280, 800);
}

TEST_CASE("Ensemble view at the smallest window (708x420): 1, 4, 5 and 8 players, the same agreement, no overlap") {
    for (const Group& g : kGroups) check_group(g, 708, 420);
}

TEST_CASE("Ensemble view: notes are spelled as `beatless chord` spells them (7/4 over C3 is Bb3)") {
    ScreenRig rig(group_settings("4:5:6:7", "S,A,T,B"), 1280, 800, true);
    rig.run_to(0.5);
    const ui::EnsembleView& v = rig.view();
    REQUIRE(v.rows.size() == 4);
    const auto r = run_program({"chord", "4:5:6:7", "--root", "C3", "--format", "json"});
    REQUIRE(r.exit_code == 0);
    for (std::size_t k = 0; k < 4; ++k)  // the table's rows are top voice first, the chart's voices lowest first
        CHECK(v.rows[k].note == json_value(r.out, "d['voices'][" + std::to_string(3 - k) + "]['note']"));
    CHECK(v.rows[0].note == "Bb3");  // a harmonic seventh above C is spelled as a flat seventh (common practice)
}

TEST_CASE("Ensemble view: within 100 ms of the group stopping, no card shows a verdict; each says 'last: ...'") {
    // The demo group's first phrase runs 0.3 s to 6.3 s (phrase_s 6 s), then breathes 0.8 s (audio/demo_ensemble.h).
    for (const Group& g : {kGroups[1], kGroups[3]}) {
        CAPTURE(g.chord);
        ScreenRig rig(group_settings(g.chord, g.names), 708, 420, false);
        rig.run_to(6.2);
        std::vector<std::string> before;
        for (const ui::EnsembleCardView& c : rig.view().cards) {
            CHECK(c.state == ui::CardState::sounding);
            before.push_back(c.number);
        }
        rig.run_to(6.3 + 0.1);
        const ui::EnsembleView& v = rig.view();
        for (std::size_t i = 0; i < v.cards.size(); ++i) {
            const ui::EnsembleCardView& c = v.cards[i];
            CAPTURE(c.name);
            CHECK(c.state == ui::CardState::resting);
            CHECK(std::isnan(c.dev_cents));
            CHECK(c.word == "resting");
            CHECK(c.number == "\xE2\x80\x93");
            CHECK(c.last.rfind("last: ", 0) == 0);
        }
        check_texts(v);
    }
}

TEST_CASE("Ensemble session: voices reassigned while the group sings on: one message names who sits near which voice") {
    // The demo group keeps singing what it was given (S 7/4, A 3/2, T 5/4, B 1/1:
    // names top voice first); the director then assigns voices otherwise on
    // the same channels, as a mistaken list would.
    struct Case {
        std::string names, message;
    };
    const std::vector<Case> cases = {
        {"S=1/1,A=5/4,T=3/2,B=7/4",
         "S near 7/4 (assigned 1/1), A near 3/2 (assigned 5/4), T near 5/4 (assigned 3/2), B near 1/1 (assigned 7/4): "
         "names are read top voice "
         "first; pick the voices below"},
        {"S=7/4,A=3/2,T=5/4,B=5/4",
         "B is singing near 1/1, assigned 5/4 (names are read top voice first; pick the voice below)"},
    };
    for (const Case& c : cases) {
        CAPTURE(c.names);
        ui::AppState app(group_settings("4:5:6:7", "S,A,T,B"),
                         std::filesystem::temp_directory_path() / "beatless-never-written.toml",
                         ScreenRig::options(true));
        app.start();
        ui::EnsembleSession session;
        auto run = [&](double secs) {
            for (int k = 0; k < static_cast<int>(secs * 20); ++k) {
                app.update(0.05);
                session.update(app, 0.05);
            }
        };
        auto said = [&] {
            return static_cast<int>(std::count_if(app.messages().begin(), app.messages().end(),
                                                  [&](const ui::Message& m) { return m.text == c.message; }));
        };
        run(1.5);
        ui::EnsembleSettings e = app.settings().ensemble;
        e.names = c.names;
        REQUIRE(session.apply(app, e));
        run(0.3);
        CHECK(said() == 0);  // not before half a second
        run(1.2);
        CHECK(said() == 1);  // once, not every reading
        app.shutdown();
    }
}
