// The sound system the program uses: PortAudio's devices and a pulse server's.
//
// make_sound_system() lists PortAudio's devices (ALSA) first, then a JACK
// server's devices through libjack (audio/jack_device.h), then the sources and
// sinks of a pulse server (PulseAudio, or PipeWire's pulse server) when one
// answers, under one index; opening, rescanning and retiring go to
// the backend that listed the device. An empty device spec picks the pulse
// server's default source or sink first (choose_device_why), so a desktop's
// own choice wins. Thread: the control thread (as AudioSystem).
#pragma once

#include "audio/device.h"

#include <memory>

namespace beatless::audio {

// Never throws: when PortAudio cannot start, only the pulse server's devices
// are listed (and none while no server answers).
std::unique_ptr<AudioSystem> make_sound_system();

}  // namespace beatless::audio
