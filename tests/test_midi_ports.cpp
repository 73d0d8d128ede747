// MIDI without a MIDI system: a missing port, bad choices and the keyboard's
// rules, each a one-line message (the live path through a real MIDI server
// is tests/jack/check_jack_midi.py). The keyboard rule (a key alone sets the
// root; a key pressed while the root's key is held sets the target) is ours.
#include "audio/midi_in.h"
#include "tests/cli.h"

#include <doctest/doctest.h>

#include <filesystem>
#include <string>

using namespace beatless;

namespace {

// No JACK server of this name runs, and none may be started; no ALSA sequencer is assumed either way.
const std::vector<std::string> kNoServer = {"JACK_DEFAULT_SERVER=beatless-nobody-here", "JACK_NO_START_SERVER=1"};

}  // namespace

TEST_CASE("a MIDI port that is not there: one line, exit 1, nothing from the libraries") {
    const auto r = test::run_program({"listen", "--demo", "--seconds", "0.2", "--midi-out", "my-synth"}, kNoServer);
    CHECK(r.exit_code == 1);
    CHECK(test::line_count(r.err) == 1);
    CHECK(r.err.rfind("beatless: MIDI output port 'my-synth': not found", 0) == 0);
    const auto in = test::run_program({"listen", "--demo", "--seconds", "0.2", "--midi-in", "my-keys"}, kNoServer);
    CHECK(in.exit_code == 1);
    CHECK(test::line_count(in.err) == 1);
    CHECK(in.err.rfind("beatless: MIDI input port 'my-keys': not found", 0) == 0);
}

TEST_CASE("a bad MIDI tuning word or bend range is one line") {
    auto r = test::run_program({"listen", "--demo", "--seconds", "0.2", "--midi-out", "x", "--midi-tuning", "cents"},
                               kNoServer);
    CHECK(r.exit_code == 1);
    CHECK(r.err ==
          "beatless: MIDI tuning 'cents': expected mts (MIDI Tuning Standard) or bend (pitch bend per note)\n");
}

TEST_CASE("devices says when there are no MIDI ports") {
    if (std::filesystem::exists("/dev/snd/seq")) {
        MESSAGE("skipped: this machine has an ALSA sequencer, whose ports are always there");
        return;
    }
    // PortAudio's ALSA plugins (loaded at run time, outside the project) leak
    // under LeakSanitizer when they probe for sound servers: no leak check here.
    std::vector<std::string> env = kNoServer;
    env.push_back("ASAN_OPTIONS=detect_leaks=0");
    const auto r = test::run_program(std::vector<std::string>{"devices"}, env);
    CHECK(r.exit_code == 0);
    CHECK(r.out.find("MIDI: no ports (no ALSA sequencer or JACK server is running)\n") != std::string::npos);
    const auto j = test::run_program({"devices", "--format", "json"}, env);
    CHECK(test::json_value(j.out, "d['midi']") == "[]");
}

TEST_CASE("the keyboard: a key sets the root; a key held with it, the target") {
    audio::RootKeys k;
    auto c = k.note(62, true);  // D4 alone
    REQUIRE(c);
    CHECK(c->kind == audio::KeyCommand::Kind::set_root);
    CHECK(c->key == 62);
    c = k.note(68, true);  // G#4 while D4 is held: a tritone up
    REQUIRE(c);
    CHECK(c->kind == audio::KeyCommand::Kind::set_target);
    CHECK(c->semitones_over_root == 6);
    CHECK_FALSE(k.note(68, false));
    CHECK_FALSE(k.note(62, false));
    c = k.note(55, true);  // G3 alone again: a new root
    REQUIRE(c);
    CHECK(c->kind == audio::KeyCommand::Kind::set_root);
    CHECK(c->key == 55);
    c = k.note(50, true);  // D3 held with G3: a fourth below
    REQUIRE(c);
    CHECK(c->semitones_over_root == -5);
}
