// JACK devices — a JACK server's physical ports behind AudioSystem, through libjack (jackaudio.org, jack.h):
// each stream is a client of its own, so a dead server is left in milliseconds and a restarted one rejoined
// (PortAudio 19.6's JACK host cannot do either; DEVELOPERS.md, "Methods in detail").
// Thread: setup on the caller's; the process callback on JACK's thread only (de)interleaves into preallocated scratch.
#pragma once

#include <string>

#include "audio/device.h"

#include <memory>

namespace beatless::audio {

inline constexpr const char* kJackHostApi = "JACK";  // DeviceInfo::host_api of JACK devices

// Lists nothing while no JACK server runs; never throws on construction.
// Keeps libjack's own messages off stderr. Device indices are local to this system.
std::unique_ptr<AudioSystem> make_jack_system();

// Keeps PortAudio's JACK host from joining the server: PortAudio 19.6 aborts the
// process (an assert in its Terminate) when re-initialised after the server
// died. While one of these lives (around PortAudio's initialisation),
// JACK_DEFAULT_SERVER names no server; the environment is given back after,
// so other JACK clients (make_jack_system's, RtMidi's) find the real one.
// Control thread only (it changes the environment).
class JackHiddenFromPortAudio {
public:
    JackHiddenFromPortAudio();
    ~JackHiddenFromPortAudio();
    JackHiddenFromPortAudio(const JackHiddenFromPortAudio&) = delete;
    JackHiddenFromPortAudio& operator=(const JackHiddenFromPortAudio&) = delete;

private:
    bool had_ = false;
    std::string saved_;
};

}  // namespace beatless::audio
