// Command-line tests for `beatless chord` and `beatless drift`: the program
// is run as a user runs it; JSON is read back with Python's json module.
//
// Expected values: cents of 5/4, 3/2, 7/4 from published interval tables
// (Ellis 1885, from memory); 12-TET note frequencies by ISO 16 (A4 = 440 Hz);
// the syntonic comma 81/80 = 21.506 cents (textbook, from memory). Exit
// codes and message forms are the contracts in DESIGN.md.
#include "tests/cli.h"

#include <doctest/doctest.h>

#include <cmath>
#include <string>

using beatless::test::json_value;
using beatless::test::run_program;

namespace {
double num(const std::string& s) { return std::stod(s); }
}  // namespace

TEST_CASE("beatless chord 4:5:6:7 --root C3 --format json") {
    const auto r = run_program("chord 4:5:6:7 --root C3 --format json");
    REQUIRE(r.exit_code == 0);
    CHECK(r.err.empty());
    const std::string& j = r.out;
    CHECK(std::fabs(num(json_value(j, "d['root_hz']")) - 130.813) < 1e-3);
    CHECK(json_value(j, "len(d['voices'])") == "4");
    CHECK(json_value(j, "d['voices'][0]['ratio']") == "1/1");
    CHECK(json_value(j, "d['voices'][3]['ratio']") == "7/4");
    CHECK(json_value(j, "d['voices'][3]['note']") == "Bb3");
    CHECK(std::fabs(num(json_value(j, "d['voices'][1]['cents_from_root']")) - 386.314) < 1e-3);
    CHECK(std::fabs(num(json_value(j, "d['voices'][3]['cents_from_root']")) - 968.826) < 1e-3);
    CHECK(std::fabs(num(json_value(j, "d['voices'][1]['et_offset_cents']")) + 13.686) < 1e-3);
    CHECK(std::fabs(num(json_value(j, "d['voices'][2]['freq_hz']")) - 196.219) < 1e-3);
    // Every voice lists the coinciding partials with the three others.
    CHECK(json_value(j, "[len(v['beats']) for v in d['voices']]") == "[3, 3, 3, 3]");
    CHECK(json_value(j, "d['pairs'][0]['partials']") == "[5, 4]");
    CHECK(std::fabs(num(json_value(j, "d['pairs'][0]['beat_hz_per_cent']")) - 0.3778) < 1e-4);
}

TEST_CASE("beatless chord: names, files, ratio lists, csv and text") {
    const auto named = run_program("chord harmonic-cluster --root C3 --format json");
    REQUIRE(named.exit_code == 0);
    CHECK(json_value(named.out, "d['title']") == "Harmonic cluster 8 to 12");
    CHECK(json_value(named.out, "d['voices'][3]['note']") == "F#3");
    CHECK(std::fabs(num(json_value(named.out, "d['voices'][3]['et_offset_cents']")) + 48.682) < 1e-3);

    const auto list = run_program("chord 1/1 6/5 3/2 --root A3 --format csv");
    REQUIRE(list.exit_code == 0);
    CHECK(list.out.starts_with("voice,ratio,term,freq_hz,note,cents_from_root,et_offset_cents\n"));
    CHECK(list.out.find("2,6/5,12,264.000,C4,315.641,15.641\n") != std::string::npos);  // 220 * 6/5 = 264 Hz

    const auto text = run_program("chord major-triad --root 440");
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("Just major triad  4:5:6 on 440 Hz") == 0);
    CHECK(text.out.find("C#5") != std::string::npos);  // 550 Hz is C#5 -13.7 (sharps when the root is in Hz)
    CHECK(text.out.find("-13.7 c") != std::string::npos);

    const auto file =
        run_program("chord '" BEATLESS_SOURCE_DIR "/targets/septimal-minor.toml' --root D4 --format json");
    REQUIRE(file.exit_code == 0);
    CHECK(json_value(file.out, "d['voices'][1]['note']") == "F4");
}

TEST_CASE("beatless chord: bad input, one line and exit 1; bad usage exit 2") {
    const auto zero = run_program("chord 4:0:6 --root C3");
    CHECK(zero.exit_code == 1);
    CHECK(zero.out.empty());
    CHECK(zero.err == "beatless: '4:0:6': chord terms must be positive\n");
    const auto unknown = run_program("chord nosuch --root C3");
    CHECK(unknown.exit_code == 1);
    CHECK(unknown.err.starts_with("beatless: 'nosuch': no built-in chord file of that name (known: "));
    CHECK(unknown.err.find('\n') == unknown.err.size() - 1);
    const auto root = run_program("chord 4:5:6 --root Q3");
    CHECK(root.exit_code == 1);
    CHECK(root.err == "beatless: 'Q3': not a note name (expected a form such as C4, F#3 or Bb2)\n");
    const auto high = run_program("chord 1:16 --root 1500");  // 16 x 1500 Hz = 24 kHz;
    CHECK(high.exit_code == 1);
    CHECK(high.err.find("above 20 kHz") != std::string::npos);
    const auto missing = run_program("chord 4:5:6");
    CHECK(missing.exit_code == 2);
    const auto fmt = run_program("chord 4:5:6 --root C3 --format xml");
    CHECK(fmt.exit_code == 2);
}

TEST_CASE("beatless drift \"I vi ii V I\" --format json: 81/80 with common tones held") {
    const auto r = run_program("drift 'I vi ii V I' --format json");
    REQUIRE(r.exit_code == 0);
    const std::string& j = r.out;
    CHECK(json_value(j, "[x['rule'] for x in d['rules']]") == "['fixed-root', 'common-tones']");
    CHECK(num(json_value(j, "d['rules'][0]['drift_cents']")) == 0.0);
    CHECK(std::fabs(num(json_value(j, "d['rules'][1]['drift_cents']")) + 21.506) < 1e-3);
    CHECK(json_value(j, "d['rules'][1]['drift_ratio']") == "80/81");
    CHECK(json_value(j, "d['rules'][1]['causes'][0]['change']") == "ii -> V");
    CHECK(json_value(j, "len(d['rules'][1]['chords'])") == "5");
    CHECK(json_value(j, "d['rules'][1]['chords'][4]['voices'][0]['note']") == "C4");
    CHECK(std::fabs(num(json_value(j, "d['rules'][1]['chords'][4]['voices'][0]['et_offset_cents']")) + 21.506) < 1e-3);
    CHECK(json_value(j, "d['rules'][0]['chords'][3]['common_tones'][0]['held']") == "False");
    CHECK(std::fabs(num(json_value(j, "d['tonic_hz']")) - 261.626) < 1e-3);
}

TEST_CASE("beatless drift: text, plan, csv, keys") {
    const auto text = run_program("drift I vi ii V I");
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("drift by the end: -21.506 cents (80/81, a syntonic comma flat)") != std::string::npos);
    CHECK(text.out.find("caused by ii -> V (chord 4)") != std::string::npos);
    const auto plan = run_program("drift 'I vi ii V I' --plan --rule common-tones");
    REQUIRE(plan.exit_code == 0);
    CHECK(plan.out.find("Director's plan") == 0);
    CHECK(plan.out.find("Fixed root") == std::string::npos);
    CHECK(plan.out.find("B  -33.2") != std::string::npos);  // B of the drifted V: 15/8 * 80/81, -11.7 - 21.5
    const auto csv = run_program("drift 'i iv V i' --key 'A minor' --format csv --rule fixed-root");
    REQUIRE(csv.exit_code == 0);
    CHECK(csv.out.starts_with("rule,chord,symbol,voice,note,ratio,cents_from_tonic,freq_hz,et_offset_cents\n"));
    CHECK(csv.out.find("fixed-root,1,i,2,C5,6/5,315.641,528.000,15.641\n") != std::string::npos);  // 440 * 6/5
    CHECK(csv.out.find("fixed-root,3,V,2,G#5,15/8,1088.269,825.000,-11.731\n") != std::string::npos);
}

TEST_CASE("beatless drift: bad input exit 1 with one line; bad usage exit 2") {
    const auto viii = run_program("drift 'I VIII V'");
    CHECK(viii.exit_code == 1);
    CHECK(viii.err == "beatless: 'VIII': not a scale degree (I to VII)\n");
    const auto empty = run_program("drift ''");
    CHECK(empty.exit_code == 1);
    CHECK(empty.err.starts_with("beatless: '': empty progression"));
    const auto key = run_program("drift 'I V I' --key H");
    CHECK(key.exit_code == 1);
    CHECK(key.err == "beatless: 'H': not a key (expected a form such as C, Eb3, A minor or F#m)\n");
    const auto chord = run_program("drift '1/1:4:0:6'");
    CHECK(chord.exit_code == 1);
    CHECK(chord.err == "beatless: '1/1:4:0:6': chord terms must be positive\n");
    const auto rule = run_program("drift 'I V I' --rule sideways");
    CHECK(rule.exit_code == 2);
    const auto none = run_program("drift");
    CHECK(none.exit_code == 2);
}
