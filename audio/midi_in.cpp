#include "audio/midi_in.h"

#include "audio/midi_ports.h"
#include "pitch/base/error.h"

#include <algorithm>

namespace beatless::audio {

std::optional<KeyCommand> RootKeys::note(int key, bool on) {
    if (!on) {
        held_.erase(std::remove(held_.begin(), held_.end(), key), held_.end());
        if (key == root_key_) root_key_ = -1;
        return std::nullopt;
    }
    held_.push_back(key);
    if (root_key_ >= 0 && root_key_ != key) return KeyCommand{KeyCommand::Kind::set_target, key, key - root_key_};
    root_key_ = key;
    return KeyCommand{KeyCommand::Kind::set_root, key, 0};
}

struct MidiIn::Impl {
    std::unique_ptr<RtMidiIn> in;
};

MidiIn::MidiIn(const std::string& port) : impl_(std::make_unique<Impl>()) {
    const detail::PortChoice p = detail::choose_midi_port(port, true);
    detail::QuietStderr quiet;
    impl_->in = detail::make_midi_in(p.api);
    if (!impl_->in) throw Error("MIDI input port '" + p.name + "': its MIDI system went away");
    try {
        impl_->in->openPort(p.index, "beatless in");
        impl_->in->ignoreTypes(true, true, true);  // no SysEx, timing or active sensing
    } catch (const RtMidiError& e) {
        throw Error("MIDI input port '" + p.name + "': cannot be opened (" + e.getMessage() + ")");
    }
    port_name_ = p.name;
}

MidiIn::~MidiIn() {
    detail::QuietStderr quiet;  // the client's close
    impl_.reset();
}

std::vector<KeyCommand> MidiIn::poll() {
    std::vector<KeyCommand> out;
    std::vector<unsigned char> m;
    for (int i = 0; i < 256; ++i) {
        try {
            impl_->in->getMessage(&m);
        } catch (const RtMidiError&) {
            break;
        }
        if (m.empty()) break;
        if (m.size() < 3) continue;
        const unsigned status = m[0] & 0xF0;
        if (status != 0x90 && status != 0x80) continue;
        const bool on = status == 0x90 && m[2] > 0;
        if (const auto c = keys_.note(m[1], on)) out.push_back(*c);
    }
    return out;
}

}  // namespace beatless::audio
