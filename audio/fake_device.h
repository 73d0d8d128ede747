// FakeAudioSystem — a device that tests drive by hand.
//
// It lists the devices it was given and opens streams that call the same
// StreamCallbacks as PortAudio would, but only when the test calls drive():
// each call hands one block of the test's input to capture() and asks
// playback() for one block of output, which the test can read back. A test
// can make a device disappear (the stream stops being alive and no longer
// calls back) and refuse sample rates, to check the engine's messages and
// its reopening.
#pragma once

#include "audio/device.h"

#include <span>

namespace beatless::audio {

class FakeAudioSystem : public AudioSystem {
public:
    explicit FakeAudioSystem(std::vector<DeviceInfo> devices, std::vector<double> rates_hz = {48000.0, 44100.0});

    std::vector<DeviceInfo> devices() override { return present_ ? devices_ : std::vector<DeviceInfo>{}; }
    std::unique_ptr<Stream> open(const StreamRequest& request, StreamCallbacks& callbacks) override;

    // Drives the open stream by one block: capture(in) then playback(out)
    // (out may be empty when there is no output). False when no stream is open
    // and alive. Thread: the test's "audio" thread. Allocates: no.
    bool drive(std::span<const float> in, std::span<float> out, int in_channels = 1, int out_channels = 2) noexcept;

    void set_present(bool present);       // false: devices vanish, open streams die
    int opens() const { return opens_; }  // successful open() calls
    bool stream_alive() const;

    struct FakeStream;

private:
    std::vector<DeviceInfo> devices_;
    std::vector<double> rates_hz_;
    bool present_ = true;
    int opens_ = 0;
    FakeStream* current_ = nullptr;
    friend struct FakeStream;
};

// A fake device list entry.
DeviceInfo fake_device(int index, std::string name, int inputs, int outputs, double default_rate_hz = 48000.0);

}  // namespace beatless::audio
