#include "ui/session/midi_session.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"

#include <cmath>

namespace beatless::ui {

audio::MidiRetune parse_midi_retune(const std::string& text) {
    if (text == "mts") return audio::MidiRetune::mts;
    if (text == "bend") return audio::MidiRetune::bend;
    throw Error("MIDI tuning '" + text + "': expected mts (MIDI Tuning Standard) or bend (pitch bend per note)");
}

MidiSession::MidiSession(const MidiSessionConfig& config, double root_hz, pitch::TargetSet set,
                         std::optional<std::size_t> target)
    : config_(config), root_hz_(root_hz), set_(std::move(set)), target_(target) {
    if (!config_.out_port.empty()) {
        audio::MidiOutConfig oc;
        oc.port = config_.out_port;
        oc.retune = config_.retune;
        oc.bend_range_semitones = config_.bend_range_semitones;
        out_ = std::make_unique<audio::MidiOut>(oc);
    }
    if (!config_.in_port.empty()) in_ = std::make_unique<audio::MidiIn>(config_.in_port);
    resound();
}

void MidiSession::resound() {
    if (!out_) return;
    if (!on_) {
        out_->silence();
        return;
    }
    std::vector<double> hz = {root_hz_};
    if (config_.fifth) hz.push_back(root_hz_ * 1.5);
    if (config_.octave) hz.push_back(root_hz_ * 2.0);
    if (target_ && *target_ < set_.targets.size()) hz.push_back(root_hz_ * set_.targets[*target_].interval.value());
    out_->sound(hz);
}

void MidiSession::set_root(double root_hz) {
    root_hz_ = root_hz;
    resound();
}

void MidiSession::set_target(std::optional<std::size_t> index) {
    target_ = index;
    resound();
}

void MidiSession::set_sound(bool on, double root_hz, bool fifth, bool octave, std::optional<std::size_t> target) {
    on_ = on;
    root_hz_ = root_hz;
    config_.fifth = fifth;
    config_.octave = octave;
    target_ = target;
    resound();
}

void MidiSession::set_drone(bool fifth, bool octave) {
    config_.fifth = fifth;
    config_.octave = octave;
    resound();
}

MidiSession::Change MidiSession::poll(std::vector<std::string>& messages) {
    Change change;
    if (in_) {
        for (const audio::KeyCommand& c : in_->poll()) {
            if (c.kind == audio::KeyCommand::Kind::set_root) {
                root_hz_ = pitch::midi_to_hz(c.key, config_.a4_hz);
                change.root_hz = root_hz_;
                messages.push_back("keyboard: root " + pitch::midi_to_name(c.key) + " = " +
                                   pitch::format_trimmed(root_hz_, 3) + " Hz");
            } else if (!set_.targets.empty()) {
                // The target nearest the keys' interval, octaves folded in (common practice: 12-TET keys stand for the just targets).
                const double cents = 100.0 * c.semitones_over_root;
                std::size_t best = 0;
                double best_d = 1e9;
                for (std::size_t i = 0; i < set_.targets.size(); ++i) {
                    const double d = std::abs(set_.targets[i].interval.cents() - cents);
                    if (d < best_d) best = i, best_d = d;
                }
                target_ = best;
                change.target_index = best;
                const pitch::Target& t = set_.targets[best];
                messages.push_back("keyboard: target " + t.interval.str() + (t.name.empty() ? "" : " " + t.name));
            }
        }
        if (change.root_hz || change.target_index) resound();
    }
    const auto now = std::chrono::steady_clock::now();
    if (!out_ || now < next_check_) return change;
    next_check_ = now + std::chrono::seconds(1);
    if (out_->supervise()) {
        messages.push_back(out_->problem().empty()
                               ? "MIDI output port '" + out_->port_name() + "': back; sounding again"
                               : out_->problem());
    }
    return change;
}

std::string MidiSession::describe() const {
    std::string s;
    if (out_) {
        s = "MIDI out: '" + out_->port_name() + "', ";
        if (config_.retune == audio::MidiRetune::mts)
            s += "keys retuned by MTS single-note tuning (a synth that ignores MTS plays tempered: use --midi-tuning "
                 "bend)";
        else
            s += "pitch bend per note on channels 2-16, bend range +-" +
                 pitch::format_trimmed(config_.bend_range_semitones, 2) + " semitones (RPN 0)";
    }
    if (in_)
        s += std::string(s.empty() ? "" : "; ") + "MIDI in: '" + in_->port_name() +
             "' (a key sets the root; held with it, the target)";
    return s;
}

}  // namespace beatless::ui
