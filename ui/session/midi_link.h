// MIDI link — the window's MIDI: follows the settings (or the command
// line's --midi-out / --midi-in) and mirrors the AppState onto a MidiSession
// every frame: the drone (root, fifth, octave) while it is on, and the fixed
// target's tone; a keyboard's keys set the root or fix the target. Problems
// become on-screen messages, once each. Thread: the UI thread.
#pragma once

#include "ui/session/midi_session.h"

#include <memory>
#include <optional>
#include <string>

namespace beatless::ui {

class AppState;

struct MidiOverride {
    std::optional<std::string> out;     // --midi-out: replaces the settings' port for this run
    std::optional<std::string> tuning;  // --midi-tuning
    std::optional<std::string> in;      // --midi-in
};

class MidiLink {
public:
    explicit MidiLink(MidiOverride override = {}) : override_(std::move(override)) {}
    void update(AppState& app);  // once a frame
    // "MIDI out: 'x' ..." while connected, "" when off.
    std::string status() const { return session_ ? session_->describe() : std::string(); }

private:
    MidiOverride override_;
    std::unique_ptr<MidiSession> session_;
    std::string opened_;  // the port, tuning and set the session was made for
    double root_hz_ = 0.0;
    bool fifth_ = false, octave_ = false, drone_ = false;
    std::optional<std::size_t> target_;
};

}  // namespace beatless::ui
