// JACK devices — a JACK server's physical ports behind AudioSystem, through libjack.
//
// Method: the JACK API (jackaudio.org, jack.h): each stream is a client of its
// own with one port per channel, connected to the device's physical ports
// (a device is a client prefix such as "system"). Why not PortAudio's JACK
// host: closing its stream after the server died waits for a process callback
// that never comes (PortAudio 19.6 waits ten minutes), and it cannot be
// re-initialised meanwhile; a libjack client closes in milliseconds after the
// server died, and a new client joins the restarted server.
// Thread: setup on the caller's thread; the process callback runs on JACK's
// thread and only (de)interleaves into preallocated scratch and calls
// StreamCallbacks. Supports: duplex, any channel count, the server's rate.
// Does not: start a server, change the server's rate or period.
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
