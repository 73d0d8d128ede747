// The TOML files in targets/: every built-in file loads, and malformed files
// give messages with file and line.
#include "pitch/base/error.h"
#include "tests/cli.h"
#include "ui/session/settings.h"
#include "ui/session/target_files.h"
#include "ui/session/toml_reader.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <fstream>

using namespace beatless;

namespace {
std::string error_of_text(const std::string& text) {
    try {
        (void)ui::parse_target_set(text, "my.toml");
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}
}  // namespace

TEST_CASE("each built-in file's kind, read when it was embedded, is the kind the TOML parser reads and accepts") {
    // The reference is toml++ (an outside TOML parser) on the same text.
    for (const auto& f : ui::embedded_target_files()) {
        CAPTURE(f.name);
        const toml::table t = toml::parse(f.text);
        CHECK(std::string(f.kind) == t["kind"].value_or(std::string()));
        CHECK_NOTHROW((void)ui::parse_toml(f.text, f.name, f.kind));
    }
    CHECK(ui::builtin_names("chord").size() >= 5);
    CHECK(ui::builtin_names("drill").size() >= 5);
}

TEST_CASE("the built-in target sets load and hold what the issue asks") {
    const auto names = ui::builtin_names("targets");
    for (const char* want : {"tritones", "5-limit", "7-limit", "11-limit", "harmonics-8-16"}) {
        CAPTURE(want);
        CHECK(std::find(names.begin(), names.end(), std::string(want)) != names.end());
    }
    const auto tri = ui::load_target_set("tritones");
    std::vector<std::string> got;
    for (const auto& t : tri.targets) got.push_back(t.interval.str());
    for (const char* want :
         {"7/5", "10/7", "11/8", "16/11", "15/11", "45/32", "64/45", "729/512", "1024/729", "600c"}) {
        CAPTURE(want);
        CHECK(std::find(got.begin(), got.end(), std::string(want)) != got.end());
    }
    for (const auto& t : tri.targets) CHECK_FALSE(t.name.empty());  // every tritone is named
    // Harmonics 8..16 reduced over the 8th: 8:9:10:11:12:13:14:15:16.
    const auto h = ui::load_target_set("harmonics-8-16");
    REQUIRE(h.targets.size() == 9);
    for (std::size_t i = 0; i < 9; ++i)
        CHECK(h.targets[i].interval.ratio() == pitch::Ratio::make(static_cast<std::int64_t>(8 + i), 8));
    // Each n-limit set stays within its prime limit and within the octave.
    for (auto [set, limit] : {std::pair{"5-limit", 5}, {"7-limit", 7}, {"11-limit", 11}}) {
        for (const auto& t : ui::load_target_set(set).targets) {
            CAPTURE(t.interval.str());
            CHECK(pitch::prime_limit(t.interval.ratio()) <= limit);
            CHECK(t.interval.cents() >= 0.0);
            CHECK(t.interval.cents() <= 1200.0);
        }
    }
}

TEST_CASE("malformed target files name the file and the line") {
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n[[target]\ninterval = \"7/5\"\n").rfind("my.toml:3: ", 0) ==
          0);
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n\n[[target]]\ninterval = \"abc\"\n") ==
          "my.toml:5: `interval`: 'abc': not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n[[target]]\ninterval = 7\n") ==
          "my.toml:4: `interval`: must be a string, not an integer");
    CHECK(error_of_text("title = \"x\"\n") ==
          "my.toml: `kind`: required key missing (write kind = \"targets\" on the first line)");
    CHECK(error_of_text("kind = \"drill\"\ntitle = \"x\"\n") ==
          "my.toml:1: `kind`: is \"drill\", expected \"targets\"");
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n") ==
          "my.toml:1: `[[target]]`: required table missing (add at least one)");
    CHECK(error_of_text("kind = \"targets\"\n[[target]]\ninterval = \"7/5\"\n") ==
          "my.toml:1: `title`: required key missing");
}

TEST_CASE("target sets by path, and unknown names") {
    test::TempDir dir;
    {
        std::ofstream(dir.file("mine.toml"))
            << "kind = \"targets\"\ntitle = \"Mine\"\n[[target]]\ninterval = \"7/5\"\nname = \"my tritone\"\n";
    }
    const auto s = ui::load_target_set(dir.file("mine.toml"));
    CHECK(s.id == "mine");
    CHECK(s.targets.at(0).name == "my tritone");
    CHECK_THROWS_WITH(ui::load_target_set(dir.file("nope.toml")), (dir.file("nope.toml") + ": no such file").c_str());
    try {
        (void)ui::load_target_set("tritonez");
        FAIL("no error");
    } catch (const Error& e) {
        CHECK(std::string(e.what()).rfind("'tritonez': no built-in targets file of that name (known: ", 0) == 0);
    }
}

// [SECTION] Strict files: every malformed case gives one line naming file, line and key
//
// The message form is ours: "file:line: `key`: problem[; did you mean `x`?]".
// Suggestions use the optimal string alignment distance (Damerau 1964:
// insertion, deletion, substitution and a swap of neighbours are one edit each).

TEST_CASE("edit distance matches the published textbook examples") {
    // Levenshtein's classic example kitten -> sitting is 3 edits (Levenshtein
    // 1966; the usual textbook example, from memory); with neighbour swaps
    // "ca" -> "ac" is 1 edit (Damerau 1964), and OSA gives "ca" -> "abc" 3
    // (the standard counter-example to true Damerau-Levenshtein, from memory).
    CHECK(ui::edit_distance("kitten", "sitting") == 3);
    CHECK(ui::edit_distance("ca", "ac") == 1);
    CHECK(ui::edit_distance("ca", "abc") == 3);
    CHECK(ui::edit_distance("name", "name") == 0);
    CHECK(ui::closest_name("nmae", {"interval", "name"}) == "name");
    CHECK(ui::closest_name("targets", {"kind", "title", "about", "target"}) == "target");
    CHECK(ui::closest_name("colour", {"interval", "name"}).empty());  // nothing close: no guess
}

TEST_CASE("target files: typos, types, missing keys and syntax each give one line") {
    const std::string head = "kind = \"targets\"\ntitle = \"Tritones for Mira\"\n";
    // A plural table header would drop every entry in silence.
    CHECK(error_of_text(head + "\n[[targets]]\ninterval = \"7/5\"\n") ==
          "my.toml:4: `[[targets]]`: unknown table; did you mean `[[target]]`?");
    CHECK(error_of_text(head + "[[target]]\ninterval = \"7/5\"\nnmae = \"septimal tritone\"\n") ==
          "my.toml:5: `nmae`: unknown key in [[target]]; did you mean `name`?");
    CHECK(error_of_text(head + "abuot = \"x\"\n[[target]]\ninterval = \"7/5\"\n") ==
          "my.toml:3: `abuot`: unknown key; did you mean `about`?");
    CHECK(error_of_text(head + "colour = \"red\"\n[[target]]\ninterval = \"7/5\"\n") ==
          "my.toml:3: `colour`: unknown key (known: title, about, target)");
    CHECK(error_of_text(head + "[[target]]\ninterval = \"7/5\"\nname = 7\n") ==
          "my.toml:5: `name`: must be a string, not an integer");
    CHECK(error_of_text(head + "[[target]]\nname = \"lonely\"\n") == "my.toml:3: `interval`: required key missing");
    CHECK(error_of_text(head + "target = 3\n") ==
          "my.toml:3: `target`: must be a list of [[target]] tables, not an integer");
}

TEST_CASE("target files: TOML syntax errors in our words, never the parser's") {
    const std::string head = "kind = \"targets\"\n";
    CHECK(error_of_text(head + "title = \"Tritones for Mira\n[[target]]\ninterval = \"7/5\"\n") ==
          "my.toml:2: `title`: a string is not closed: add the closing quote on this line");
    CHECK(error_of_text(head + "title = 'single\n") ==
          "my.toml:2: `title`: a string is not closed: add the closing quote on this line");
    CHECK(error_of_text(head + "title = \n") == "my.toml:2: `title`: no value after `=`");
    CHECK(error_of_text(head + "title = \"a\"\ntitle = \"b\"\n") == "my.toml:3: `title`: given twice: keep one");
    CHECK(error_of_text(head + "title = \"a\"\n[[target]\n") ==
          "my.toml:3: `[[target]]`: a table header is not closed: write [name] or [[name]]");
    CHECK(error_of_text(head + "title \"a\"\n") == "my.toml:2: expected `=` after the key");
    CHECK(error_of_text(head + "title = \"a\\q\"\n") ==
          "my.toml:2: `title`: a backslash starts an unknown escape in a string (write \\\\ for a backslash)");
    for (const std::string bad : {"title = \"x\n", "a = [1, 2\n", "a = tru\n", "a = {b = 1\n", "a = 1 2\n"}) {
        CAPTURE(bad);
        const std::string m = error_of_text(head + bad);
        CHECK(m.starts_with("my.toml:2: "));
        CHECK(m.find("Error while parsing") == std::string::npos);  // the library's own words
        CHECK(m.find('\n') == std::string::npos);
    }
}

TEST_CASE("names.toml and the settings file reject or report unknown keys") {
    // Settings: a bad key warns and is ignored; the file still loads.
    const ui::LoadedSettings l =
        ui::parse_settings("kind = \"settings\"\na4hz = 415\n[drone]\nroot = \"D3\"\nlevel = -20\n", "s.toml");
    CHECK(l.warning == "s.toml:2: `a4hz`: unknown key; did you mean `a4_hz`? (ignored) (and 1 more problem)");
    CHECK(l.settings.a4_hz == 440.0);  // not misread
    CHECK(l.settings.root == "D3");    // the good keys still count
    const ui::LoadedSettings t = ui::parse_settings("kind = \"settings\"\n[drone]\nroot = 110\n", "s.toml");
    CHECK(t.warning == "s.toml:3: `root`: must be a string; using its default");
}

TEST_CASE("every command that loads a malformed file stops with its one line and exit 1") {
    test::TempDir dir;
    const auto write = [&](const std::string& name, const std::string& text) {
        std::ofstream(dir.file(name)) << text;
        return dir.file(name);
    };
    const std::string set = write(
        "tritones.toml", "kind = \"targets\"\ntitle = \"Tritones for Mira\"\n\n[[targets]]\ninterval = \"7/5\"\n");
    const std::string chord = write("choir.toml", "kind = \"chord\"\ntitle = \"Evening chord\"\nchrod = \"4:5:6\"\n");
    const std::string drill =
        write("drill.toml", "kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\n[[target]]\nintervall = \"7/5\"\n");
    const std::string set_msg = set + ":4: `[[targets]]`: unknown table; did you mean `[[target]]`?\n";
    const std::string chord_msg = chord + ":3: `chrod`: unknown key; did you mean `chord`?\n";
    const std::string drill_msg = drill + ":5: `intervall`: unknown key in [[target]]; did you mean `interval`?\n";
    const std::string png = dir.file("x.png");
    const std::vector<std::pair<std::vector<std::string>, std::string>> runs = {
        {{"listen", "--demo", "--seconds", "0.1", "--targets", set}, set_msg},
        {{"snapshot", "--demo", "--targets", set, "--out", png}, set_msg},
        {{"chord", chord, "--root", "D3"}, chord_msg},
        {{"ensemble", chord, "--demo", "--seconds", "0.1"}, chord_msg},
        {{"drill", drill, "--demo"}, drill_msg},
        {{"snapshot", "--demo", "--drill", drill, "--out", png}, drill_msg},
    };
    for (const auto& [args, msg] : runs) {
        CAPTURE(args[0]);
        const test::RunResult r = test::run_program(args);
        CHECK(r.exit_code == 1);
        CHECK(r.err == "beatless: " + msg);
    }
}

// [SECTION] The sets of issue 18: every tuning system of the tritones
//
// Sources: cents of each ratio as printed in the Huygens-Fokker Foundation's
// "List of intervals" (the interval list shipped with Scala, M. Op de Coul),
// to 3 decimals, from memory of that table; the commas 81/80 (syntonic), 50/49
// (septimal sixth-tone), 64/63 (septimal), 128/125 (lesser diesis) and
// 531441/524288 (Pythagorean) are named and sized there too. That a chord's
// voices over its lowest are the intervals sung over a drone is common practice.

namespace {

std::vector<pitch::Ratio> set_ratios(const char* name) {
    std::vector<pitch::Ratio> out;
    for (const auto& t : ui::load_target_set(name).targets)
        if (t.interval.is_ratio()) out.push_back(t.interval.ratio());  // 600c has no ratio
    return out;
}

pitch::Ratio r(std::int64_t n, std::int64_t d) { return pitch::Ratio::make(n, d); }

bool holds(const std::vector<pitch::Ratio>& set, const pitch::Ratio& want) {
    return std::find(set.begin(), set.end(), want) != set.end();
}

}  // namespace

TEST_CASE("22/15 joins the tritone family and the 11-limit set as the inversion of 15/11") {
    for (const char* set : {"tritones", "11-limit"}) {
        CAPTURE(set);
        const auto s = set_ratios(set);
        CHECK(holds(s, r(15, 11)));
        CHECK(holds(s, r(22, 15)));
        CHECK(r(15, 11) * r(22, 15) == r(2, 1));  // inversion within the octave
    }
    CHECK(r(22, 15).cents() == doctest::Approx(663.049).epsilon(1e-6));  // Huygens-Fokker list
    // Every tritone of the family has its inversion in the family (common practice).
    const auto tri = ui::load_target_set("tritones");
    for (const auto& t : tri.targets) {
        CAPTURE(t.interval.str());
        bool found = false;
        for (const auto& u : tri.targets)
            found = found || std::abs(t.interval.cents() + u.interval.cents() - 1200.0) < 1e-9;
        CHECK(found);
        CHECK_FALSE(t.name.empty());
    }
}

TEST_CASE("the whole-tone scales and their drift from the octave") {
    const auto five = set_ratios("whole-tones-5-limit");
    const auto pyth = set_ratios("whole-tones-pythagorean");
    REQUIRE(five.size() == 8);
    REQUIRE(pyth.size() == 8);
    // Each step is a whole tone: 9/8 and 10/9 in turn, or 9/8 throughout.
    for (std::size_t i = 1; i + 1 < five.size(); ++i) {
        CAPTURE(i);
        CHECK(five[i] / five[i - 1] == (i % 2 ? r(9, 8) : r(10, 9)));
        CHECK(pyth[i] / pyth[i - 1] == r(9, 8));
    }
    // Six steps miss the octave: three 5/4 fall short by the lesser diesis
    // 128/125 = 41.059 c; six 9/8 overshoot by the Pythagorean comma
    // 531441/524288 = 23.460 c (Huygens-Fokker list).
    CHECK(five[6] == r(125, 64));
    CHECK(r(2, 1) / five[6] == r(128, 125));
    CHECK((r(2, 1) / five[6]).cents() == doctest::Approx(41.059).epsilon(1e-5));
    CHECK(pyth[6] == r(531441, 262144));
    CHECK(pyth[6] / r(2, 1) == r(531441, 524288));
    CHECK((pyth[6] / r(2, 1)).cents() == doctest::Approx(23.460).epsilon(1e-4));
    // The two tritones on the way differ by the syntonic comma 81/80 = 21.506 c.
    CHECK(pyth[3] / five[3] == r(81, 80));
    CHECK((pyth[3] / five[3]).cents() == doctest::Approx(21.506).epsilon(1e-4));
    // Cents of the other degrees (Huygens-Fokker list).
    CHECK(five[4].cents() == doctest::Approx(772.627).epsilon(1e-6));
    CHECK(five[5].cents() == doctest::Approx(976.537).epsilon(1e-6));
    CHECK(pyth[4].cents() == doctest::Approx(815.640).epsilon(1e-6));
    CHECK(pyth[5].cents() == doctest::Approx(1019.550).epsilon(1e-6));
    for (const char* set : {"whole-tones-5-limit", "whole-tones-pythagorean"}) {
        CAPTURE(set);
        for (const auto& t : ui::load_target_set(set).targets) CHECK_FALSE(t.name.empty());
    }
}

TEST_CASE("the septimal pairs: 50/49 between the tritones, 64/63 between the sevenths") {
    // 10/7 over 7/5 is the septimal sixth-tone 50/49 = 34.976 c; 16/9 over 7/4
    // the septimal comma 64/63 = 27.264 c (Huygens-Fokker list).
    CHECK(r(10, 7) / r(7, 5) == r(50, 49));
    CHECK(r(50, 49).cents() == doctest::Approx(34.976).epsilon(1e-4));
    CHECK(r(16, 9) / r(7, 4) == r(64, 63));
    CHECK(r(64, 63).cents() == doctest::Approx(27.264).epsilon(1e-4));
    const auto tri = set_ratios("tritones");
    CHECK(holds(tri, r(7, 5)));
    CHECK(holds(tri, r(10, 7)));
    const auto five = set_ratios("5-limit");
    const auto seven = set_ratios("7-limit");
    CHECK(holds(five, r(16, 9)));
    CHECK(holds(seven, r(7, 4)));
}

TEST_CASE("the fifthless pentatonic stands on two 11/8 tritones") {
    const auto p = set_ratios("pentatonic-11");
    const std::vector<pitch::Ratio> want = {r(1, 1), r(55, 48), r(5, 4), r(11, 8), r(5, 3), r(2, 1)};
    CHECK(p == want);
    CHECK_FALSE(holds(p, r(3, 2)));                                      // no fifth over the root
    CHECK(r(11, 8) / r(1, 1) == r(11, 8));                               // the first tritone, on the root
    CHECK(r(55, 48) * r(2, 1) / r(5, 3) == r(11, 8));                    // the second, on the 5/3
    CHECK(r(55, 48).cents() == doctest::Approx(235.677).epsilon(1e-5));  // computed 1200 log2(55/48)
    // No two notes of the set make a perfect fifth; the one perfect interval
    // is the fourth from 5/4 up to 5/3 (common practice: a fifthless scale).
    int fourths = 0;
    for (std::size_t i = 0; i < p.size(); ++i)
        for (std::size_t j = i + 1; j < p.size(); ++j) {
            CHECK(p[j] / p[i] != r(3, 2));
            fourths += p[j] / p[i] == r(4, 3);
        }
    CHECK(fourths == 1);
}

TEST_CASE("the harmonic-series Lydian and the harmonic scale 8 to 16") {
    const auto l = set_ratios("harmonic-lydian");
    std::vector<pitch::Ratio> want;
    for (std::int64_t n : {8, 9, 10, 11, 12, 13, 15, 16}) want.push_back(r(n, 8));
    CHECK(l == want);
    // The raised fourth is the 11th harmonic, 551.318 c; 48.682 c below the
    // tempered augmented fourth (Huygens-Fokker list for 11/8).
    CHECK(l[3].cents() == doctest::Approx(551.318).epsilon(1e-6));
    CHECK(l[5].cents() == doctest::Approx(840.528).epsilon(1e-6));
    // 11/8 over the 5-limit fourth 4/3 is the undecimal comma 33/32 = 53.273 c.
    CHECK(l[3] / r(4, 3) == r(33, 32));
    CHECK(r(33, 32).cents() == doctest::Approx(53.273).epsilon(1e-5));
}

TEST_CASE("a chord file is a target set: its voices above the lowest") {
    const auto c = ui::load_target_set("harmonic-cluster");
    CHECK(c.id == "harmonic-cluster");
    CHECK(c.title == "Harmonic cluster 8 to 12");
    const std::vector<pitch::Ratio> want = {r(9, 8), r(5, 4), r(11, 8), r(3, 2)};
    CHECK(set_ratios("harmonic-cluster") == want);
    for (const auto& t : c.targets) CHECK_FALSE(t.name.empty());
    // 5:6:7, the just diminished triad: 6/5 and 7/5 over the lowest voice.
    CHECK(set_ratios("septimal-diminished") == std::vector<pitch::Ratio>{r(6, 5), r(7, 5)});
    // By path as well, and a drill may name a chord as its target_set.
    test::TempDir dir;
    { std::ofstream(dir.file("triad.toml")) << "kind = \"chord\"\ntitle = \"Mine\"\nchord = \"1/1 5/4 3/2\"\n"; }
    CHECK(set_ratios(dir.file("triad.toml").c_str()) == std::vector<pitch::Ratio>{r(5, 4), r(3, 2)});
    // A bad chord file still names its file and line.
    { std::ofstream(dir.file("bad.toml")) << "kind = \"chord\"\ntitle = \"Mine\"\nchord = \"4:0:6\"\n"; }
    try {
        (void)ui::load_target_set(dir.file("bad.toml"));
        FAIL("no error");
    } catch (const Error& e) {
        CHECK(std::string(e.what()).rfind(dir.file("bad.toml") + ":3: `chord`: ", 0) == 0);
    }
}

TEST_CASE("every shipped set and chord says what it is in one sentence") {
    std::vector<std::string> all = ui::builtin_names("targets");
    for (const auto& n : ui::builtin_names("chord")) all.push_back(n);
    for (const auto& name : all) {
        CAPTURE(name);
        const std::string about = ui::load_target_set(name).about;
        REQUIRE_FALSE(about.empty());
        CHECK(about.back() == '.');
        // One sentence: no full stop followed by a space and a capital inside.
        for (std::size_t i = 0; i + 2 < about.size(); ++i)
            CHECK_FALSE(
                (about[i] == '.' && about[i + 1] == ' ' && std::isupper(static_cast<unsigned char>(about[i + 2]))));
    }
}
