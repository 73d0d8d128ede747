// `beatless drill` on the command line: scores per attempt as text and JSON
// (read back by Python's json module, an outside parser), the practice log
// filled like the screen fills it, ear drills with a simulated listener, a
// log that cannot be written (the scores still print; the attempts land in
// a CSV that `history --import` takes), and one-line messages for bad input.
//
// Expected figures: the demo performer holding every target 3 cents flat
// (--hold -3, no vibrato) starts each note 0.3 s into the hold (the runner's
// demo script) and her tone reaches the tracker within a frame span (30 ms),
// so the time to lock is 0.3 s (0.30 to 0.35 s), the mean is -3 c (to 0.3 c)
// and every voiced moment is within the drill's ±6 c: "locked in 0.3 s,
// held 3 cents flat, 100 % within ±6 c" (worked from ui/session/drill_runner.h and
// ui/session/drill_score.h, not from the program's output).
#include "audio/soundfile.h"
#include "tests/cli.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

using beatless::test::json_value;
using beatless::test::line_count;
using beatless::test::run_program;
using beatless::test::TempDir;

namespace {

std::vector<std::string> lines_of(const std::string& s) {
    std::vector<std::string> out;
    std::istringstream in(s);
    for (std::string l; std::getline(in, l);) out.push_back(l);
    return out;
}

}  // namespace

TEST_CASE("beatless drill --demo: one line per hold in words, and the attempts in the practice log") {
    TempDir home;
    const std::string log = home.file("p.sqlite3");
    const auto r = run_program("drill hold-septimal-tritones --demo --hold -3 --attempts 3 --log " + log,
                               {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    const auto lines = lines_of(r.out);
    REQUIRE(lines.size() == 3);
    // The drill alternates 7/5 and 10/7. The demo holds a steady pitch 3
    // cents flat with no vibrato, so the scored centre does not spread.
    CHECK(lines[0] ==
          "hold 1 of 3  7/5 lesser septimal tritone: locked in 0.3 s, held 3 cents flat, 100 % within \xC2\xB1"
          "6 c; spread 0 c while held");
    CHECK(lines[1].rfind(
              "hold 2 of 3  10/7 greater septimal tritone: locked in 0.3 s, held 3 cents flat, 100 % within \xC2\xB1"
              "6 c",
              0) == 0);
    CHECK(lines[2].rfind("hold 3 of 3  7/5 ", 0) == 0);
    CHECK(r.err.find("3 attempts saved to " + log) != std::string::npos);
    // They are the demo performer's: `beatless history` keeps them apart from the performer's own...
    const auto own = run_program("history --log " + log + " --format json", {"BEATLESS_HOME=" + home.path()});
    REQUIRE(own.exit_code == 0);
    CHECK(json_value(own.out, "d['attempts']") == "0");
    CHECK(json_value(own.out, "d['simulated_left_out']") == "3");
    // ...and reads them back when asked: three holds, mean -3 c per target.
    const auto h = run_program("history --with-demo --log " + log + " --format json", {"BEATLESS_HOME=" + home.path()});
    REQUIRE(h.exit_code == 0);
    CHECK(json_value(h.out, "d['attempts']") == "3");
    CHECK(json_value(h.out, "[t['target'] for t in d['totals']]") == "['7/5', '10/7']");
    CHECK(std::fabs(std::stod(json_value(h.out, "d['totals'][0]['mean_dev_cents']")) + 3.0) <= 0.3);
    CHECK(json_value(h.out, "d['totals'][0]['attempts']") == "2");
}

TEST_CASE("beatless drill --format json: one object per hold") {
    TempDir home;
    const auto r = run_program(
        "drill hold-septimal-tritones --demo --hold 4 --attempts 2 --format json --log " + home.file("p.sqlite3"),
        {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    const auto lines = lines_of(r.out);
    REQUIRE(lines.size() == 2);
    for (const std::string& l : lines) {
        CHECK(json_value(l, "d['kind']") == "hold");
        CHECK(json_value(l, "d['locked']") == "True");
        const double lock = std::stod(json_value(l, "d['time_to_lock_s']"));
        CHECK(lock >= 0.29);
        CHECK(lock <= 0.36);
        CHECK(std::fabs(std::stod(json_value(l, "d['mean_dev_cents']")) - 4.0) <= 0.3);
        CHECK(std::stod(json_value(l, "d['in_tolerance_share']")) >= 0.98);
        CHECK(json_value(l, "d['tolerance_cents']") == "6");
        CHECK(json_value(l, "d['of']") == "2");
    }
    CHECK(json_value(lines[1], "d['target']") == "10/7");
}

TEST_CASE(
    "beatless drill, discrimination: a finer listener gets a lower threshold, each inside its interval; perfect and "
    "guessing listeners are named") {
    TempDir home;
    const std::string log = home.file("p.sqlite3");
    double thresholds[2] = {0, 0};
    const char* listeners[2] = {"3", "15"};
    for (int i = 0; i < 2; ++i) {
        const auto r = run_program(std::string("drill ear-septimal-tritone --format json --seed 5 --listener ") +
                                       listeners[i] + " --log " + log,
                                   {"BEATLESS_HOME=" + home.path()});
        REQUIRE_MESSAGE(r.exit_code == 0, r.err);
        REQUIRE(line_count(r.out) == 1);
        CHECK(json_value(r.out, "d['task']") == "discriminate");
        CHECK(json_value(r.out, "d['complete']") == "True");
        REQUIRE(json_value(r.out, "d['estimate']") == "measured");
        thresholds[i] = std::stod(json_value(r.out, "d['threshold_cents']"));
        CHECK(json_value(r.out, "d['lo_cents'] <= d['threshold_cents'] <= d['hi_cents']") == "True");
        // Every level asked is one the drill may play (min_cents 0.5, max_cents 100), one per answer.
        CHECK(json_value(r.out, "all(0.5 <= x <= 100 for x in d['levels_cents'])") == "True");
        CHECK(json_value(r.out, "len(d['levels_cents']) == d['trials'] == len(d['correct'])") == "True");
        // The share right is the share of the answers that were right.
        CHECK(json_value(r.out, "abs(sum(d['correct']) / d['trials'] - d['correct_share']) < 1e-3") == "True");
    }
    CHECK(thresholds[0] < thresholds[1]);
    const auto p =
        run_program("drill ear-septimal-tritone --listener perfect --log " + log, {"BEATLESS_HOME=" + home.path()});
    CHECK(p.out.rfind("ear-septimal-tritone: finer than 0.5 c after ", 0) == 0);
    const auto g = run_program("drill ear-septimal-tritone --listener guess --seed 3 --log " + log,
                               {"BEATLESS_HOME=" + home.path()});
    CHECK(g.out.rfind("ear-septimal-tritone: no reliable threshold after ", 0) == 0);
    const auto t =
        run_program("drill ear-septimal-tritone --listener 6 --log " + log, {"BEATLESS_HOME=" + home.path()});
    CHECK(t.out.rfind("ear-septimal-tritone: threshold ", 0) == 0);
    CHECK(t.out.find(" c (95 % interval ") != std::string::npos);
    CHECK(t.out.find("method: 2-down 1-up staircase (Levitt 1971") != std::string::npos);
    // The log keeps the method, the estimate and its interval, and every answer.
    const auto h = run_program("history --with-demo --log " + log + " --format json", {"BEATLESS_HOME=" + home.path()});
    CHECK(json_value(h.out, "[t['attempts'] for t in d['totals'] if t['kind'] == 'ear']") == "[5]");
}

TEST_CASE("beatless drill, identification: the confusion matrix has every interval asked its rounds") {
    TempDir home;
    const auto r = run_program("drill ear-tritones --format json --seed 5 --listener 8 --log " + home.file("p.sqlite3"),
                               {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    CHECK(json_value(r.out, "d['task']") == "identify");
    CHECK(json_value(r.out, "d['choices']") == "11/8 7/5 45/32 600c 10/7 729/512");
    CHECK(json_value(r.out, "[sum(row) for row in d['confusion']]") == "[8, 8, 8, 8, 8, 8]");  // rounds = 8
    CHECK(json_value(r.out,
                     "abs(sum(d['confusion'][i][i] for i in range(6)) / d['trials'] - d['correct_share']) < 1e-3") ==
          "True");
    const auto p = run_program("drill ear-tritones --listener perfect --log " + home.file("p.sqlite3"),
                               {"BEATLESS_HOME=" + home.path()});
    CHECK(p.out.rfind("ear-tritones: 48 of 48 answers right (100 %)", 0) == 0);
    CHECK(p.out.find("confusion matrix (rows: played, columns: named)") != std::string::npos);
    CHECK(p.out.find("10/7     729/512    5.8 c apart: 100 % of 16") !=
          std::string::npos);  // 1200 log2(729/512 / 10/7) = -5.8 c
}

TEST_CASE("a practice log that cannot be written: the scores print, one line says where the attempts went, exit 1") {
    TempDir home;
    { std::ofstream(home.file("blocker")) << "a file where the data folder should be"; }
    // The default log, whose folder is blocked by a file (a --log in a missing folder is refused before the drill).
    const std::string log = home.file("blocker") + "/data/practice.sqlite3";
    const auto r = run_program("drill hold-septimal-tritones --demo --hold -3 --attempts 2",
                               {"BEATLESS_HOME=" + home.file("blocker")});
    CHECK(r.exit_code == 1);
    CHECK(line_count(r.out) == 2);  // the drill still ran
    const auto err = lines_of(r.err);
    REQUIRE(!err.empty());
    const std::string& last = err.back();
    CHECK(last.find("practice log " + log + ": cannot write (cannot open or create it); 2 attempts kept") !=
          std::string::npos);
    const auto at = last.find("written to ");
    REQUIRE(at != std::string::npos);
    const std::string csv = last.substr(at + 11, last.find(' ', at + 11) - at - 11);
    // Nothing is lost: the CSV goes into another log whole.
    const std::string other = home.file("other.sqlite3");
    const auto imp = run_program("history --import " + csv + " --log " + other, {"BEATLESS_HOME=" + home.path()});
    CHECK_MESSAGE(imp.exit_code == 0, imp.err);
    CHECK(imp.out.find("imported 2 attempts") != std::string::npos);
    std::remove(csv.c_str());
}

TEST_CASE("beatless drill: bad input gives one line naming the value, exit 1 or 2") {
    TempDir home;
    struct Case {
        std::string args;
        int code;
        std::string says;
    } cases[] = {
        {"drill nope --demo", 1, "'nope': no built-in drill file of that name"},
        {"drill ear-tritones", 2, "drill ear-tritones is an ear drill and needs a listener"},
        {"drill ear-tritones --demo", 2, "--demo: the demo performer sings hold drills"},
        {"drill ear-tritones --listener 0", 1, "--listener '0'"},
        {"drill ear-tritones --listener sharp", 1, "--listener 'sharp': must be perfect, guess or a threshold"},
        {"drill ear-tritones --listener 10 --attempts 2", 2, "--attempts counts holds"},
        {"drill hold-tritones --demo --listener 10", 2, "--listener is for ear drills; hold-tritones is a hold drill"},
        {"drill hold-tritones --hold 3", 2, "--hold works with --demo only"},
        {"drill hold-tritones --demo --hold 300", 1, "--hold 300"},
        {"drill hold-tritones --demo --attempts -1", 1, "--attempts -1"},
        {"drill hold-tritones --demo --root Q9", 1, "'Q9'"},
        {"drill hold-tritones --demo --root 5000", 1, "5000"},
        {"drill hold-tritones --demo --a4 300", 1, "300"},
        {"drill hold-tritones --demo --input 1", 2, "--demo and --input contradict each other"},
        {"drill hold-tritones --demo --format csv", 2, "--format"},
        {"drill " + home.file("missing.toml") + " --demo", 1, "missing.toml"},
    };
    for (const Case& c : cases) {
        CAPTURE(c.args);
        const auto r = run_program(c.args + " --log " + home.file("p.sqlite3"), {"BEATLESS_HOME=" + home.path()});
        CHECK(r.exit_code == c.code);
        CHECK(r.err.find(c.says) != std::string::npos);
        CHECK(line_count(r.err) == 1);
        CHECK(r.out.empty());
    }
}

TEST_CASE(
    "the Drills screen does not start an ear drill without an output device, and says why; a simulated listener needs "
    "none") {
    TempDir home;
    const std::string png = home.file("x.png");
    const auto r = run_program("snapshot --screen drills --drill ear-septimal-tritone --seconds 2 --out " + png,
                               {"BEATLESS_HOME=" + home.path()});
    CHECK(r.exit_code == 0);
    CHECK(r.err.find("no output device: an ear drill plays its questions, so it cannot start without one") !=
          std::string::npos);
    const auto l =
        run_program("snapshot --screen drills --drill ear-septimal-tritone --listener 5 --seconds 2 --out " + png,
                    {"BEATLESS_HOME=" + home.path()});
    CHECK(l.exit_code == 0);
    CHECK(l.err.find("no output device") == std::string::npos);
}

// ---- Two voices: a double stop's interval scored against each hold's target ----------------------------------
//
// A generated double stop (two bowed-string-like voices, partials 1/h, G3 and an interval above it) plays the drill's
// targets in order on the drill's own clock. The interval's cents from its ratio, 1200 log2(p/q) (common practice),
// plus the planted offset, is what the drill must score: each step planted within 2 c passes (locks), a step planted
// 20 c wide fails (no lock) and reads 20 c wide. The hold scores' tolerance here, 1 c, is the two-voice bar of
// issue 16 (p95 interval error 1 c on steady parts).

namespace {

namespace ts = beatless::testsig;

// 7/4 then 7/5, 3 s each: with the runner's 1.5 s settle and 1.5 s announce, the holds run 4-7 s and 10-13 s.
const char* kDoubleStops = R"(kind = "drill"
title = "Septimal double stops"
about = "7/4 then 7/5 between two strings."
mode = "hold"
hold_s = 3.0
lead_in_s = 1.0
rest_s = 0.5
tolerance_cents = 5.0
dwell_s = 0.3
[drone]
root = "G2"
[[target]]
interval = "7/4"
[[target]]
interval = "7/5"
)";
constexpr double kHoldStartS[] = {4.0, 10.0};
constexpr double kHoldS = 3.0;

// The two steps (p/q above G3 = 196 Hz, offset in cents), each from 0.1 s into its hold to 0.2 s past its end.
std::string double_stop_file(const TempDir& dir, const std::string& name, double off1_cents, double off2_cents) {
    const double fs = 48000.0, low_hz = 196.0;
    std::vector<float> x(static_cast<std::size_t>(13.8 * fs), 0.0f);
    const double ratios[] = {7.0 / 4.0, 7.0 / 5.0}, offs[] = {off1_cents, off2_cents};
    for (int i = 0; i < 2; ++i) {
        const double a = kHoldStartS[i] + 0.1, b = kHoldStartS[i] + kHoldS + 0.2;
        ts::add_tone(x, fs, low_hz, a, b, 0.1, ts::rolloff(10));
        ts::add_tone(x, fs, low_hz * ratios[i] * ts::cents_to_ratio(offs[i]), a, b, 0.08, ts::rolloff(10),
                     {0.5, 1, 1.5, 2, 2.5, 3, 0.2, 0.4, 0.6, 0.8});
    }
    ts::add_noise(x, 1e-4, 5);
    const std::string path = dir.file(name);
    beatless::audio::SoundWriter w(path, fs, 1, beatless::audio::SampleFormat::float32);
    w.write(x);
    w.close();
    return path;
}

}  // namespace

TEST_CASE("drill --voices 2 --input-file: a double stop's interval scored against each hold, as for one voice") {
    TempDir home;
    const std::string drill = home.file("double-stops.toml");
    { std::ofstream(drill) << kDoubleStops; }
    const std::string log = home.file("p.sqlite3");
    const std::vector<std::string> env = {"BEATLESS_HOME=" + home.path()};

    // Both steps within 2 c: both pass, each read within 1 c of what was planted.
    const std::string good = double_stop_file(home, "good.wav", 1.5, -1.8);
    const auto r =
        run_program({"drill", drill, "--voices", "2", "--input-file", good, "--log", log, "--format", "json"}, env);
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    auto lines = lines_of(r.out);
    REQUIRE(lines.size() == 2);
    const double planted[] = {1.5, -1.8};
    for (int i = 0; i < 2; ++i) {
        CHECK(json_value(lines[i], "d['voices']") == "2");
        CHECK(json_value(lines[i], "d['target']") == (i == 0 ? "7/4" : "7/5"));
        CHECK(json_value(lines[i], "d['locked']") == "True");
        CHECK(std::fabs(std::stod(json_value(lines[i], "d['mean_dev_cents']")) - planted[i]) <= 1.0);
        CHECK(std::stod(json_value(lines[i], "d['in_tolerance_share']")) >= 0.9);
    }
    CHECK(r.err.find("2 attempts saved to " + log) != std::string::npos);
    // The practice log keeps the mode with each attempt (its settings), for the history.
    const auto csv = run_program({"history", "--export", "-", "--log", log}, env);
    REQUIRE_MESSAGE(csv.exit_code == 0, csv.err);
    CHECK(csv.out.find("\"\"voices\"\": 2") != std::string::npos);

    // The second step 20 c wide: the first still passes, the second fails, read 20 c wide.
    const std::string wide = double_stop_file(home, "wide.wav", 0.5, 20.0);
    const auto w = run_program({"drill", drill, "--voices", "2", "--input-file", wide, "--log", log}, env);
    REQUIRE_MESSAGE(w.exit_code == 0, w.err);
    lines = lines_of(w.out);
    REQUIRE(lines.size() == 2);
    CHECK(lines[0].rfind("hold 1 of 2  7/4 ", 0) == 0);
    CHECK(lines[0].find(": locked in ") != std::string::npos);
    CHECK(lines[1].rfind("hold 2 of 2  7/5 ", 0) == 0);
    CHECK(lines[1].find(": no lock, 20 cents sharp on average, 0 % within \xC2\xB1"
                        "5 c") != std::string::npos);
    CHECK(w.err.find("the interval between two voices") != std::string::npos);

    // --voices other than 1 or 2, and two voices for an ear drill: one line each, exit 1.
    const auto v3 = run_program({"drill", drill, "--voices", "3", "--input-file", good}, env);
    CHECK(v3.exit_code == 1);
    CHECK(v3.err == "beatless: --voices 3: 1 or 2\n");
    const auto ear = run_program({"drill", "ear-tritones", "--voices", "2", "--listener", "5"}, env);
    CHECK(ear.exit_code != 0);
    CHECK(line_count(ear.err) == 1);
    CHECK(ear.err.find("--voices 2") != std::string::npos);
}
