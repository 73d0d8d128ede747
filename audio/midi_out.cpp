#include "audio/midi_out.h"

#include "audio/midi_ports.h"
#include "pitch/base/error.h"
#include "pitch/theory/midi_tuning.h"

#include <algorithm>
#include <cmath>

namespace beatless::audio {

namespace {

constexpr std::uint8_t kMtsChannel = 0;  // MIDI channel 1
constexpr std::uint8_t kMtsProgram = 0;  // the tuning program we write and select
constexpr std::uint8_t kAllDevices = 0x7F;
constexpr std::size_t kMaxVoices = 15;  // bend mode: channels 2..16

// Registered parameter number `param` (MSB 0) set to msb/lsb on a channel,
// then the null RPN: six control changes, each its own message.
std::vector<std::vector<std::uint8_t>> rpn(std::uint8_t channel, std::uint8_t param, std::uint8_t msb,
                                           std::uint8_t lsb) {
    const std::uint8_t cc = static_cast<std::uint8_t>(0xB0 | channel);
    return {{cc, 101, 0}, {cc, 100, param}, {cc, 6, msb}, {cc, 38, lsb}, {cc, 101, 127}, {cc, 100, 127}};
}

}  // namespace

std::vector<MidiPort> list_midi_ports() {
    std::vector<MidiPort> out;
    detail::QuietStderr quiet;
    for (RtMidi::Api api : detail::midi_apis()) {
        if (auto in = detail::make_midi_in(api)) {
            const unsigned n = in->getPortCount();
            for (unsigned i = 0; i < n; ++i) out.push_back({detail::api_name(api), in->getPortName(i), true});
        }
        if (auto o = detail::make_midi_out(api)) {
            const unsigned n = o->getPortCount();
            for (unsigned i = 0; i < n; ++i) out.push_back({detail::api_name(api), o->getPortName(i), false});
        }
    }
    return out;
}

struct MidiOut::Impl {
    RtMidi::Api api = RtMidi::UNSPECIFIED;
    std::unique_ptr<RtMidiOut> out;
    bool connected = false;
    std::uint32_t bend_channels_set = 0;     // bit c: RPN 0 already sent on channel c
    std::vector<std::uint8_t> retuned_keys;  // MTS: keys to give back to 12-TET on close
};

MidiOut::MidiOut(const MidiOutConfig& config) : impl_(std::make_unique<Impl>()), config_(config) {
    if (!(config.bend_range_semitones >= 1.0 && config.bend_range_semitones <= 24.0))
        throw Error("MIDI bend range " + std::to_string(config.bend_range_semitones) +
                    " semitones: out of range (1 to 24)");
    if (config.velocity < 1 || config.velocity > 127)
        throw Error("MIDI velocity " + std::to_string(config.velocity) + ": out of range (1 to 127)");
    const detail::PortChoice p = detail::choose_midi_port(config.port, false);
    detail::QuietStderr quiet;
    impl_->api = p.api;
    impl_->out = detail::make_midi_out(p.api);
    if (!impl_->out) throw Error("MIDI output port '" + p.name + "': its MIDI system went away");
    try {
        impl_->out->openPort(p.index, "beatless out");
    } catch (const RtMidiError& e) {
        throw Error("MIDI output port '" + p.name + "': cannot be opened (" + e.getMessage() + ")");
    }
    impl_->connected = true;
    port_name_ = p.name;
    // Select tuning program 0 (RPN 3) so the single-note changes apply.
    if (config_.retune == MidiRetune::mts)
        for (auto& m : rpn(kMtsChannel, 3, kMtsProgram, 0)) send(std::move(m));
}

MidiOut::~MidiOut() {
    detail::QuietStderr quiet;  // the client's close
    silence();
    if (config_.retune == MidiRetune::mts && !impl_->retuned_keys.empty()) {
        // Give the keys back to equal temperament, as they were found.
        std::vector<pitch::MtsNoteChange> back;
        for (std::uint8_t k : impl_->retuned_keys) back.push_back({k, pitch::kMtsA4Hz * std::exp2((k - 69) / 12.0)});
        for (std::size_t i = 0; i < back.size(); i += 127) {
            const std::size_t n = std::min<std::size_t>(127, back.size() - i);
            send(pitch::mts_single_note_change(kAllDevices, kMtsProgram, std::span(back).subspan(i, n)));
        }
    }
    impl_.reset();  // closes the client while stderr is quiet
}

void MidiOut::send(std::vector<std::uint8_t> bytes) {
    if (record_) sent_.push_back(bytes);
    if (!impl_->connected) return;
    try {
        impl_->out->sendMessage(bytes.data(), bytes.size());
    } catch (const RtMidiError& e) {
        problem_ = "MIDI output port '" + port_name_ + "': " + e.getMessage();
    }
}

void MidiOut::silence() {
    for (const Note& n : sounding_) send({static_cast<std::uint8_t>(0x80 | n.channel), n.key, 0});
    sounding_.clear();
}

bool MidiOut::ensure_connected() {
    // The port may have gone (the synth quit) or come back: look before sending.
    detail::QuietStderr quiet;
    bool present = false;
    const unsigned n = impl_->out->getPortCount();
    unsigned index = 0;
    for (unsigned i = 0; i < n && !present; ++i)
        if (impl_->out->getPortName(i) == port_name_) present = true, index = i;
    if (!present) {
        if (impl_->connected) impl_->out->closePort();
        impl_->connected = false;
        sounding_.clear();
        problem_ = "MIDI output port '" + port_name_ + "': gone; the session goes on without it";
        return false;
    }
    if (!impl_->connected) {
        try {
            impl_->out->openPort(index, "beatless out");
        } catch (const RtMidiError& e) {
            problem_ = "MIDI output port '" + port_name_ + "': cannot be reopened (" + e.getMessage() + ")";
            return false;
        }
        impl_->connected = true;
        impl_->bend_channels_set = 0;
        if (config_.retune == MidiRetune::mts)
            for (auto& m : rpn(kMtsChannel, 3, kMtsProgram, 0)) send(std::move(m));
    }
    problem_.clear();
    return true;
}

bool MidiOut::supervise() {
    const std::string before = problem_;
    const bool was_connected = impl_->connected;
    if (ensure_connected() && !was_connected) {
        const std::vector<double> again = last_freqs_;  // back: sound again
        sound(again);
    }
    return problem_ != before;
}

void MidiOut::sound(std::span<const double> freqs_hz) {
    silence();
    last_freqs_.assign(freqs_hz.begin(), freqs_hz.end());
    if (!ensure_connected()) return;
    const auto velocity = static_cast<std::uint8_t>(config_.velocity);
    const std::size_t voices = std::min(freqs_hz.size(), kMaxVoices);
    if (config_.retune == MidiRetune::mts) {
        // Each voice on its nearest free key, that key retuned to the exact frequency.
        std::vector<pitch::MtsNoteChange> changes;
        for (std::size_t v = 0; v < voices; ++v) {
            const int near = pitch::key_and_bend(freqs_hz[v]).key;
            int key = near;
            for (int step = 1; std::any_of(changes.begin(), changes.end(), [&](const auto& c) { return c.key == key; });
                 ++step)
                key = std::clamp(near + (step % 2 ? (step + 1) / 2 : -step / 2), 0, 127);
            changes.push_back({static_cast<std::uint8_t>(key), freqs_hz[v]});
            if (std::find(impl_->retuned_keys.begin(), impl_->retuned_keys.end(), key) == impl_->retuned_keys.end())
                impl_->retuned_keys.push_back(static_cast<std::uint8_t>(key));
        }
        if (changes.empty()) return;
        send(pitch::mts_single_note_change(kAllDevices, kMtsProgram, changes));
        for (const auto& c : changes) {
            send({static_cast<std::uint8_t>(0x90 | kMtsChannel), c.key, velocity});
            sounding_.push_back({kMtsChannel, c.key});
        }
        return;
    }
    // Bend: voice v on channel v + 1 (MIDI channel v + 2), range stated once per channel.
    const double range = config_.bend_range_semitones;
    const auto semis = static_cast<std::uint8_t>(std::floor(range));
    const auto cents = static_cast<std::uint8_t>(std::lround((range - semis) * 100.0));
    for (std::size_t v = 0; v < voices; ++v) {
        const auto ch = static_cast<std::uint8_t>(v + 1);
        if (!(impl_->bend_channels_set & (1u << ch))) {
            for (auto& m : rpn(ch, 0, semis, cents)) send(std::move(m));
            impl_->bend_channels_set |= 1u << ch;
        }
        const pitch::KeyAndBend kb = pitch::key_and_bend(freqs_hz[v]);
        const pitch::PitchBend b = pitch::pitch_bend(kb.bend_cents, range);
        send({static_cast<std::uint8_t>(0xE0 | ch), static_cast<std::uint8_t>(b.value & 0x7F),
              static_cast<std::uint8_t>(b.value >> 7)});
        send({static_cast<std::uint8_t>(0x90 | ch), static_cast<std::uint8_t>(kb.key), velocity});
        sounding_.push_back({ch, static_cast<std::uint8_t>(kb.key)});
    }
}

}  // namespace beatless::audio
