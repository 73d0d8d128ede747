// Audio devices — listing, choosing and opening input/output streams.
//
// AudioSystem is the seam between the engine and the sound hardware:
// PortAudio (make_portaudio_system) for real devices, FakeAudioSystem
// (audio/fake_device.h) for tests, which drives the very same callbacks
// with synthetic audio. A device is chosen by its index or by a part of its
// name that matches exactly one device; the sample rate and block length
// are negotiated (the request first, then 48 000, 44 100 and the device's
// default rate) and reported in StreamInfo. Setup functions throw
// beatless::Error with one line naming the device and the problem. The
// libraries' own diagnostics (ALSA, JACK) are kept off our stderr.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::audio {

struct DeviceInfo {
    int index = -1;  // as `beatless devices` lists it
    std::string name;
    std::string host_api;  // "ALSA", "JACK Audio Connection Kit", ...
    int max_input_channels = 0;
    int max_output_channels = 0;
    double default_rate_hz = 0.0;
    bool default_input = false;  // the host's default input device
    bool default_output = false;
    bool server = false;      // served by a sound server (pulse protocol): its defaults come first
    std::string description;  // the server's longer label ("" when the host has none)
};

struct StreamRequest {
    int input_device = -1;               // index, -1 = no input
    int output_device = -1;              // index, -1 = no output (the same index = one duplex stream)
    int input_channels = 1;              // channel 0 is analyzed
    int output_channels = 2;             // the drone goes to every channel
    double sample_rate_hz = 0.0;         // 0 = negotiate (48 000, 44 100, the device default)
    std::size_t block_len_frames = 256;  // frames per callback asked for
};

struct StreamInfo {
    double sample_rate_hz = 0.0;
    std::size_t block_len_frames = 0;  // as asked; the host may vary it
    double input_latency_s = 0.0;      // reported by the host
    double output_latency_s = 0.0;
    int input_channels = 0;
    int output_channels = 0;
    std::string input_name, output_name, host_api;
};

// What a stream calls. Thread: the audio callback. Must not allocate, lock,
// log or throw (DESIGN.md real-time rules).
class StreamCallbacks {
public:
    virtual ~StreamCallbacks() = default;
    virtual void capture(const float* interleaved, std::size_t frames, int channels) noexcept = 0;
    virtual void playback(float* interleaved, std::size_t frames, int channels) noexcept = 0;
    virtual void xrun(bool input_overflow, bool output_underflow) noexcept = 0;
};

class Stream {
public:
    virtual ~Stream() = default;  // stops and closes
    virtual const StreamInfo& info() const = 0;
    virtual bool alive() const = 0;  // false once the host has stopped it (device gone)
};

class AudioSystem {
public:
    virtual ~AudioSystem() = default;
    virtual std::vector<DeviceInfo> devices() = 0;
    // Opens and starts a stream; throws Error naming the device and the problem.
    virtual std::unique_ptr<Stream> open(const StreamRequest& request, StreamCallbacks& callbacks) = 0;
    // Forgets cached device lists (after a device disappears). Default: nothing.
    virtual void rescan() {}
    // Takes a stream whose device has gone: some hosts never return from
    // closing one, so it is closed where it cannot block the caller.
    // Default: closes it at once.
    virtual void retire(std::unique_ptr<Stream> s) { s.reset(); }
};

// PortAudio. Throws Error when PortAudio cannot start at all.
std::unique_ptr<AudioSystem> make_portaudio_system();
// True when `s` was opened by a PortAudio system (closing it may block: retire it).
bool is_portaudio_stream(const Stream* s);

enum class Direction { input, output };

// How a device was chosen, for the line that names it.
enum class ChoiceWhy {
    named,           // the spec matched its whole name, or a unique part of it
    index,           // the spec was its index
    server_default,  // no spec: the sound server's default source or sink
    server_first,    // no spec, a sound server without a default: its first source or sink by name
    host_default,    // no spec and no server default: the host API's default device
    first_listed,    // no spec and no default: the first device with channels that way
    input_device,    // no output spec: the input's own device, which has outputs (one card, one clock)
};

struct DeviceChoice {
    int index = -1;
    ChoiceWhy why = ChoiceWhy::named;
};

// Picks a device by index ("3"), by its whole name, or by a unique part of its
// name (case insensitive); an empty spec picks, in this order, the sound
// server's default, the server's first device that way (a server is running,
// so it serves the desktop), the host's default, the first device with
// channels that way, so the same machine state always picks the same device.
// Throws Error: no device at all (suggesting --demo for input), no such
// index, no match, several matches (listing them), or no channels in that direction.
DeviceChoice choose_device_why(const std::vector<DeviceInfo>& devices, std::string_view spec, Direction dir);
inline int choose_device(const std::vector<DeviceInfo>& devices, std::string_view spec, Direction dir) {
    return choose_device_why(devices, spec, dir).index;
}
// The device with this index in the list, or null.
const DeviceInfo* find_device(const std::vector<DeviceInfo>& devices, int index);

// The drone's output: as choose_device_why, except that an empty spec picks the
// input's own device (input_index, -1 = none) when it has outputs.
DeviceChoice choose_output_device(const std::vector<DeviceInfo>& devices, std::string_view spec, int input_index);

// "Try --demo" style hint for messages about a missing input.
inline constexpr const char* kDemoHint = "use --demo for the built-in performer";

}  // namespace beatless::audio
