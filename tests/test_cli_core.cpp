// The first commands as a user runs them: output forms, exit codes and the
// one-line messages for bad input (DESIGN.md: 0 success, 1 bad input, 2 bad
// usage). Numbers are checked against 1200*log2 computed here and against
// the beat-rate formula |q*f_high - p*f_low|.
#include "tests/cli.h"

#include <doctest/doctest.h>

#include <cctype>
#include <cmath>
#include <fstream>
#include <utility>

using beatless::test::line_count;
using beatless::test::run_program;
using beatless::test::TempDir;

namespace {
// Extracts the number after "key": in a JSON text (first occurrence after `from`).
double json_number(const std::string& s, const std::string& key, std::size_t from = 0) {
    const auto k = s.find("\"" + key + "\": ", from);
    REQUIRE_MESSAGE(k != std::string::npos, "no key " << key << " in " << s);
    return std::stod(s.substr(k + key.size() + 4));
}
}  // namespace

TEST_CASE("ratio --format json carries the facts of each interval") {
    const auto r = run_program({"ratio", "7/5", "10/7", "600c", "--format", "json"});
    REQUIRE(r.exit_code == 0);
    CHECK(r.err.empty());
    CHECK(r.out.rfind("{\"intervals\": [", 0) == 0);
    const auto at = r.out.find("\"ratio\": \"10/7\"");
    REQUIRE(at != std::string::npos);
    CHECK(json_number(r.out, "cents", at) == doctest::Approx(1200 * std::log2(10.0 / 7.0)).epsilon(1e-6));
    CHECK(json_number(r.out, "prime_limit", at) == 7);
    CHECK(json_number(r.out, "tenney_height", at) == doctest::Approx(std::log2(70.0)).epsilon(1e-4));
    CHECK(json_number(r.out, "et_offset_cents", at) ==
          doctest::Approx(1200 * std::log2(10.0 / 7.0) - 600).epsilon(1e-4));
    const auto et = r.out.find("\"ratio\": \"600c\"");
    REQUIRE(et != std::string::npos);
    CHECK(r.out.find("\"prime_limit\": null", et) != std::string::npos);
}

TEST_CASE("ratio with a root gives frequencies and beat rates") {
    const auto r = run_program({"ratio", "7/5", "--root", "A3", "--format", "json"});
    REQUIRE(r.exit_code == 0);
    CHECK(json_number(r.out, "root_hz") == doctest::Approx(220.0));
    CHECK(json_number(r.out, "upper_hz") == doctest::Approx(308.0));
    // At +5 cents: |5 * 308 * 2^(5/1200) - 7 * 220|.
    const auto at = r.out.find("\"dev_cents\": 5,");
    REQUIRE(at != std::string::npos);
    CHECK(json_number(r.out, "beat_hz", at) == doctest::Approx(5 * 308 * std::exp2(5 / 1200.0) - 1540).epsilon(1e-3));
    const auto text = run_program({"ratio", "7/5", "--root", "220"});
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("7th of the root (1540.000 Hz) with 5th of the upper tone") != std::string::npos);
    // A chord expands to its upper notes over the lowest.
    const auto chord = run_program({"ratio", "4:5:6:7", "--format", "json"});
    CHECK(chord.out.find("\"ratio\": \"5/4\"") != std::string::npos);
    CHECK(chord.out.find("\"ratio\": \"7/4\"") != std::string::npos);
}

TEST_CASE("bad ratios and values: one line, exit 1") {
    struct Case {
        std::vector<std::string> args;
        std::string message;
    } cases[] = {
        {{"ratio", "0/5"}, "beatless: '0/5': ratio must be positive (zero is not an interval)\n"},
        {{"ratio", "7/0"}, "beatless: '7/0': denominator is zero\n"},
        {{"ratio", "--", "-7/5"}, "beatless: '-7/5': ratio must be positive (a negative number is not an interval)\n"},
        {{"ratio", "abc"}, "beatless: 'abc': not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)\n"},
        {{"ratio", "99999999999999999999/1"},
         "beatless: '99999999999999999999/1': number too large for 64-bit ratio arithmetic\n"},
        {{"ratio", "7/5", "--root", "H9"},
         "beatless: 'H9': not a note name (expected a form such as C4, F#3 or Bb2)\n"},
        {{"ratio", "7/5", "--a4", "300"}, "beatless: A4 reference 300 Hz: out of range (400 to 480 Hz)\n"},
        {{"tone", "--root", "A3", "--ratio", "7/5", "--seconds", "0", "--out", "/tmp/x.wav"},
         "beatless: --seconds 0: out of range (more than 0, at most 3600)\n"},
        {{"tone", "--root", "A3", "--timbre", "loud", "--out", "/tmp/x.wav"},
         "beatless: timbre 'loud': unknown (choose pure, soft, round, bright, hollow)\n"},
    };
    for (const auto& c : cases) {
        CAPTURE(c.args[1]);
        const auto r = run_program(c.args);
        CHECK(r.exit_code == 1);
        CHECK(r.err == c.message);
        CHECK(r.out.empty());
    }
}

TEST_CASE("bad usage: one line, exit 2") {
    for (const auto& args : std::vector<std::vector<std::string>>{
             {"ratio"}, {"ratio", "7/5", "--format", "xml"}, {"frobnicate"}, {"tone", "--ratio", "7/5"}}) {
        CAPTURE(args[0]);
        const auto r = run_program(args);
        CHECK(r.exit_code == 2);
        CHECK(line_count(r.err) == 1);
        CHECK(r.err.rfind("beatless: ", 0) == 0);
    }
}

TEST_CASE("tone writes a file of the asked length, or names the file it cannot write") {
    TempDir dir;
    const auto r = run_program(
        {"tone", "--root", "A3", "--ratio", "7/5", "--seconds", "1.5", "--rate", "44100", "--out", dir.file("t.wav")});
    REQUIRE(r.exit_code == 0);
    std::ifstream f(dir.file("t.wav"), std::ios::binary | std::ios::ate);
    // 24-bit mono WAV: 44-byte header + 3 bytes per sample.
    CHECK(static_cast<long>(f.tellg()) == 44 + 3 * 66150);
    const auto bad = run_program({"tone", "--root", "A3", "--out", dir.file("no/such/dir/t.wav")});
    CHECK(bad.exit_code == 1);
    CHECK(bad.err == "beatless: " + dir.file("no/such/dir/t.wav") + ": the folder " + dir.file("no/such/dir") +
                         " does not exist (create it first)\n");
    CHECK(line_count(bad.err) == 1);
}

TEST_CASE("track prints the DESIGN.md JSON and CSV forms") {
    TempDir dir;
    // A 7/5 voice 6 cents flat over A2, voice only (no drone), 44.1 kHz.
    REQUIRE(run_program({"tone", "--root", "A2", "--ratio", "7/5", "--detune-cents", "-6", "--level-db", "-80",
                         "--voice-db", "-14", "--seconds", "1", "--rate", "44100", "--out", dir.file("v.wav")})
                .exit_code == 0);
    const auto r = run_program({"track", dir.file("v.wav"), "--format", "json"});
    REQUIRE(r.exit_code == 0);
    CHECK(r.err.empty());
    CHECK(beatless::test::json_value(r.out, "d['sample_rate']") == "44100");
    CHECK(beatless::test::json_value(r.out, "sorted(d['frames'][0].keys())") == "['confidence', 'f0_hz', 't']");
    // Frames are 220/44100 s apart (the hop rounded to whole samples of the decimated copy).
    CHECK(std::stod(beatless::test::json_value(r.out, "d['frames'][11]['t'] - d['frames'][10]['t']")) ==
          doctest::Approx(220.0 / 44100).epsilon(1e-3));
    // The median voiced f0 is 110 * 7/5 * 2^(-6/1200) = 153.4665 Hz (to 0.05 cent).
    const double f0 = std::stod(beatless::test::json_value(
        r.out,
        "sorted(f['f0_hz'] for f in d['frames'] if f['f0_hz'])[len([f for f in d['frames'] if f['f0_hz']])//2]"));
    CHECK(std::fabs(1200 * std::log2(f0 / (110 * 1.4 * std::exp2(-6 / 1200.0)))) < 0.05);
    const auto csv = run_program({"track", dir.file("v.wav"), "--format", "csv", "--hop-ms", "10"});
    REQUIRE(csv.exit_code == 0);
    CHECK(csv.out.rfind("t,f0_hz,confidence\n", 0) == 0);
    CHECK(line_count(csv.out) > 90);
    CHECK(line_count(csv.out) < 100);
    // Silence: every frame unvoiced, null in JSON and an empty field in CSV.
    REQUIRE(
        run_program({"tone", "--root", "A2", "--level-db", "-80", "--seconds", "0.5", "--out", dir.file("quiet.wav")})
            .exit_code == 0);
    const auto q = run_program({"track", dir.file("quiet.wav"), "--format", "csv"});
    CHECK(q.out.find(",,") != std::string::npos);
    const auto qj = run_program({"track", dir.file("quiet.wav")});
    CHECK(beatless::test::json_value(qj.out, "all(f['f0_hz'] is None for f in d['frames'])") == "True");
}

TEST_CASE("track --drone: a drone-plus-voice file yields the voice, the drone given or found") {
    // A 7/5 voice 6 cents flat over an A2 drone 6 dB louder: the truth is 110 * 7/5 * 2^(-6/1200) = 153.4665 Hz.
    // Without removal the tracker hears the mixture (a drone 6 dB louder, common practice: it wins); with --drone the
    // median voiced f0 must be the voice's within 0.1 cent, in the same JSON and CSV forms as before.
    TempDir dir;
    REQUIRE(run_program({"tone", "--root", "A2", "--ratio", "7/5", "--detune-cents", "-6", "--level-db", "-18",
                         "--voice-db", "-24", "--seconds", "2", "--out", dir.file("dv.wav")})
                .exit_code == 0);
    const std::string median =
        "sorted(f['f0_hz'] for f in d['frames'] if f['f0_hz'])[len([f for f in d['frames'] if f['f0_hz']])//2]";
    const double truth = 110 * 1.4 * std::exp2(-6 / 1200.0);
    const auto plain = run_program({"track", dir.file("dv.wav")});
    REQUIRE(plain.exit_code == 0);
    const std::string near_truth =
        "sum(1 for f in d['frames'] if f['f0_hz'] and abs(1200 * __import__('math').log2(f['f0_hz'] / " +
        std::to_string(truth) + ")) < 10)";
    CHECK(std::stoi(beatless::test::json_value(plain.out, near_truth)) < 40);
    for (const char* drone : {"A2", "110", "auto"}) {
        CAPTURE(drone);
        const auto r = run_program({"track", dir.file("dv.wav"), "--drone", drone});
        REQUIRE(r.exit_code == 0);
        CHECK(beatless::test::json_value(r.out, "sorted(d['frames'][0].keys())") == "['confidence', 'f0_hz', 't']");
        CHECK(std::stod(beatless::test::json_value(r.out, "d['drone_hz']")) == doctest::Approx(110.0).epsilon(1e-3));
        CHECK(std::fabs(1200 * std::log2(std::stod(beatless::test::json_value(r.out, median)) / truth)) < 0.1);
        // Nearly every frame of the 2 s on the voice once the drone is gone.
        CHECK(std::stoi(beatless::test::json_value(r.out, near_truth)) > 370);
        CHECK(r.err == (std::string(drone) == "auto"
                            ? "beatless: drone found in the file at 110 Hz (confidence 1); removed before tracking\n"
                            : ""));
    }
    const auto csv = run_program({"track", dir.file("dv.wav"), "--drone", "A2", "--format", "csv"});
    CHECK(csv.out.rfind("t,f0_hz,confidence\n", 0) == 0);
    // A file with no drone: --drone auto says so in one line.
    REQUIRE(run_program({"tone", "--root", "A2", "--level-db", "-80", "--seconds", "1", "--out", dir.file("q.wav")})
                .exit_code == 0);
    const auto none = run_program({"track", dir.file("q.wav"), "--drone", "auto"});
    CHECK(none.exit_code == 1);
    CHECK(none.err.rfind("beatless: " + dir.file("q.wav") + ": no steady drone found (best candidate ", 0) == 0);
    CHECK(line_count(none.err) == 1);
}

TEST_CASE("track --voices 2: both voices of a double stop, lowest first, in the same forms") {
    // G3 = 195.998 Hz (A4 440, 12-TET: 440 * 2^(-14/12)) and a 7/4 above it, 342.996 Hz: each median within 0.1 cent.
    TempDir dir;
    REQUIRE(run_program({"tone", "--root", "G3", "--ratio", "7/4", "--level-db", "-20", "--voice-db", "-22",
                         "--seconds", "2", "--out", dir.file("duo.wav")})
                .exit_code == 0);
    const auto r = run_program({"track", dir.file("duo.wav"), "--voices", "2"});
    REQUIRE(r.exit_code == 0);
    CHECK(beatless::test::json_value(r.out, "d['voices']") == "2");
    CHECK(beatless::test::json_value(r.out, "sorted(d['frames'][0].keys())") == "['confidence', 'f0_hz', 't']");
    const double low = 440.0 * std::exp2(-14 / 12.0), high = low * 7 / 4;
    for (int v = 0; v < 2; ++v) {
        const std::string i = std::to_string(v);
        const std::string med = "sorted(f['f0_hz'][" + i +
                                "] for f in d['frames'] if len(f['f0_hz']) == 2)[len([f for f in d['frames'] if "
                                "len(f['f0_hz']) == 2]) // 2]";
        CHECK(std::fabs(1200 * std::log2(std::stod(beatless::test::json_value(r.out, med)) / (v ? high : low))) < 0.1);
    }
    CHECK(std::stoi(beatless::test::json_value(r.out, "sum(1 for f in d['frames'] if len(f['f0_hz']) == 2)")) > 300);
    const auto csv = run_program({"track", dir.file("duo.wav"), "--voices", "2", "--format", "csv"});
    CHECK(csv.out.rfind("t,f0_low_hz,f0_high_hz,confidence\n", 0) == 0);
    const auto bad = run_program({"track", dir.file("duo.wav"), "--voices", "3"});
    CHECK(bad.exit_code == 1);
    CHECK(bad.err == "beatless: --voices 3: 1 or 2\n");
}

TEST_CASE("track: bad files and values, one line each, exit 1") {
    TempDir dir;
    { std::ofstream(dir.file("empty.wav")); }
    { std::ofstream(dir.file("text.wav")) << "not audio at all\n"; }
    REQUIRE(run_program({"tone", "--root", "A3", "--seconds", "0.2", "--out", dir.file("ok.wav")}).exit_code == 0);
    struct Case {
        std::vector<std::string> args;
        std::string prefix;
    } cases[] = {
        {{"track", dir.file("missing.wav")}, "beatless: " + dir.file("missing.wav") + ": no such file\n"},
        {{"track", dir.file("empty.wav")}, "beatless: " + dir.file("empty.wav") + ": is empty (0 bytes)\n"},
        {{"track", dir.file("text.wav")},
         "beatless: " + dir.file("text.wav") + ": not a sound file that can be read ("},
        {{"track", dir.file("ok.wav"), "--channel", "2"},
         "beatless: " + dir.file("ok.wav") + ": channel 2 does not exist (the file has 1 channel)\n"},
        {{"track", dir.file("ok.wav"), "--hop-ms", "0"}, "beatless: --hop-ms 0: out of range (0.5 to 100 ms)\n"},
        {{"track", dir.file("ok.wav"), "--fmin", "900", "--fmax", "300"}, "beatless: YIN: "},
    };
    for (const auto& c : cases) {
        CAPTURE(c.args);
        const auto r = run_program(c.args);
        CHECK(r.exit_code == 1);
        CHECK(r.err.rfind(c.prefix, 0) == 0);
        CHECK(line_count(r.err) == 1);
    }
}

TEST_CASE("tone with several ratios sings one note each, and analyze finds them") {
    TempDir dir;
    // Four notes over D3 (146.832 Hz), each off by a known amount: the
    // review path must name each target and measure each deviation.
    const auto r = run_program({"tone", "--root", "D3", "--ratio", "7/5,10/7,11/8,45/32", "--detune-cents", "-6,4,2,3",
                                "--seconds", "12", "--vibrato-hz", "5.5", "--vibrato-cents", "25", "--voice-db", "-14",
                                "--level-db", "-20", "--out", dir.file("take.wav")});
    REQUIRE(r.exit_code == 0);
    CHECK(r.out.find("10/7 +4 c = ") != std::string::npos);
    const auto a = run_program({"analyze", dir.file("take.wav"), "--targets", "tritones", "--format", "json"});
    REQUIRE(a.exit_code == 0);
    CHECK(beatless::test::json_value(a.out, "[n['target'] for n in d['notes']]") == "['7/5', '10/7', '11/8', '45/32']");
    const double want[] = {-6, 4, 2, 3};
    for (int i = 0; i < 4; ++i) {
        CAPTURE(i);
        const double dev =
            std::stod(beatless::test::json_value(a.out, "d['notes'][" + std::to_string(i) + "]['dev_cents']"));
        CHECK(std::fabs(dev - want[i]) < 1.0);  // the review issue's bar
    }
    const auto bad = run_program(
        {"tone", "--root", "D3", "--ratio", "7/5,10/7", "--detune-cents", "-6,4,2", "--out", dir.file("x.wav")});
    CHECK(bad.exit_code == 1);
    CHECK(bad.err == "beatless: --detune-cents: 3 values for 2 ratios (give one value, or one per ratio)\n");
}

TEST_CASE(
    "ratio names only partials a drone sounds below the stated 4 kHz limit; commas beat at the fundamentals' "
    "difference") {
    // 729/512 over D3: its own pair (729th of the root, 107 kHz) is far above
    // hearing; the pair named must lie at or below 4 kHz (the limit stated in
    // pitch/theory/beats.h, common practice) and its rate be |q f_upper - p f_root|
    // (Helmholtz, Sensations of Tone, ch. VIII), computed here.
    const double d3 = 440.0 * std::exp2(-19.0 / 12.0);
    for (const char* root : {"D3", "A4", "C6"}) {
        CAPTURE(root);
        const auto r = run_program({"ratio", "729/512", "--root", root, "--format", "json"});
        REQUIRE(r.exit_code == 0);
        const std::string has = beatless::test::json_value(r.out, "d['intervals'][0]['audible_partials'] is not None");
        if (has == "True")
            CHECK(std::stod(beatless::test::json_value(r.out, "d['intervals'][0]['audible_partials']['at_hz']")) <=
                  4000.0);
        const auto text = run_program({"ratio", "729/512", "--root", root});
        REQUIRE(text.exit_code == 0);
        // Every "(N Hz)" the partials line gives is at or below the limit.
        const auto line_at = text.out.find("partials that beat:");
        REQUIRE(line_at != std::string::npos);
        const std::string line = text.out.substr(line_at, text.out.find('\n', line_at) - line_at);
        CAPTURE(line);
        for (auto k = line.find('('); k != std::string::npos; k = line.find('(', k + 1))
            if (std::isdigit(static_cast<unsigned char>(line[k + 1]))) CHECK(std::stod(line.substr(k + 1)) <= 4000.0);
    }
    const auto d = run_program({"ratio", "729/512", "--root", "D3", "--format", "json"});
    CHECK(beatless::test::json_value(d.out, "d['intervals'][0]['audible_partials']['root']") == "10");
    CHECK(beatless::test::json_value(d.out, "d['intervals'][0]['audible_partials']['upper']") == "7");
    // |7 x D3 x 729/512 - 10 x D3| = 4.8753 Hz exactly in tune (by hand).
    CHECK(std::stod(beatless::test::json_value(d.out, "d['intervals'][0]['audible_partials']['in_tune_beat_hz']")) ==
          doctest::Approx(std::fabs(7.0 * d3 * 729.0 / 512.0 - 10.0 * d3)).epsilon(2e-4));
    // Two tones a syntonic comma apart beat at their difference: D3 / 80 = 1.835 Hz (not 0).
    for (const auto& [ratio, hz] : {std::pair{"81/80", d3 / 80.0}, std::pair{"50/49", d3 / 49.0}}) {
        CAPTURE(ratio);
        const auto c = run_program({"ratio", ratio, "--root", "D3", "--format", "json"});
        REQUIRE(c.exit_code == 0);
        CHECK(std::stod(beatless::test::json_value(
                  c.out, "[b['beat_hz'] for b in d['intervals'][0]['beats'] if b['dev_cents'] == 0][0]")) ==
              doctest::Approx(hz).epsilon(1e-3));
    }
    const auto text = run_program({"ratio", "81/80", "--root", "D3"});
    CHECK(text.out.find("in tune they beat 1.84 Hz") != std::string::npos);
}

TEST_CASE("a root typed as Bb3 is echoed as Bb3, intervals spelled against it") {
    // Spelling: common practice (the flat seventh of C is Bb; 7/4 over D3 is
    // written C4); 12-TET frequencies by ISO 16 (A4 = 440 Hz): Bb3 = 233.082 Hz.
    const beatless::test::RunResult r = run_program("ratio 7/4 3/2 --root Bb3");
    REQUIRE(r.exit_code == 0);
    CHECK(r.out.find("root 233.082 Hz (Bb3 +0.0 c) · upper tone 407.893 Hz (Ab4 -31.2 c)") != std::string::npos);
    CHECK(r.out.find("(F4 +2.0 c)") != std::string::npos);
    CHECK(r.out.find("A#") == std::string::npos);
    const beatless::test::RunResult d = run_program("ratio 7/4 7/5 10/7 --root D3");
    CHECK(d.out.find("(C4 -31.2 c)") != std::string::npos);
    CHECK(d.out.find("(G#3 -17.5 c)") != std::string::npos);  // 7/5: augmented fourth
    CHECK(d.out.find("(Ab3 +17.5 c)") != std::string::npos);  // 10/7: diminished fifth
    // The nearest equal step in cents, never "000 cents" (a unison is 0 cents).
    const beatless::test::RunResult c = run_program("ratio 81/80 3/2");
    CHECK(c.out.find("nearest 12-TET step: unison (0 cents), +21.506 cents from it") != std::string::npos);
    CHECK(c.out.find("nearest 12-TET step: perfect fifth (700 cents), +1.955 cents from it") != std::string::npos);
    CHECK(c.out.find("000 cents") == std::string::npos);
    // Chord, tone and listen echo the root as typed.
    CHECK(run_program("chord 4:5:6:7 --root Bb2").out.find("on Bb2 = 116.541 Hz") != std::string::npos);
    CHECK(run_program("chord 4:5:6:7 --root Bb2").out.find("(near Bb0)") != std::string::npos);
    TempDir dir;
    CHECK(run_program({"tone", "--root", "Bb3", "--seconds", "0.2", "--out", dir.file("t.wav")})
              .out.find("drone Bb3 = 233.082 Hz") != std::string::npos);
    CHECK(run_program("listen --demo --root Bb3 --seconds 0.05").err.find("root Bb3 = 233.082 Hz") !=
          std::string::npos);
}

TEST_CASE("absurd roots, A4 references and lowest notes are refused with the accepted range") {
    // C#-1 is MIDI 1: 440 * 2^((1 - 69) / 12) = 8.662 Hz (ISO 16, MIDI numbering);
    // the root range 20 to 2000 Hz is ours (DEVELOPERS.md, "Values and ranges").
    const std::string range = ": out of range for a root (20 to 2000 Hz)\n";
    for (const std::string cmd : {"ratio 3/2 --root ", "chord 4:5:6 --root ", "listen --demo --seconds 0.1 --root ",
                                  "ensemble 4:5:6 --demo --seconds 0.1 --root "}) {
        CAPTURE(cmd);
        const auto r = run_program(cmd + "C#-1");
        CHECK(r.exit_code == 1);
        CHECK(r.err == "beatless: 'C#-1' = 8.662 Hz" + range);
        CHECK(run_program(cmd + "2500").err == "beatless: '2500' = 2500 Hz" + range);
    }
    TempDir dir;
    const auto snap = run_program({"snapshot", "--demo", "--root", "C#-1", "--out", dir.file("x.png")});
    CHECK(snap.exit_code == 1);
    CHECK(snap.err == "beatless: 'C#-1' = 8.662 Hz" + range);
    CHECK(run_program("ratio 3/2 --root 20").exit_code == 0);  // the ends of the range are accepted
    CHECK(run_program("ratio 3/2 --root 2000").exit_code == 0);
    // Not numbers, negative, infinite: one line, exit 1.
    for (const std::string bad : {"nan", "-5", "inf"}) {
        CAPTURE(bad);
        const auto r = run_program("ratio 3/2 --root " + bad);
        CHECK(r.exit_code == 1);
        CHECK(line_count(r.err) == 1);
        CHECK(r.err.find("'" + bad + "'") != std::string::npos);
    }
    CHECK(run_program("ratio 3/2 --a4 nan").err == "beatless: A4 reference nan Hz: out of range (400 to 480 Hz)\n");
    CHECK(run_program("ratio 3/2 --a4 -1").exit_code == 1);
    CHECK(run_program("listen --demo --lowest 10").err ==
          "beatless: --lowest 10 = 10 Hz: out of range (30 to 200 Hz)\n");
    CHECK(run_program("listen --demo --lowest -3").exit_code == 1);
    CHECK(run_program("listen --demo --seconds nan").exit_code == 1);
}
