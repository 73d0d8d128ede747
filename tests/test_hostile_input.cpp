// Hostile input: rows without a uid imported twice, control characters in
// names from files, and the small cases found with hostile options.
//
// Sources: FNV-1a 128-bit (Fowler, Noll, Vo; IETF draft-eastlake-fnv: offset
// basis 0x6c62272e07bb014262b821756295c58d, prime 2^88 + 2^8 + 0x3b), its
// values checked with a Python big-integer computation of that definition
// (/usr/bin/python3); control characters are ECMA-48's C0 set (ESC 0x1B,
// BEL 0x07), DEL and the C1 set (CSI U+009B); TOML writes them as \uXXXX
// escapes (TOML 1.0, "String"). Option ranges are the program's own
// (DESIGN.md: exit 1 for a bad value, one line naming it).
#include "pitch/base/text.h"
#include "tests/cli.h"
#include "ui/session/log_csv.h"

#include <doctest/doctest.h>

#include <fstream>
#include <sstream>
#include <string>
#include <vector>

using beatless::test::run_program;
using beatless::test::TempDir;

namespace {

std::string slurp(const std::string& p) {
    std::ifstream in(p, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

bool has_control(const std::string& s) {
    for (unsigned char c : s)
        if ((c < 0x20 && c != '\n') || c == 0x7f) return true;
    return s.find("\xc2\x9b") != std::string::npos;
}

// A fixed FNV-1a 128 over `text`, computed by Python from the definition.
std::string python_fnv1a_128(const std::string& text) {
    const std::string json = "{\"t\": \"" + text + "\"}";
    return beatless::test::json_value(
        json,
        "(lambda p, h: [h := ((h ^ c) * p) % (1 << 128) for c in d['t'].encode()] and '%032x' % h or '%032x' % h)"
        "((1 << 88) + 0x13b, 0x6c62272e07bb014262b821756295c58d)");
}

}  // namespace

TEST_CASE("content_uid is FNV-1a 128 as 32 hex digits") {
    using beatless::ui::content_uid;
    CHECK(content_uid("") == "6c62272e07bb014262b821756295c58d");   // the offset basis (draft-eastlake-fnv)
    CHECK(content_uid("a") == "d228cb696f1a8caf78912b704e4a8964");  // FNV test vector, from memory; Python agrees below
    CHECK(content_uid("a") == python_fnv1a_128("a"));
    CHECK(content_uid("foobar") == python_fnv1a_128("foobar"));
    CHECK(content_uid("started_at:24:2025-03-01T10:00:00.000Z") ==
          python_fnv1a_128("started_at:24:2025-03-01T10:00:00.000Z"));
}

TEST_CASE("rows without a uid: the first import adds them, the next ones add nothing") {
    TempDir t;
    const std::vector<std::string> env = {"BEATLESS_HOME=" + t.file("home")};
    REQUIRE(run_program({"drill", "hold-septimal", "--demo", "--attempts", "3", "--log", t.file("a.sqlite3")}, env)
                .exit_code == 0);
    REQUIRE(run_program({"history", "--log", t.file("a.sqlite3"), "--with-demo", "--export", t.file("a.csv")}, env)
                .exit_code == 0);
    // Blank every row's uid (the first field, 32 hex digits).
    std::istringstream in(slurp(t.file("a.csv")));
    std::string line, csv;
    int rows = 0;
    while (std::getline(in, line)) {
        if (rows++ > 0 && line.size() > 33 && line[32] == ',') line = line.substr(32);
        csv += line + "\n";
    }
    REQUIRE(rows == 4);
    std::ofstream(t.file("no-uid.csv"), std::ios::binary) << csv;
    auto r = run_program({"history", "--log", t.file("b.sqlite3"), "--import", t.file("no-uid.csv")}, env);
    CHECK(r.exit_code == 0);
    CHECK(r.out.find("imported 3 attempts") == 0);
    for (int again = 0; again < 2; ++again) {
        r = run_program({"history", "--log", t.file("b.sqlite3"), "--import", t.file("no-uid.csv")}, env);
        CHECK(r.exit_code == 0);
        CHECK(r.out.find("imported 0 attempts") == 0);
        CHECK(r.out.find("(3 already in the log)") != std::string::npos);
    }
}

TEST_CASE("printable writes control characters as escapes and keeps UTF-8") {
    using beatless::pitch::printable;
    CHECK(printable("\x1b[31mred") == "\\x1b[31mred");
    CHECK(printable("bell\x07") == "bell\\x07");
    CHECK(printable("del\x7f") == "del\\x7f");
    CHECK(printable("csi\xc2\x9b"
                    "2J") == "csi\\u009b2J");
    CHECK(printable("caf\xc3\xa9 \xc2\xb7 7/5") == "caf\xc3\xa9 \xc2\xb7 7/5");  // é and the middle dot stay
    CHECK(beatless::pitch::quote("a\x1b"
                                 "b") == "'a\\x1bb'");
}

TEST_CASE("names and keys from a TOML file reach the terminal escaped") {
    TempDir t;
    const std::vector<std::string> env = {"BEATLESS_HOME=" + t.file("home")};
    REQUIRE(run_program({"tone", "--root", "D3", "--ratio", "7/5", "--seconds", "1", "--out", t.file("ok.wav")}, env)
                .exit_code == 0);
    std::ofstream(t.file("evil.toml")) << "kind = \"targets\"\ntitle = \"Evil \\u001b]0;owned\\u0007 set\"\n"
                                          "[[target]]\ninterval = \"7/5\"\nname = \"red \\u001b[31m\\u009b name\"\n";
    auto r = run_program({"analyze", t.file("ok.wav"), "--root", "D3", "--targets", t.file("evil.toml")}, env);
    CHECK(r.exit_code == 0);
    CHECK(!has_control(r.out));
    CHECK(r.out.find("Evil \\x1b]0;owned\\x07 set") != std::string::npos);
    std::ofstream(t.file("key.toml"))
        << "kind = \"targets\"\ntitle = \"t\"\n\"\\u001b[2J\" = 1\n[[target]]\ninterval = \"7/5\"\n";
    r = run_program({"analyze", t.file("ok.wav"), "--root", "D3", "--targets", t.file("key.toml")}, env);
    CHECK(r.exit_code == 1);
    CHECK(!has_control(r.err));
    CHECK(r.err.find("`\\x1b[2J`") != std::string::npos);
}

TEST_CASE("the small cases: --channel 0, --every nan and -1, snapshot --drill BAD, a 64-bit ratio in text") {
    TempDir t;
    const std::vector<std::string> env = {"BEATLESS_HOME=" + t.file("home")};
    REQUIRE(run_program({"tone", "--root", "D3", "--seconds", "0.5", "--out", t.file("ok.wav")}, env).exit_code == 0);
    auto r = run_program({"track", t.file("ok.wav"), "--channel", "0"}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: --channel 0: channels are numbered from 1\n");
    r = run_program({"analyze", t.file("ok.wav"), "--root", "D3", "--channel", "0"}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: --channel 0: channels are numbered from 1\n");
    for (const char* every : {"nan", "-1"}) {
        r = run_program({"ensemble", "4:5:6", "--demo", "--seconds", "0.5", "--every", every}, env);
        CHECK(r.exit_code == 1);
        CHECK(r.err == std::string("beatless: --every ") + every + ": out of range (0 to 60 s)\n");
    }
    std::ofstream(t.file("bad.toml")) << "kind = \"drill\"\nbad = 1\n";
    r = run_program({"snapshot", "--demo", "--drill", t.file("bad.toml"), "--out", t.file("x.png")}, env);
    CHECK(r.exit_code == 1);
    CHECK(r.err.find("beatless: " + t.file("bad.toml") + ":") == 0);
    r = run_program({"ratio", "9223372036854775807/9223372036854775806", "--root", "D3"}, env);
    CHECK(r.exit_code == 0);
    CHECK(r.out.find("1073741824th") == std::string::npos);
    // Each row of the mistuning table has its label and seven separate numbers.
    const auto at = r.out.find("  beat rate (Hz)");
    REQUIRE(at != std::string::npos);
    std::istringstream row(r.out.substr(at + 16, r.out.find('\n', at) - at - 16));
    int numbers = 0;
    for (std::string w; row >> w;) ++numbers;
    CHECK(numbers == 7);
}
