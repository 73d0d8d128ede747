// The TOML files in targets/: every built-in file loads, and malformed files
// give messages with file and line.
#include "pitch/base/error.h"
#include "ui/session/settings.h"
#include "ui/session/target_files.h"
#include "ui/session/toml_reader.h"
#include "tests/cli.h"

#include <doctest/doctest.h>

#include <algorithm>
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

TEST_CASE("the built-in target sets load and hold what the issue asks") {
    const auto names = ui::builtin_names("targets");
    for (const char* want : {"tritones", "5-limit", "7-limit", "11-limit", "harmonics-8-16"}) {
        CAPTURE(want);
        CHECK(std::find(names.begin(), names.end(), std::string(want)) != names.end());
    }
    const auto tri = ui::load_target_set("tritones");
    std::vector<std::string> got;
    for (const auto& t : tri.targets) got.push_back(t.interval.str());
    for (const char* want : {"7/5", "10/7", "11/8", "16/11", "15/11", "45/32", "64/45", "729/512", "1024/729", "600c"}) {
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
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n[[target]\ninterval = \"7/5\"\n").rfind("my.toml:3: ", 0) == 0);
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n\n[[target]]\ninterval = \"abc\"\n") ==
          "my.toml:5: `interval`: 'abc': not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n[[target]]\ninterval = 7\n") ==
          "my.toml:4: `interval`: must be a string, not an integer");
    CHECK(error_of_text("title = \"x\"\n") == "my.toml: `kind`: required key missing (write kind = \"targets\" on the first line)");
    CHECK(error_of_text("kind = \"drill\"\ntitle = \"x\"\n") == "my.toml:1: `kind`: is \"drill\", expected \"targets\"");
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n") == "my.toml:1: `[[target]]`: required table missing (add at least one)");
    CHECK(error_of_text("kind = \"targets\"\n[[target]]\ninterval = \"7/5\"\n") == "my.toml:1: `title`: required key missing");
}

TEST_CASE("target sets by path, and unknown names") {
    test::TempDir dir;
    { std::ofstream(dir.file("mine.toml")) << "kind = \"targets\"\ntitle = \"Mine\"\n[[target]]\ninterval = \"7/5\"\nname = \"my tritone\"\n"; }
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
    CHECK(error_of_text(head + "target = 3\n") == "my.toml:3: `target`: must be a list of [[target]] tables, not an integer");
}

TEST_CASE("target files: TOML syntax errors in our words, never the parser's") {
    const std::string head = "kind = \"targets\"\n";
    CHECK(error_of_text(head + "title = \"Tritones for Mira\n[[target]]\ninterval = \"7/5\"\n") ==
          "my.toml:2: `title`: a string is not closed: add the closing quote on this line");
    CHECK(error_of_text(head + "title = 'single\n") == "my.toml:2: `title`: a string is not closed: add the closing quote on this line");
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
    const ui::LoadedSettings l = ui::parse_settings("kind = \"settings\"\na4hz = 415\n[drone]\nroot = \"D3\"\nlevel = -20\n", "s.toml");
    CHECK(l.warning == "s.toml:2: `a4hz`: unknown key; did you mean `a4_hz`? (ignored) (and 1 more problem)");
    CHECK(l.settings.a4_hz == 440.0);  // not misread
    CHECK(l.settings.root == "D3");   // the good keys still count
    const ui::LoadedSettings t = ui::parse_settings("kind = \"settings\"\n[drone]\nroot = 110\n", "s.toml");
    CHECK(t.warning == "s.toml:3: `root`: must be a string; using its default");
}

TEST_CASE("every command that loads a malformed file stops with its one line and exit 1") {
    test::TempDir dir;
    const auto write = [&](const std::string& name, const std::string& text) {
        std::ofstream(dir.file(name)) << text;
        return dir.file(name);
    };
    const std::string set = write("tritones.toml", "kind = \"targets\"\ntitle = \"Tritones for Mira\"\n\n[[targets]]\ninterval = \"7/5\"\n");
    const std::string chord = write("choir.toml", "kind = \"chord\"\ntitle = \"Evening chord\"\nchrod = \"4:5:6\"\n");
    const std::string drill = write("drill.toml", "kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\n[[target]]\nintervall = \"7/5\"\n");
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
