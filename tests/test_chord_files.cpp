// Chord files: the built-in chords in targets/ and messages for bad files.
//
// The built-in chords are checked against their published or hand-worked
// terms and cents (Ellis's table of intervals, 1885, from memory, for the
// cents; the terms are the definitions of the chords, common practice).
#include "pitch/base/error.h"
#include "ui/session/chord_files.h"
#include "ui/session/target_files.h"

#include <doctest/doctest.h>

#include <cmath>
#include <string>

using namespace beatless;
using namespace beatless::ui;

namespace {

std::string error_of(const char* text) {
    try {
        (void)parse_chord_file(text, "my.toml");
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}

}  // namespace

TEST_CASE("every built-in chord loads, and the ones the issue names are there") {
    const auto names = builtin_names("chord");
    CHECK(names.size() >= 7);
    for (const auto& n : names) {
        const ChordFile f = load_chord_file(n);
        CHECK_FALSE(f.title.empty());
        CHECK(f.id == n);
        if (!f.voice_names.empty()) CHECK(f.voice_names.size() == f.chord.size());
    }
    CHECK(load_chord_file("major-triad").chord.terms_text() == "4:5:6");
    CHECK(load_chord_file("minor-triad").chord.terms_text() == "10:12:15");
    CHECK(load_chord_file("harmonic-seventh").chord.terms_text() == "4:5:6:7");
    CHECK(load_chord_file("septimal-minor").chord.terms_text() == "6:7:9");
    CHECK(load_chord_file("septimal-diminished").chord.terms_text() == "5:6:7");
    CHECK(load_chord_file("harmonic-cluster").chord.terms_text() == "8:9:10:11:12");
    const ChordFile tri = load_chord_file("tritone-dominant");
    CHECK(tri.chord.terms_text() == "4:5:7");
    // Its upper two voices form the septimal tritone 7/5, 582.512 cents.
    CHECK(std::fabs(tri.chord.voice_cents(2) - tri.chord.voice_cents(1) - 582.512) < 5e-4);
    // The septimal minor third 7/6 of 6:7:9 is 266.871 cents.
    CHECK(std::fabs(load_chord_file("septimal-minor").chord.voice_cents(1) - 266.871) < 5e-4);
}

TEST_CASE("a chord argument may be text, a built-in name or a path") {
    CHECK(chord_from_argument("4:5:6:7").chord.size() == 4);
    CHECK(chord_from_argument("4:5:6:7").title.empty());
    CHECK(chord_from_argument("1/1 5/4 3/2").chord.terms_text() == "4:5:6");
    CHECK(chord_from_argument("harmonic-seventh").title == "Harmonic seventh chord");
    const std::string path = BEATLESS_SOURCE_DIR "/targets/minor-triad.toml";
    CHECK(chord_from_argument(path).chord.terms_text() == "10:12:15");
    CHECK_THROWS_WITH_AS(chord_from_argument("4:0:6"), "'4:0:6': chord terms must be positive", Error);
    const std::string unknown = [] {
        try {
            (void)chord_from_argument("nosuch");
        } catch (const Error& e) {
            return std::string(e.what());
        }
        return std::string();
    }();
    CHECK(unknown.starts_with("'nosuch': no built-in chord file of that name (known: harmonic-cluster"));
    CHECK_THROWS_WITH_AS(chord_from_argument("/no/such/file.toml"), "/no/such/file.toml: no such file", Error);
}

TEST_CASE("bad chord files name the file and line") {
    CHECK(error_of("kind = \"chord\"\ntitle = \"x\"\nchord = \"4:0:6\"\n") ==
          "my.toml:3: `chord`: '4:0:6': chord terms must be positive");
    CHECK(error_of("kind = \"chord\"\ntitle = \"x\"\n") == "my.toml:1: `chord`: required key missing");
    CHECK(error_of("kind = \"targets\"\ntitle = \"x\"\nchord = \"4:5:6\"\n") ==
          "my.toml:1: `kind`: is \"targets\", expected \"chord\"");
    CHECK(error_of("kind = \"chord\"\ntitle = \"x\"\nchord = \"4:5:6\"\nvoices = [\"a\", \"b\"]\n") ==
          "my.toml:4: `voices`: names 2 parts but the chord '4:5:6' has 3 voices");
    CHECK(error_of("kind = \"chord\"\ntitle = \"x\"\nchord = \"4:5:6\"\nvoices = [\"a\", 2, \"c\"]\n") ==
          "my.toml:4: `voices`: each entry must be a string, not an integer");
    CHECK(error_of("kind = \"chord\"\ntitle = 3\nchord = \"4:5:6\"\n") ==
          "my.toml:2: `title`: must be a string, not an integer");
    CHECK(error_of("kind = \"chord\"\ntitle = \"x\"\nchord = 456\n") ==
          "my.toml:3: `chord`: must be a string, not an integer");
}
