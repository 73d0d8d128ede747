// The TOML files in targets/: every built-in file loads, and malformed files
// give messages with file and line.
#include "pitch/error.h"
#include "ui/target_files.h"
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
          "my.toml:5: 'abc': not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n[[target]]\ninterval = 7\n") ==
          "my.toml:4: 'interval' must be a string, not an integer");
    CHECK(error_of_text("title = \"x\"\n") == "my.toml: missing top-level key 'kind' (expected kind = \"targets\")");
    CHECK(error_of_text("kind = \"drill\"\ntitle = \"x\"\n") == "my.toml:1: kind is 'drill', expected \"targets\"");
    CHECK(error_of_text("kind = \"targets\"\ntitle = \"x\"\n") == "my.toml:1: missing [[target]] entries");
    CHECK(error_of_text("kind = \"targets\"\n[[target]]\ninterval = \"7/5\"\n") == "my.toml:1: missing key 'title'");
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
