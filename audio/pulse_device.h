// PulseAudio devices — a pulse server's sources and sinks behind AudioSystem.
//
// Method: libpulse's asynchronous API (freedesktop.org PulseAudio client
// documentation); PipeWire's pulse server speaks the same protocol. Listing
// runs a private pa_mainloop with a deadline; each stream has its own context
// on a pa_threaded_mainloop, so a server that dies or restarts leaves nothing
// shared behind. Thread: setup on the caller's thread; the stream callbacks run
// on the mainloop's thread and only call StreamCallbacks (no allocation, lock
// or log of ours). Supports: one direction per stream, float32, 1..N channels,
// any rate (the server resamples). Does not: duplex streams, autospawn a server.
#pragma once

#include "audio/device.h"

#include <memory>

namespace beatless::audio {

inline constexpr const char* kPulseHostApi = "PulseAudio";  // DeviceInfo::host_api of pulse devices

// Lists nothing (and opens nothing) while no pulse server answers; never throws
// on construction. Device indices are local to this system (0 = the first source).
std::unique_ptr<AudioSystem> make_pulse_system();

}  // namespace beatless::audio
