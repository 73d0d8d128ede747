// Drill files: the shipped set, and malformed files with "file:line: problem".
//
// Sources: the harmonic series n/8 for n = 8..16 and the prime limits of the
// septimal and undecimal intervals are definitions (common practice); the
// 5-limit tritone 45/32 = 9/8 * 10/9 * 9/8 and the Pythagorean 729/512 =
// (9/8)^3 differ by the syntonic comma 81/80 (published interval tables).
#include "pitch/base/error.h"
#include "pitch/theory/ratio.h"
#include "ui/session/drill_files.h"
#include "ui/session/practice_log.h"
#include "ui/session/target_files.h"

#include <doctest/doctest.h>

#include <unistd.h>
#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>
#include <string>

using namespace beatless;
using namespace beatless::ui;

namespace {

std::string error_of(const std::string& text) {
    try {
        (void)parse_drill(text, "bad.toml");
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}

const char* kGoodHold = R"(kind = "drill"
title = "Test hold"
mode = "hold"
hold_s = 3.0

[[target]]
interval = "7/5"
)";

std::vector<std::string> ratios(const std::vector<DrillTarget>& targets) {
    std::vector<std::string> out;
    for (const auto& t : targets) out.push_back(t.target.interval.str());
    return out;
}
std::vector<std::string> ratios(const Drill& d) { return ratios(d.targets); }

}  // namespace

TEST_CASE("the shipped drills are all there and load") {
    const std::vector<std::string> expected = {
        "ear-septimal-tritone",   "ear-tritones",         "hold-double-stops",    "hold-fifthless-pentatonic",
        "hold-harmonic-cluster",  "hold-harmonic-ladder", "hold-harmonic-lydian", "hold-septimal",
        "hold-septimal-tritones", "hold-tritones",        "hold-undecimal",       "hold-whole-tones"};
    CHECK(builtin_names("drill") == expected);
    for (const auto& name : expected) {
        const Drill d = load_drill(name);
        CHECK(d.id == name);
        CHECK_FALSE(d.title.empty());
        CHECK_FALSE(d.targets.empty());
        CHECK(d.drone.level_dbfs <= -6.0);  // the drone's ceiling (hearing safety)
    }
}

TEST_CASE("each tritone of the family, held") {
    const Drill d = load_drill("hold-tritones");
    CHECK(d.mode == DrillMode::hold);
    std::vector<std::string> set;
    for (const auto& t : load_target_set("tritones").targets) set.push_back(t.interval.str());
    CHECK(ratios(d) == set);
    CHECK(d.targets.size() == 11);
    CHECK(d.hold_s >= 3.0);
    CHECK(d.drone.root_hz == doctest::Approx(110.0));  // A2 with A4 = 440 Hz (ISO 16)
}

TEST_CASE("7/5 against 10/7, alternately") {
    const Drill d = load_drill("hold-septimal-tritones");
    const auto seq = d.sequence(1);
    REQUIRE(seq.size() == 2 * static_cast<std::size_t>(d.repetitions));
    CHECK(d.repetitions >= 2);
    for (std::size_t i = 0; i < seq.size(); ++i) CHECK(seq[i].target.interval.str() == (i % 2 == 0 ? "7/5" : "10/7"));
    CHECK(seq[0].target.name == "lesser septimal tritone");  // from targets/names.toml
}

TEST_CASE("the 5-limit and Pythagorean tritones built from whole tones") {
    const Drill d = load_drill("hold-whole-tones");
    CHECK(ratios(d) == std::vector<std::string>{"9/8", "5/4", "45/32", "9/8", "81/64", "729/512"});
    const auto five = d.targets[2].target.interval.ratio(), pyth = d.targets[5].target.interval.ratio();
    CHECK(pyth / five == pitch::Ratio{81, 80});  // the syntonic comma
    CHECK(d.hold_of(d.targets[2]) == 5.0);       // per-target hold
    CHECK(d.hold_of(d.targets[0]) == d.hold_s);
}

TEST_CASE("a harmonic-series ladder from 8 to 16") {
    const Drill d = load_drill("hold-harmonic-ladder");
    REQUIRE(d.targets.size() == 9);
    for (int n = 8; n <= 16; ++n)
        CHECK(d.targets[static_cast<std::size_t>(n - 8)].target.interval.ratio() == pitch::Ratio::make(n, 8));
}

TEST_CASE("a septimal and an undecimal set") {
    const Drill sept = load_drill("hold-septimal");
    for (const auto& t : sept.targets) CHECK(pitch::prime_limit(t.target.interval.ratio()) == 7);
    CHECK(sept.targets.size() >= 6);
    CHECK(sept.order == TargetOrder::shuffle);
    const Drill und = load_drill("hold-undecimal");
    for (const auto& t : und.targets) CHECK(pitch::prime_limit(t.target.interval.ratio()) == 11);
    CHECK(und.targets.size() >= 6);
}

TEST_CASE("the ear drills: naming the close tritones, and a mistuned 7/5") {
    const Drill d = load_drill("ear-tritones");
    CHECK(d.mode == DrillMode::ear);
    CHECK(d.task == ui::EarTask::identify);
    CHECK(d.targets_text() == "11/8 7/5 45/32 600c 10/7 729/512");
    CHECK(d.rounds >= 1);
    const Drill m = load_drill("ear-septimal-tritone");
    CHECK(m.task == ui::EarTask::discriminate);
    CHECK(m.targets_text() == "7/5");
    CHECK(m.staircase.n_down == 2);
    CHECK(m.staircase.threshold_reversals % 2 == 0);
    // The fit tracks the rule's point: p^2 = 1/2 (Levitt 1971, Table I).
    CHECK(m.fit_config().threshold_p == doctest::Approx(0.70711).epsilon(1e-5));
    CHECK(m.fit_config().min_cents == m.staircase.min_level);
}

TEST_CASE("shuffled rounds are permutations, replayable from the seed") {
    const Drill d = load_drill("hold-septimal");
    const auto a = d.sequence(5), b = d.sequence(5), c = d.sequence(6);
    REQUIRE(a.size() == d.targets.size() * static_cast<std::size_t>(d.repetitions));
    CHECK(ratios(a) == ratios(b));
    CHECK(ratios(a) != ratios(c));
    const std::size_t n = d.targets.size();
    for (std::size_t round = 0; round < static_cast<std::size_t>(d.repetitions); ++round) {
        std::multiset<std::string> got, want;
        for (std::size_t i = 0; i < n; ++i) {
            got.insert(a[round * n + i].target.interval.str());
            want.insert(d.targets[i].target.interval.str());
        }
        CHECK(got == want);
    }
}

TEST_CASE("drill settings are a JSON object the practice log accepts") {
    const auto dir = std::filesystem::temp_directory_path() / ("beatless-drill-json-" + std::to_string(::getpid()));
    std::filesystem::remove_all(dir);
    std::filesystem::create_directories(dir);  // a log the user names must be in a folder that exists
    PracticeLog log(dir / "p.sqlite3");
    for (const auto& name : builtin_names("drill")) {
        const std::string json = drill_settings_json(load_drill(name));
        CHECK_MESSAGE(log.is_json_object(json), name << ": " << json);
    }
    CHECK_FALSE(log.is_json_object("{\"a\": }"));
    CHECK_FALSE(log.is_json_object("[1, 2]"));
    std::filesystem::remove_all(dir);
}

TEST_CASE("a drill file given by path") {
    const auto path =
        std::filesystem::temp_directory_path() / ("beatless-my-drill-" + std::to_string(::getpid()) + ".toml");
    { std::ofstream(path) << kGoodHold; }
    const Drill d = load_drill(path.string());
    CHECK(d.id == path.stem().string());
    CHECK(d.hold_s == 3.0);
    CHECK(d.tolerance_cents == 10.0);  // default
    std::filesystem::remove(path);
    CHECK_THROWS_WITH_AS(load_drill(path.string()), doctest::Contains("no such file"), Error);
    CHECK_THROWS_WITH_AS(load_drill("no-such-drill"), doctest::Contains("no built-in drill"), Error);
}

TEST_CASE("malformed drill files name the file, the line and the problem") {
    CHECK(error_of(kGoodHold) == "(no error)");
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\n[[target]]\ninterval = \"7/5\"\n") ==
          "bad.toml: `mode`: required key missing (\"hold\" or \"ear\")");
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"sing\"\n[[target]]\ninterval = \"7/5\"\n") ==
          "bad.toml:3: `mode`: 'sing' is not one of \"hold\", \"ear\"");
    CHECK(error_of(
              "kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\ntolerence_cents = 5\n[[target]]\ninterval = \"7/5\"\n")
              .starts_with(
                  "bad.toml:4: `tolerence_cents`: unknown key in a hold drill; did you mean `tolerance_cents`?"));
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\nhold_s = 0\n[[target]]\ninterval = \"7/5\"\n") ==
          "bad.toml:4: `hold_s`: 0 is out of range (0.5 to 120)");
    CHECK(
        error_of(
            "kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\nrepetitions = 2.5\n[[target]]\ninterval = \"7/5\"\n") ==
        "bad.toml:4: `repetitions`: must be a whole number, not a decimal number");
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\n[[target]]\ninterval = \"7/0\"\n")
              .starts_with("bad.toml:5: "));
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\n[drone]\nroot = \"H2\"\n[[target]]\ninterval = "
                   "\"7/5\"\n")
              .starts_with("bad.toml:5: "));
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\n[drone]\nlevel_dbfs = 0\n[[target]]\ninterval = "
                   "\"7/5\"\n") == "bad.toml:5: `level_dbfs`: 0 is out of range (-60 to -6)");
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\n") ==
          "bad.toml: `[[target]]`: required table missing: add [[target]] entries with interval = \"7/5\", or "
          "target_set = \"tritones\"");
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\ntarget_set = \"nope\"\n")
              .starts_with("bad.toml:4: `target_set`: 'nope'"));
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\ntarget_set = \"tritones\"\n[[target]]\ninterval "
                   "= \"7/5\"\n") ==
          "bad.toml:4: `target_set`: give either target_set or [[target]] entries, not both");
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\nhold_s = 1.0\ndwell_s = "
                   "2.0\n[[target]]\ninterval = \"7/5\"\n")
              .starts_with("bad.toml:5: `dwell_s`: 2 must be shorter than the hold"));
    CHECK(error_of("kind = \"drill\"\ntitle = \"x\"\nmode = \"hold\"\nsound_target = \"yes\"\n[[target]]\ninterval = "
                   "\"7/5\"\n") == "bad.toml:4: `sound_target`: must be true or false, not a string");
    // TOML syntax and the kind key.
    CHECK(error_of("kind = \"drill\"\ntitle = \n").starts_with("bad.toml:2: "));
    CHECK(error_of("kind = \"targets\"\ntitle = \"x\"\n") == "bad.toml:1: `kind`: is \"targets\", expected \"drill\"");
}

TEST_CASE("malformed ear drills") {
    const std::string head = "kind = \"drill\"\ntitle = \"x\"\nmode = \"ear\"\n";
    CHECK(error_of(head + "[[target]]\ninterval = \"7/5\"\n") ==
          "bad.toml: `task`: required key missing (\"discriminate\" or \"identify\")");
    const std::string ident = head + "task = \"identify\"\n";
    CHECK(error_of(ident + "[[target]]\ninterval = \"7/5\"\n")
              .starts_with("bad.toml:5: `[[target]]`: ear question: naming an interval needs at least two"));
    CHECK(error_of(ident + "hold_s = 3\n[[target]]\ninterval = \"7/5\"\n[[target]]\ninterval = \"10/7\"\n")
              .starts_with("bad.toml:5: `hold_s`: unknown key in an ear drill"));
    CHECK(error_of(head + "task = \"three\"\n[[target]]\ninterval = \"7/5\"\n") ==
          "bad.toml:4: `task`: 'three' is not one of \"discriminate\", \"identify\"");
    CHECK(error_of(head + "task = \"discriminate\"\n[[target]]\ninterval = \"7/5\"\n[[target]]\ninterval = \"10/7\"\n")
              .find("a discrimination drill mistunes one interval; 2 are given") != std::string::npos);
    CHECK(error_of(ident +
                   "[staircase]\nrule = \"2-down\"\n[[target]]\ninterval = \"7/5\"\n[[target]]\ninterval = \"10/7\"\n")
              .find("`staircase`: only for task = \"discriminate\"") != std::string::npos);
    const std::string targets = "[[target]]\ninterval = \"7/5\"\n";
    const std::string disc = head + "task = \"discriminate\"\n";
    CHECK(error_of(disc + "[staircase]\nthreshold_reversals = 7\n" + targets)
              .starts_with("bad.toml:5: staircase: threshold_reversals 7 must be even"));
    CHECK(error_of(disc + "[staircase]\nrule = \"4-down\"\n" + targets) ==
          "bad.toml:6: `rule`: '4-down' is not one of \"2-down\", \"3-down\"");
    CHECK(error_of(disc + "[staircase]\nsteps = [2.0, \"x\"]\n" + targets) ==
          "bad.toml:6: `steps`: must hold numbers only, not a string");
    CHECK(error_of(disc + "[staircase]\nsteps = [0.5]\n" + targets).find("steps 0.5 must be a factor above 1") !=
          std::string::npos);
    const Drill ok = parse_drill(disc + "[staircase]\nrule = \"3-down\"\nfloor_run = 8\n" + targets, "ok.toml");
    CHECK(ok.task == ui::EarTask::discriminate);
    CHECK(ok.staircase.n_down == 3);
    CHECK(ok.staircase.floor_run == 8);
    CHECK(ok.fit_config().threshold_p == doctest::Approx(0.79370).epsilon(1e-5));  // Levitt's Table I: 79.4 %
}

TEST_CASE("the drills on the new sets hold what their sets hold") {
    // A drill's target_set may be a chord: its voices over the lowest (common practice).
    CHECK(ratios(load_drill("hold-harmonic-cluster")) == std::vector<std::string>{"9/8", "5/4", "11/8", "3/2"});
    CHECK(ratios(load_drill("hold-fifthless-pentatonic")) ==
          std::vector<std::string>{"1/1", "55/48", "5/4", "11/8", "5/3", "2/1"});
    const auto lydian = ratios(load_drill("hold-harmonic-lydian"));
    CHECK(std::find(lydian.begin(), lydian.end(), "11/8") != lydian.end());
    CHECK(std::find(lydian.begin(), lydian.end(), "7/4") == lydian.end());  // the 14th harmonic is left out
}
