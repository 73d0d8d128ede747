// MIDI out — plays the drone and the target's reference tone on a synth or
// keyboard, retuned exactly (RtMidi: ALSA sequencer and JACK MIDI ports).
//
// Two ways to retune (pitch/theory/midi_tuning.h): MTS real-time single-note
// tuning change (MMA CA-020/RP-020; every voice on channel 1, each on a key
// retuned to its frequency, tuning program 0 selected by RPN 3), or, for
// receivers that ignore MTS, per-note pitch bend MPE-style: each voice on a
// channel of its own (2, 3, ...) with the bend range stated by RPN 0. Notes
// are turned off on every change and in the destructor.
// Thread: the UI/control thread that owns the object; never the audio callback.
#pragma once

#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

namespace beatless::audio {

struct MidiPort {
    std::string api;     // "alsa" or "jack"
    std::string name;    // the port's name as the MIDI system gives it
    bool input = false;  // a port we can read from (a keyboard); else one we can send to (a synth)
};

// Every MIDI port the compiled APIs see; empty when there is no MIDI system
// (no ALSA sequencer, no JACK server). Never throws.
std::vector<MidiPort> list_midi_ports();

enum class MidiRetune { mts, bend };

struct MidiOutConfig {
    std::string port;                     // a port name, a part of one, or its number in `beatless devices`
    MidiRetune retune = MidiRetune::mts;  // default MTS; bend for receivers without it
    double bend_range_semitones = 2.0;    // stated by RPN 0 on every voice channel in bend mode; default 2
    int velocity = 48;                    // note-on velocity 1-127; default 48 (quiet: hearing safety)
};

class MidiOut {
public:
    // Opens the port (output ports only). Throws Error "MIDI port 'x': not
    // found (ports: ...)" or naming the system's problem.
    explicit MidiOut(const MidiOutConfig& config);
    ~MidiOut();  // notes off, then closes
    MidiOut(const MidiOut&) = delete;
    MidiOut& operator=(const MidiOut&) = delete;

    // Sounds exactly these frequencies (drone voices, then the reference
    // tone), turning off what sounded before. Up to 15 voices. A failed send
    // is kept as problem() (the port vanished); the caller goes on.
    void sound(std::span<const double> freqs_hz);
    void silence();
    // Looks whether the port is still there (call about once a second): a
    // port that went away sets problem(); one that came back is reopened and
    // sounds again. True when problem() changed.
    bool supervise();

    const std::string& port_name() const { return port_name_; }
    // The last send's problem as one line, or "" when all went out.
    const std::string& problem() const { return problem_; }
    // Every byte sent, in order, when record_sent(true) (tests).
    void record_sent(bool on) { record_ = on; }
    const std::vector<std::vector<std::uint8_t>>& sent() const { return sent_; }

private:
    struct Impl;
    void send(std::vector<std::uint8_t> bytes);
    bool ensure_connected();
    std::unique_ptr<Impl> impl_;
    MidiOutConfig config_;
    std::string port_name_;
    std::string problem_;
    struct Note {
        std::uint8_t channel;
        std::uint8_t key;
    };
    std::vector<Note> sounding_;
    std::vector<double> last_freqs_;
    bool record_ = false;
    std::vector<std::vector<std::uint8_t>> sent_;
};

}  // namespace beatless::audio
