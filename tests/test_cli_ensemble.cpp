// `beatless ensemble` from the command line: a generated four-channel take
// through --input-file --fast (JSON lines and the summary, read by Python's
// json module), the demo ensemble, and every bad input with its one-line
// message and exit code (DESIGN.md: 1 bad input, 2 bad usage).
#include "audio/soundfile.h"
#include "tests/cli.h"
#include "tests/ensemble_signals.h"

#include <doctest/doctest.h>

#include <cmath>
#include <string>

using namespace beatless;

namespace {

constexpr double kRootHz = 98.0;

std::vector<test::GroupVoice> quartet() {
    return {
        {"B", 0, 0, -3.0, 4.9, 15.0, 0.14, false},
        {"T", 1, 1, +2.5, 5.5, 24.0, 0.12, false},
        {"A", 2, 2, -4.0, 5.2, 20.0, 0.12, false},
        {"S", 3, 3, +7.5, 5.8, 28.0, 0.12, false},
    };
}

std::string last_line(const std::string& s) {
    const auto end = s.find_last_not_of('\n');
    const auto start = s.rfind('\n', end);
    return s.substr(start == std::string::npos ? 0 : start + 1, end - (start == std::string::npos ? 0 : start + 1) + 1);
}

struct Take {
    test::TempDir dir;
    std::string path;
    Take() : path(dir.file("quartet.wav")) {
        test::GroupTake t;
        test::render_group(t, pitch::parse_chord("4:5:6:7"), kRootHz, quartet());
        test::write_take(path, t.rate_hz, t.channels, t.interleaved);
    }
};

}  // namespace

TEST_CASE("ensemble --input-file --fast --format json: the summary's medians match each reference within 1 cent") {
    Take take;
    const auto g = quartet();
    for (pitch::ChordReference ref :
         {pitch::ChordReference::fixed_root, pitch::ChordReference::sounding_bass, pitch::ChordReference::best_fit}) {
        const std::string key(pitch::reference_key(ref));
        const auto r =
            test::run_program({"ensemble", "4:5:6:7", "--root", "98", "--input-file", take.path, "--fast", "--format",
                               "json", "--reference", key, "--names", "B=1/1,T=5/4,A=3/2,S=7/4"});
        INFO(key << ": " << r.err);
        REQUIRE(r.exit_code == 0);
        const std::string summary = last_line(r.out);
        CHECK(test::json_value(summary, "d['summary']['reference']") == key);
        for (std::size_t i = 0; i < g.size(); ++i) {
            const double med = std::stod(
                test::json_value(summary, "d['summary']['players'][" + std::to_string(i) + "]['median_dev_cents']"));
            INFO(g[i].name << " median " << med);
            CHECK(std::fabs(med - test::expected_dev(g, i, ref)) < 1.0);
        }
        // A reading line: every player sounding, the roots agree with the reference chosen.
        const std::string line = r.out.substr(0, r.out.find('\n'));
        CHECK(test::json_value(line, "sorted(d.keys())") ==
              "['beats', 'players', 'reference', 'root_hz', 'roots', 't']");
    }
    // Readings every 0.1 s by default: about ten per second of the 3 s take, plus the summary.
    const auto r = test::run_program(
        {"ensemble", "4:5:6:7", "--root", "98", "--input-file", take.path, "--fast", "--format", "json"});
    REQUIRE(r.exit_code == 0);
    CHECK(test::line_count(r.out) >= 29);
    CHECK(test::line_count(r.out) <= 33);
    // Mid-take, the harmonic seventh's beats: tenor (5) against bass (4) meet at partials 5 and 4.
    const std::string mid = [&] {
        std::size_t at = 0;
        for (int k = 0; k < 15; ++k) at = r.out.find('\n', at) + 1;
        return r.out.substr(at, r.out.find('\n', at) - at);
    }();
    CHECK(test::json_value(mid, "[b['partials'] for b in d['beats'] if b['channels'] == [1, 2]][0]") == "[5, 4]");
    CHECK(test::json_value(mid, "[p['state'] for p in d['players']]") ==
          "['sounding', 'sounding', 'sounding', 'sounding']");
}

TEST_CASE("ensemble text: a line per player and a summary with sharp and flat in words") {
    Take take;
    const auto r =
        test::run_program({"ensemble", "4:5:6:7", "--root", "98", "--input-file", take.path, "--fast", "--reference",
                           "drone", "--names", "Soprano,Alto,Tenor,Bass", "--channels", "4,3,2,1", "--in-tune", "3"});
    INFO(r.err);
    REQUIRE(r.exit_code == 0);
    CHECK(r.out.find("reference: Drone root") != std::string::npos);
    // Soprano +7.5 sharp, alto -4 flat, tenor +2.5 in tune, bass -3 in tune (within 3 cents).
    CHECK(r.out.find("+7.") != std::string::npos);
    for (const char* row : {"Soprano", "Alto", "Tenor", "Bass"}) CHECK(r.out.find(row) != std::string::npos);
    auto row_of = [&](const std::string& name) {
        const auto at = r.out.rfind("  " + name + " ");
        return r.out.substr(at, r.out.find('\n', at) - at);
    };
    CHECK(row_of("Soprano").find("sharp") != std::string::npos);
    CHECK(row_of("Alto").find("flat") != std::string::npos);
    CHECK(row_of("Tenor").find("in tune") != std::string::npos);
}

// Parts are listed top voice first in a score (soprano, alto, tenor, bass:
// common practice), so a plain list of names takes the chord's voices from
// the top down; name=ratio says each voice outright.
TEST_CASE(
    "ensemble --names: a plain list maps top voice first; name=ratio maps each; the JSON says which ratio each sings") {
    Take take;
    auto ratios = [&](const std::vector<std::string>& extra) {
        std::vector<std::string> args = {"ensemble", "4:5:6:7", "--root",   "98",  "--input-file",
                                         take.path,  "--fast",  "--format", "json"};
        args.insert(args.end(), extra.begin(), extra.end());
        const auto r = test::run_program(args);
        INFO(r.err);
        REQUIRE(r.exit_code == 0);
        return test::json_value(last_line(r.out),
                                "[(p['name'], p['channel'], p['ratio']) for p in d['summary']['players']]");
    };
    // The quartet's channels carry bass, tenor, alto, soprano (ch 1 to 4).
    CHECK(ratios({"--names", "S,A,T,B", "--channels", "4,3,2,1"}) ==
          "[('S', 4, '7/4'), ('A', 3, '3/2'), ('T', 2, '5/4'), ('B', 1, '1/1')]");
    CHECK(ratios({"--names", "B=1/1,T=5/4,A=3/2,S=7/4"}) ==
          "[('B', 1, '1/1'), ('T', 2, '5/4'), ('A', 3, '3/2'), ('S', 4, '7/4')]");
    // An octave of a voice names that voice (7/2 is 7/4 an octave up).
    CHECK(ratios({"--names", "B=1/1,T=5/4,A=3/2,S=7/2"}) ==
          "[('B', 1, '1/1'), ('T', 2, '5/4'), ('A', 3, '3/2'), ('S', 4, '7/4')]");
    // Three names: the top three voices.
    CHECK(ratios({"--names", "S,A,T", "--channels", "4,3,2"}) == "[('S', 4, '7/4'), ('A', 3, '3/2'), ('T', 2, '5/4')]");
    // --voices still numbers from the lowest, names then only label.
    CHECK(ratios({"--names", "B,T,A,S", "--voices", "1,2,3,4"}) ==
          "[('B', 1, '1/1'), ('T', 2, '5/4'), ('A', 3, '3/2'), ('S', 4, '7/4')]");
}

TEST_CASE("ensemble: a player far from their assigned voice and near another's is named in one warning line") {
    Take take;
    // S,A,T,B without --channels puts S on channel 1, which carries the bass (1/1).
    const auto r = test::run_program(
        {"ensemble", "4:5:6:7", "--root", "98", "--input-file", take.path, "--fast", "--names", "S,A,T,B"});
    INFO(r.err);
    REQUIRE(r.exit_code == 0);
    // The quartet sings 1/1, 5/4, 3/2, 7/4 on channels 1-4 (tests/ensemble_signals.h); reversed, each sits on another voice.
    for (const char* line :
         {"beatless: S is singing near 1/1, assigned 7/4 (a list of names is read top voice first; S=1/1 assigns it)\n",
          "beatless: A is singing near 5/4, assigned 3/2 (a list of names is read top voice first; A=5/4 assigns it)\n",
          "beatless: T is singing near 3/2, assigned 5/4 (a list of names is read top voice first; T=3/2 assigns it)\n",
          "beatless: B is singing near 7/4, assigned 1/1 (a list of names is read top voice first; B=7/4 assigns "
          "it)\n"}) {
        CHECK(r.err.find(line) != std::string::npos);
        CHECK(r.err.find(line) == r.err.rfind(line));  // once, not every reading
    }
    CHECK(r.out.find("mostly near 1/1, not its voice") != std::string::npos);
    // Assigned right, no warning.
    const auto ok = test::run_program({"ensemble", "4:5:6:7", "--root", "98", "--input-file", take.path, "--fast",
                                       "--names", "B=1/1,T=5/4,A=3/2,S=7/4"});
    REQUIRE(ok.exit_code == 0);
    CHECK(ok.err.find("is singing near") == std::string::npos);
}

TEST_CASE("ensemble --demo runs the demo group in real time") {
    const auto r = test::run_program(
        {"ensemble", "harmonic-seventh", "--root", "G2", "--demo", "--seconds", "1.5", "--format", "json"});
    INFO(r.err);
    REQUIRE(r.exit_code == 0);
    const std::string summary = last_line(r.out);
    CHECK(test::json_value(summary, "len(d['summary']['players'])") == "4");
    CHECK(std::stod(test::json_value(summary, "d['summary']['players'][3]['sounding_s']")) > 0.5);
}

TEST_CASE("ensemble: bad input and bad usage, one line each") {
    test::TempDir dir;
    const std::string stereo = dir.file("stereo.wav");
    test::write_take(stereo, 48000.0, 2, std::vector<float>(2 * 4800, 0.05f), audio::SampleFormat::pcm16);
    struct Case {
        std::vector<std::string> args;
        int code;
        std::string err;
    };
    const std::vector<Case> cases = {
        {{"ensemble", "4:5:6:7", "--demo", "--input-file", stereo},
         2,
         "beatless: choose one input: --demo, --input-file or --input\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--fast"}, 2, "beatless: --fast works with --input-file only\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--reference", "middle"},
         1,
         "beatless: reference 'middle': expected drone, bass or best-fit\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--channels", "1,x,3,4"},
         1,
         "beatless: --channels '1,x,3,4': 'x' is not a channel number (1 to 64)\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--voices", "1,2,3,9"},
         1,
         "beatless: --voices '1,2,3,9': '9' is not a voice of 4:5:6:7 (1 to 4)\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--names", "S,A", "--channels", "1,2,3"},
         1,
         "beatless: --names: 2 given for 3 players; give one per player or none\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--channels", "1,2,2,3"},
         1,
         "beatless: player 3 (Voice 3): channel 2 is already player 2's; give each player a channel of their own\n"},
        {{"ensemble", "4:5:6:7", "--input-file", stereo, "--fast"},
         1,
         "beatless: " + stereo + ": player 3 (Voice 3): channel 3 does not exist (channels 1 to 2)\n"},
        {{"ensemble", "4:5:6:7", "--input-file", dir.file("none.wav"), "--fast"},
         1,
         "beatless: " + dir.file("none.wav") + ": no such file\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--seconds", "-1"},
         1,
         "beatless: --seconds -1: out of range (0 to 86400)\n"},
        {{"ensemble", "1:2:3:4:5:6:7:8:9", "--demo"},
         1,
         "beatless: 9 players: at most 8 (the chord has more voices; give --voices)\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--names", "S=7/4,A"},
         1,
         "beatless: --names 'S=7/4,A': 'A' has no =ratio; give every player as name=ratio, or none\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--names", "S=9/8"},
         1,
         "beatless: --names 'S=9/8': 'S=9/8': 9/8 is not a voice of 4:5:6:7 (1/1, 5/4, 3/2, 7/4)\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--names", "S=high"},
         1,
         "beatless: --names 'S=high': 'S=high': 'high' is not a ratio (as in 7/4)\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--names", "=7/4"},
         1,
         "beatless: --names '=7/4': '=7/4' has no name before =\n"},
        {{"ensemble", "4:5:6:7", "--demo", "--names", "S=7/4,B=1/1", "--voices", "4,1"},
         2,
         "beatless: --names with name=ratio and --voices: give each player's voice one way only\n"},
        {{"ensemble", "4:5:6", "--demo", "--names", "S,A,T,B"},
         1,
         "beatless: 4 players for a chord of 3 voices: give --voices\n"},
        {{"ensemble", "4:4", "--demo"},
         1,
         "beatless: '4:4': chord terms must rise from the lowest voice, as in 4:5:6 (each voice once)\n"},
    };
    for (const Case& c : cases) {
        const auto r = test::run_program(c.args);
        std::string line;
        for (const auto& a : c.args) line += a + " ";
        INFO(line);
        CHECK(r.exit_code == c.code);
        CHECK(r.err == c.err);
        CHECK(r.out.empty());
    }
}
