// MIDI in — a keyboard steers the drone: a key alone sets the root; a key
// pressed while the root's key is held picks the target nearest that
// interval. RtMidi queues incoming messages on its own thread; poll() takes
// them on the control thread. Thread: the control thread that owns the object.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace beatless::audio {

// What a key press asks for (pure logic, fed with note on/off).
struct KeyCommand {
    enum class Kind { set_root, set_target } kind = Kind::set_root;
    int key = 60;                 // the key pressed (MIDI number)
    int semitones_over_root = 0;  // set_target: key minus the held root key
};

class RootKeys {
public:
    // Note on (velocity > 0) or off; returns the command a press makes.
    std::optional<KeyCommand> note(int key, bool on);

private:
    std::vector<int> held_;  // in the order pressed
    int root_key_ = -1;      // the key that set the root, while it is held
};

class MidiIn {
public:
    // Opens an input port by number, name or part of its name; throws Error
    // "MIDI input port 'x': not found (ports: ...)".
    explicit MidiIn(const std::string& port);
    ~MidiIn();
    MidiIn(const MidiIn&) = delete;
    MidiIn& operator=(const MidiIn&) = delete;

    // Commands from the key presses queued since the last call. Never blocks.
    std::vector<KeyCommand> poll();
    const std::string& port_name() const { return port_name_; }

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
    std::string port_name_;
    RootKeys keys_;
};

}  // namespace beatless::audio
