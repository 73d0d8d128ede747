// beatless tuning: a set laid on the MIDI keys, as a listing, JSON or an MTS
// bulk tuning dump file, and its one-line messages for bad input.
//
// Sources: MIDI Manufacturers Association, "MIDI Tuning Messages" (CA-020/
// RP-020): the bulk dump F0 7E dev 08 01 tt name(16) 128 x (xx yy zz)
// checksum F7, a word being the semitone over MIDI note 0 (note 69 = 440 Hz)
// and round(fraction x 16384), computed here from that formula on its own.
// JSON read by Python's json module (tests/cli.h).
#include "tests/cli.h"

#include <doctest/doctest.h>

#include <sys/stat.h>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>
#include <vector>

using namespace beatless;

namespace {

std::vector<std::uint8_t> read_bytes(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

// The standard's word for a frequency, by its formula.
std::vector<std::uint8_t> word_of(double hz) {
    const double note = 69.0 + 12.0 * std::log2(hz / 440.0);
    const auto steps = static_cast<long>(std::lround(note * 16384.0));
    const long frac = steps % 16384;
    return {static_cast<std::uint8_t>(steps / 16384), static_cast<std::uint8_t>(frac >> 7),
            static_cast<std::uint8_t>(frac & 0x7F)};
}

}  // namespace

TEST_CASE("tuning writes the harmonic cluster as an MTS bulk dump") {
    test::TempDir dir;
    const std::string out = dir.file("cluster.syx");
    const auto r = test::run_program({"tuning", "harmonic-cluster", "--root", "D3", "--format", "syx", "--out", out});
    REQUIRE(r.exit_code == 0);
    CHECK(r.out == "wrote " + out +
                       ": Harmonic cluster 8 to 12 over D3 = 146.832 Hz, 408 bytes (MTS bulk tuning dump, 128 keys)\n");
    const auto m = read_bytes(out);
    REQUIRE(m.size() == 408);
    CHECK(std::vector<std::uint8_t>(m.begin(), m.begin() + 6) ==
          std::vector<std::uint8_t>{0xF0, 0x7E, 0x7F, 0x08, 0x01, 0x00});
    CHECK(std::string(m.begin() + 6, m.begin() + 22) == "harmonic-cluster");
    const double d3 = 440.0 * std::exp2((50 - 69) / 12.0);  // MIDI 50 (ISO 16)
    auto word_at = [&](int key) {
        return std::vector<std::uint8_t>(m.begin() + 22 + 3 * key, m.begin() + 25 + 3 * key);
    };
    CHECK(word_at(50) == word_of(d3));
    CHECK(word_at(52) == word_of(d3 * 9 / 8));
    CHECK(word_at(54) == word_of(d3 * 10 / 8));
    CHECK(word_at(56) == word_of(d3 * 11 / 8));
    CHECK(word_at(57) == word_of(d3 * 12 / 8));
    CHECK(word_at(51) == std::vector<std::uint8_t>{51, 0, 0});  // untouched keys stay equal-tempered
    std::uint8_t x = 0;
    for (std::size_t i = 1; i < 406; ++i) x = static_cast<std::uint8_t>(x ^ m[i]);
    CHECK(m[406] == (x & 0x7F));
    CHECK(m[407] == 0xF7);
    // No temporary file is left beside it.
    int files = 0;
    for (const auto& e : std::filesystem::directory_iterator(dir.path())) files += e.is_regular_file();
    CHECK(files == 1);
}

TEST_CASE("tuning lists 128 keys as text and JSON") {
    const auto t = test::run_program({"tuning", "pentatonic-11", "--root", "D3"});
    REQUIRE(t.exit_code == 0);
    CHECK(t.out.find(" 56  G#3      201.8945    -48.682 c  37 41 58      11/8 undecimal semi-augmented fourth\n") !=
          std::string::npos);
    const auto j =
        test::run_program({"tuning", "tritones", "--root", "D3", "--format", "json", "--layout", "sequence"});
    REQUIRE(j.exit_code == 0);
    CHECK(test::json_value(j.out, "len(d['keys'])") == "128");
    CHECK(test::json_value(j.out, "d['keys'][50]['target']") == "None");
    CHECK(test::json_value(j.out, "d['keys'][51]['target']") == "15/11");
    CHECK(test::json_value(j.out, "d['keys'][61]['target']") == "22/15");
    CHECK(test::json_value(j.out, "d['unplaced']") == "[]");
    CHECK(test::json_value(j.out, "d['keys'][53]['mts']") == "[55, 105, 79]");  // 7/5 over D3: 37 69 4F
}

TEST_CASE("tuning: bad input gives one line and a non-zero exit") {
    test::TempDir dir;
    auto line = [](const test::RunResult& r) { return r.err; };
    CHECK(line(test::run_program({"tuning", "tritones", "--root", "D3", "--format", "syx"})) ==
          "beatless: --format syx writes a binary file: give --out FILE.syx\n");
    auto r = test::run_program({"tuning", "tritones", "--root", "D3", "--out", dir.path()});
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: " + dir.path() + ": is a folder, not a file; give a file name\n");
    r = test::run_program({"tuning", "tritones", "--root", "D3", "--format", "syx", "--out", "/dev/null"});
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: /dev/null: is a device, not a file; give a file name\n");
    r = test::run_program({"tuning", "tritones", "--root", "D3", "--out", dir.file("no/such/dir.txt")});
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: " + dir.file("no/such/dir.txt") + ": the folder " + dir.file("no/such") +
                       " does not exist (create it first)\n");
    r = test::run_program({"tuning", "tritones", "--root", "D3", "--program", "128"});
    CHECK(r.exit_code == 1);
    CHECK(r.err == "beatless: --program 128: out of range (0 to 127)\n");
    r = test::run_program({"tuning", "tritonez", "--root", "D3"});
    CHECK(r.exit_code == 1);
    CHECK(r.err.rfind("beatless: 'tritonez': no built-in targets file of that name", 0) == 0);
    r = test::run_program({"tuning", "tritones", "--root", "H9"});
    CHECK(r.exit_code == 1);
    CHECK(test::line_count(r.err) == 1);
    // An existing file is replaced whole.
    { std::ofstream(dir.file("old.syx")) << "old"; }
    r = test::run_program({"tuning", "tritones", "--root", "D3", "--format", "syx", "--out", dir.file("old.syx")});
    CHECK(r.exit_code == 0);
    CHECK(read_bytes(dir.file("old.syx")).size() == 408);
}

TEST_CASE("ratio and --targets take every set, chords included") {
    // A chord's voices over its lowest (common practice): 8:9:10:11:12 -> 9/8 5/4 11/8 3/2.
    const auto r = test::run_program({"ratio", "harmonic-cluster", "--format", "json"});
    REQUIRE(r.exit_code == 0);
    CHECK(test::json_value(r.out, "[i['ratio'] for i in d['intervals']]") == "['9/8', '5/4', '11/8', '3/2']");
    const auto w = test::run_program({"ratio", "whole-tones-pythagorean", "--format", "json"});
    CHECK(test::json_value(w.out, "d['intervals'][6]['ratio']") == "531441/262144");
    CHECK(test::json_value(w.out, "d['intervals'][6]['cents']") ==
          "1223.46");  // 1200 + Pythagorean comma 23.460 c (Huygens-Fokker list)
    for (const char* set :
         {"harmonic-cluster", "pentatonic-11", "harmonic-lydian", "whole-tones-5-limit", "septimal-diminished"}) {
        CAPTURE(set);
        const auto l = test::run_program({"listen", "--demo", "--root", "D3", "--targets", set, "--seconds", "0.3"});
        CHECK(l.exit_code == 0);
    }
}
