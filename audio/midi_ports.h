// MIDI ports (internal to audio/) — RtMidi objects made quietly, and a port
// chosen by number, exact name or a part of its name. The JACK backend
// prints to stderr when no server runs, so construction silences stderr
// for its duration (QuietStderr). Thread: the control thread only (it touches fd 2).
#pragma once

#include "audio/midi_out.h"
#include "audio/quiet_stderr.h"

#include <rtmidi/RtMidi.h>

#include <memory>
#include <string>
#include <vector>

namespace beatless::audio::detail {

// The APIs to try: ALSA's sequencer, then JACK.
std::vector<RtMidi::Api> midi_apis();
// A client of the given API, or nullptr when that MIDI system is not there.
std::unique_ptr<RtMidiOut> make_midi_out(RtMidi::Api api);
std::unique_ptr<RtMidiIn> make_midi_in(RtMidi::Api api);
const char* api_name(RtMidi::Api api);

struct PortChoice {
    RtMidi::Api api = RtMidi::UNSPECIFIED;
    unsigned index = 0;  // within that API's ports
    std::string name;
};
// Finds `wanted` among the ports (input or output) of every API: its number
// in the listing, its exact name, or the only port whose name contains it.
// Throws Error "MIDI port 'x': not found (ports: a, b)" or "... matches 2 ports (a, b)".
PortChoice choose_midi_port(const std::string& wanted, bool input);

}  // namespace beatless::audio::detail
