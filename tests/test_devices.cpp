// Device choice, rate negotiation and a device that disappears mid-session,
// on the fake audio system. Messages are checked for what DESIGN.md asks:
// one line naming the device and the problem, --demo suggested when there is
// no input at all.
#include "audio/device.h"
#include "audio/engine.h"
#include "audio/fake_device.h"
#include "pitch/base/error.h"
#include "pitch/theory/interval.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <string>

using namespace beatless;
using namespace beatless::audio;

namespace {

std::string choose_error(const std::vector<DeviceInfo>& devs, const std::string& spec, Direction dir) {
    try {
        choose_device(devs, spec, dir);
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}

// Readings against one target (what they are does not matter here).
void set_one_target(Engine& e) {
    pitch::ReadingConfig rc;
    rc.root_hz = 110.0;
    pitch::TargetSet set;
    set.targets.push_back({pitch::parse_interval("3/2"), ""});
    e.set_readings(rc, set);
}

std::vector<DeviceInfo> three() {
    return {fake_device(0, "Built-in Microphone", 2, 0), fake_device(3, "USB Audio Interface", 2, 2),
            fake_device(5, "HDMI Output", 0, 8)};
}

}  // namespace

TEST_CASE("devices are chosen by index or by a unique part of the name") {
    const auto devs = three();
    CHECK(choose_device(devs, "3", Direction::input) == 3);
    CHECK(choose_device(devs, "usb", Direction::output) == 3);
    CHECK(choose_device(devs, "Microphone", Direction::input) == 0);
    CHECK(choose_device(devs, "", Direction::input) == 0);  // the default input (first with inputs here)
    CHECK(choose_device(devs, "", Direction::output) == 3);
    CHECK(choose_device(devs, "hdmi", Direction::output) == 5);
}

// The default rule (common practice on desktops: the sound server's choice
// stands for the user's): the server's default first, then the host's, then
// the first device with channels; the same list always gives the same choice.
TEST_CASE("the default device: the sound server's, then the host's, then the first listed") {
    std::vector<DeviceInfo> devs = {fake_device(0, "default", 32, 32), fake_device(1, "system", 2, 2),
                                    fake_device(2, "hall.monitor", 2, 0), fake_device(3, "room.monitor", 2, 0),
                                    fake_device(4, "room", 0, 2)};
    devs[0].default_input = devs[0].default_output = true;  // ALSA's default
    for (int i : {2, 3, 4}) devs[static_cast<std::size_t>(i)].server = true;
    devs[3].default_input = devs[4].default_output = true;  // the server's default source and sink
    for (int run = 0; run < 10; ++run) {
        const DeviceChoice in = choose_device_why(devs, "", Direction::input);
        CHECK(in.index == 3);
        CHECK(in.why == ChoiceWhy::server_default);
    }
    CHECK(choose_device_why(devs, "", Direction::output).index == 4);
    devs[3].default_input = false;  // a server without a default source: its first source by name
    CHECK(choose_device_why(devs, "", Direction::input).index == 2);
    CHECK(choose_device_why(devs, "", Direction::input).why == ChoiceWhy::server_first);
    devs.resize(2);  // no server: the host's default
    CHECK(choose_device_why(devs, "", Direction::input).index == 0);
    CHECK(choose_device_why(devs, "", Direction::input).why == ChoiceWhy::host_default);
    devs[0].default_input = false;  // no default at all: the first with inputs
    CHECK(choose_device_why(devs, "", Direction::input).index == 0);
    CHECK(choose_device_why(devs, "", Direction::input).why == ChoiceWhy::first_listed);
}

TEST_CASE("a whole device name wins over names that contain it") {
    const std::vector<DeviceInfo> devs = {fake_device(0, "room.monitor", 2, 0), fake_device(1, "room", 2, 2),
                                          fake_device(2, "roomy", 2, 0)};
    CHECK(choose_device(devs, "room", Direction::input) == 1);
    CHECK(choose_device(devs, "ROOM.monitor", Direction::input) == 0);
    CHECK(choose_device_why(devs, "1", Direction::input).why == ChoiceWhy::index);
    CHECK(choose_error(devs, "roo", Direction::input).find("matches 3 devices") != std::string::npos);
}

TEST_CASE("the drone's default output is the input's own device when it has outputs") {
    std::vector<DeviceInfo> devs = {fake_device(0, "jack", 2, 2), fake_device(1, "system", 2, 2),
                                    fake_device(2, "room.monitor", 2, 0), fake_device(3, "room", 0, 2)};
    devs[0].default_output = true;
    devs[3].server = devs[3].default_output = true;
    const DeviceChoice same = choose_output_device(devs, "", 1);  // a duplex card: one clock for both
    CHECK(same.index == 1);
    CHECK(same.why == ChoiceWhy::input_device);
    CHECK(choose_output_device(devs, "", 2).index == 3);  // a source has no outputs: the server's default sink
    CHECK(choose_output_device(devs, "", 2).why == ChoiceWhy::server_default);
    CHECK(choose_output_device(devs, "jack", 1).index == 0);  // a named output wins
}

TEST_CASE("bad device choices: one line naming the device and the problem") {
    const auto devs = three();
    const std::string none = choose_error({}, "", Direction::input);
    CHECK(none == "no audio input device found (use --demo for the built-in performer)");
    CHECK(choose_error({fake_device(0, "Loudspeakers", 0, 2)}, "", Direction::input).find("--demo") !=
          std::string::npos);
    CHECK(choose_error(devs, "9", Direction::input) == "input device 9: no such device (see beatless devices)");
    CHECK(choose_error(devs, "5", Direction::input) == "device 5 'HDMI Output' has no input channels");
    CHECK(choose_error(devs, "theremin", Direction::input) ==
          "input device 'theremin': no input device has that in its name (see beatless devices)");
    const std::string many = choose_error(devs, "u", Direction::input);  // "Built-in" and "USB" both hold a "u"
    CHECK(many.find("matches 2 devices") != std::string::npos);
    CHECK(many.find("0 'Built-in Microphone'") != std::string::npos);
    CHECK(many.find("3 'USB Audio Interface'") != std::string::npos);
    for (const std::string& m : {none, many}) CHECK(m.find('\n') == std::string::npos);
}

TEST_CASE("the sample rate is negotiated, and a refused rate is named") {
    FakeAudioSystem sys({fake_device(0, "Interface", 2, 2, 44100.0)}, {44100.0, 96000.0});
    {
        EngineConfig ec;  // rate 0: negotiate
        Engine e(ec, &sys);
        e.open_input_device("0");
        set_one_target(e);
        e.start(false);
        CHECK(e.sample_rate_hz() == 44100.0);
        CHECK(e.input_info().sample_rate_hz == 44100.0);
        CHECK(e.input_info().block_len_frames == 256);
    }
    EngineConfig ec;
    ec.sample_rate_hz = 12345.0;
    Engine e(ec, &sys);
    e.open_input_device("Interface");
    set_one_target(e);
    std::string msg;
    try {
        e.start(false);
    } catch (const Error& err) {
        msg = err.what();
    }
    CHECK(msg == "device 'Interface' refuses 12345 Hz (its default is 44100 Hz)");
}

TEST_CASE("a device that disappears: readings pause, the engine says so, reopens, and readings resume") {
    const double rate = 48000.0;
    FakeAudioSystem sys({fake_device(0, "Fake card", 1, 2, rate)}, {rate});
    EngineConfig ec;
    ec.reopen_every_s = 0.0;  // retry at every supervise() in this test
    ec.stall_s = 3600.0;      // only the stream's own state counts here
    Engine e(ec, &sys);
    std::vector<std::string> msgs;
    e.on_message([&](const std::string& m) { msgs.push_back(m); });
    e.open_input_device("card");
    e.open_output_device("card");
    set_one_target(e);
    DroneSettings d;
    d.on = true;
    e.set_drone(d);
    e.start(false);
    std::vector<float> voice(static_cast<std::size_t>(rate), 0.0f), out(512);
    testsig::add_tone(voice, rate, 165.0, 0.0, 1.0, 0.1, testsig::rolloff(8));
    auto play = [&](std::size_t from, std::size_t to) {
        for (std::size_t i = from; i + 256 <= to; i += 256) {
            sys.drive(std::span<const float>(voice.data() + i, 256), out, 1, 2);
            e.analyze_available();
        }
    };
    play(0, voice.size() / 2);
    e.supervise();
    const auto before = e.status().readings;
    CHECK(before > 50);
    CHECK(msgs.empty());
    CHECK(e.status().input_ok);

    sys.set_present(false);  // unplugged
    play(voice.size() / 2, voice.size());
    e.supervise();
    REQUIRE(msgs.size() == 1);
    CHECK(msgs[0] ==
          "input device 'Fake card' stopped delivering audio; readings paused, drone stopped; trying to reopen it "
          "every 0 s");
    CHECK(e.status().readings == before);  // nothing new while it is gone
    CHECK_FALSE(e.status().input_ok);
    e.supervise();  // still gone: no new message, no crash
    CHECK(msgs.size() == 1);

    sys.set_present(true);  // plugged back in
    e.supervise();
    REQUIRE(msgs.size() == 2);
    CHECK(msgs[1] == "input device 'Fake card' is back (48000 Hz)");
    CHECK(sys.opens() == 2);
    play(0, voice.size() / 2);
    CHECK(e.status().readings > before + 50);
    CHECK(e.status().input_ok);
}
