// MIDI session — the drone and the reference tone on a MIDI synth, and a
// keyboard that changes the root or the target (audio/midi_out.h,
// audio/midi_in.h), for `listen` and the window alike. It makes the
// one-line messages the program shows. Thread: the UI/control thread.
#pragma once

#include "audio/midi_in.h"
#include "audio/midi_out.h"
#include "pitch/theory/targets.h"

#include <chrono>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace beatless::ui {

struct MidiSessionConfig {
    std::string out_port;  // "" = no MIDI out
    std::string in_port;   // "" = no MIDI in
    audio::MidiRetune retune = audio::MidiRetune::mts;
    double bend_range_semitones = 2.0;  // bend mode's range, stated by RPN 0; default 2
    bool fifth = false;                 // the drone's fifth 3/2 sounds too
    bool octave = false;                // the drone's octave 2/1 sounds too
    double a4_hz = 440.0;               // for the keys that set the root
};

// "mts" or "bend"; throws Error naming the text otherwise.
audio::MidiRetune parse_midi_retune(const std::string& text);

class MidiSession {
public:
    // Opens the ports; throws Error with a one-line message when one is missing.
    MidiSession(const MidiSessionConfig& config, double root_hz, pitch::TargetSet set,
                std::optional<std::size_t> target = std::nullopt);

    // What sounds: the drone (root, fifth, octave) and the target's reference tone, if any.
    void set_root(double root_hz);
    void set_target(std::optional<std::size_t> index);
    void set_drone(bool fifth, bool octave);
    // All at once (one retuning): `on` false keeps the synth silent.
    void set_sound(bool on, double root_hz, bool fifth, bool octave, std::optional<std::size_t> target);

    struct Change {
        std::optional<double> root_hz;            // a key set the root
        std::optional<std::size_t> target_index;  // a key held with the root chose this target
    };
    // Takes key presses and looks after the output port (about once a
    // second); appends one line per event or problem to `messages`.
    Change poll(std::vector<std::string>& messages);

    // One line saying what goes where ("MIDI out: 'x', retuned by MTS ...").
    std::string describe() const;
    double root_hz() const { return root_hz_; }
    std::optional<std::size_t> target() const { return target_; }
    audio::MidiOut* out() { return out_.get(); }

private:
    void resound();
    MidiSessionConfig config_;
    double root_hz_;
    pitch::TargetSet set_;
    std::optional<std::size_t> target_;
    bool on_ = true;
    std::unique_ptr<audio::MidiOut> out_;
    std::unique_ptr<audio::MidiIn> in_;
    std::chrono::steady_clock::time_point next_check_{};
};

}  // namespace beatless::ui
